//! How an output was made: program version, the run card (name, SHA-256, full text),
//! the constants' editions and the schemes used. Every writer records it.

use serde_json::{Map, Value};
use sha2::{Digest, Sha256};

/// The provenance of one output.
#[derive(Debug, Clone, PartialEq)]
pub struct Provenance {
    /// The card's file name (no directories, so runs from different folders agree).
    pub card_name: String,
    /// Hex SHA-256 of the card bytes.
    pub card_sha256: String,
    pub card_text: String,
    /// Schemes and choices, one line each ("radiator: …").
    pub notes: Vec<String>,
}

impl Provenance {
    pub fn new(card_name: &str, card_text: &str, notes: Vec<String>) -> Self {
        let hash = Sha256::digest(card_text.as_bytes());
        Provenance {
            card_name: card_name.to_string(),
            card_sha256: hash.iter().map(|b| format!("{b:02x}")).collect(),
            card_text: card_text.to_string(),
            notes,
        }
    }

    /// The program and version that wrote the output.
    pub fn program() -> String {
        format!("radnorm {}", env!("CARGO_PKG_VERSION"))
    }

    /// Header lines (without comment markers); the card text follows, indented.
    pub fn lines(&self) -> Vec<String> {
        let mut out = vec![
            Self::program(),
            format!("card: {} sha256 {}", self.card_name, self.card_sha256),
            format!("constants: {}", crate::constants::EDITIONS),
        ];
        out.extend(self.notes.iter().cloned());
        out.push("card text:".into());
        out.extend(self.card_text.lines().map(|l| format!("  {l}")));
        out
    }

    /// The same as a JSON object.
    pub fn to_json(&self) -> Value {
        let mut m = Map::new();
        m.insert("program".into(), Value::from(Self::program()));
        m.insert("card_file".into(), Value::from(self.card_name.clone()));
        m.insert("card_sha256".into(), Value::from(self.card_sha256.clone()));
        m.insert("constants".into(), Value::from(crate::constants::EDITIONS));
        m.insert(
            "schemes".into(),
            Value::Array(self.notes.iter().cloned().map(Value::from).collect()),
        );
        m.insert("card".into(), Value::from(self.card_text.clone()));
        Value::Object(m)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hash_is_sha256() {
        // SHA-256("abc") from FIPS 180-2, appendix B.1.
        let p = Provenance::new("c.toml", "abc", vec![]);
        assert_eq!(
            p.card_sha256,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert!(p.lines().iter().any(|l| l.contains("CODATA")));
    }
}
