//! Table writers: CSV with a commented provenance header, and JSON.
//!
//! Rows are ordered JSON objects (keys snake_case with the unit last); nested objects
//! become `parent.child` CSV columns. A non-finite number is stored as `null` by
//! [`number`] and refused here, so no NaN ever reaches a file.

use super::Provenance;
use serde_json::{Map, Value};
use std::fmt::Write as _;
use thiserror::Error;

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum TableError {
    #[error("internal error: {key} is not a finite number; nothing was written")]
    NotFinite { key: String },
    #[error("row {row} has columns {got:?}, the first row {want:?}")]
    Ragged {
        row: usize,
        got: Vec<String>,
        want: Vec<String>,
    },
}

/// A number as JSON, or `null` (refused by the writers) when not finite. Negative zero
/// (a zero shift times a negative factor) is written as 0: `-0.0` in a table reads as a
/// sign where there is none. Every number of radnorm's outputs (CLI included) goes
/// through here.
pub fn number(v: f64) -> Value {
    let v = if v == 0.0 { 0.0 } else { v };
    serde_json::Number::from_f64(v).map_or(Value::Null, Value::Number)
}

/// `(key, value)` pairs of a row, nested objects flattened as `a.b`.
pub fn flatten(map: &Map<String, Value>) -> Vec<(String, Value)> {
    fn walk(map: &Map<String, Value>, prefix: &str, out: &mut Vec<(String, Value)>) {
        for (k, v) in map {
            let key = format!("{prefix}{k}");
            match v {
                Value::Object(inner) => walk(inner, &format!("{key}."), out),
                other => out.push((key, other.clone())),
            }
        }
    }
    let mut out = Vec::new();
    walk(map, "", &mut out);
    out
}

fn check_finite(key: &str, v: &Value) -> Result<(), TableError> {
    match v {
        Value::Null => Err(TableError::NotFinite {
            key: key.to_string(),
        }),
        Value::Object(m) => m
            .iter()
            .try_for_each(|(k, v)| check_finite(&format!("{key}.{k}"), v)),
        Value::Array(a) => a.iter().try_for_each(|v| check_finite(key, v)),
        _ => Ok(()),
    }
}

/// The CSV header line and data lines of `rows` (no provenance).
///
/// # Errors
/// A non-finite number or rows with different columns.
pub fn csv_body(rows: &[Map<String, Value>]) -> Result<String, TableError> {
    let mut s = String::new();
    let mut header: Option<Vec<String>> = None;
    for (i, row) in rows.iter().enumerate() {
        let flat = flatten(row);
        let keys: Vec<String> = flat.iter().map(|(k, _)| k.clone()).collect();
        match &header {
            None => {
                let _ = writeln!(s, "{}", keys.join(","));
                header = Some(keys);
            }
            Some(h) if *h != keys => {
                return Err(TableError::Ragged {
                    row: i,
                    got: keys,
                    want: h.clone(),
                });
            }
            Some(_) => {}
        }
        let mut cells = Vec::with_capacity(flat.len());
        for (k, v) in &flat {
            check_finite(k, v)?;
            cells.push(match v {
                Value::String(t) if t.contains([',', '"', '\n']) => {
                    format!("\"{}\"", t.replace('"', "\"\""))
                }
                Value::String(t) => t.clone(),
                other => other.to_string(),
            });
        }
        let _ = writeln!(s, "{}", cells.join(","));
    }
    Ok(s)
}

/// The provenance as `# ` comment lines.
pub fn csv_header(prov: &Provenance) -> String {
    prov.lines().iter().map(|l| format!("# {l}\n")).collect()
}

/// A whole CSV file: provenance header, then the rows.
///
/// # Errors
/// As [`csv_body`].
pub fn csv_text(prov: &Provenance, rows: &[Map<String, Value>]) -> Result<String, TableError> {
    Ok(csv_header(prov) + &csv_body(rows)?)
}

/// A JSON document `{"provenance": …, "rows": […], "summary": {…}}` (summary optional).
///
/// # Errors
/// A non-finite number anywhere.
pub fn json_text(
    prov: &Provenance,
    rows: &[Map<String, Value>],
    summary: Option<&Map<String, Value>>,
) -> Result<String, TableError> {
    let mut doc = Map::new();
    doc.insert("provenance".into(), prov.to_json());
    doc.insert(
        "rows".into(),
        Value::Array(rows.iter().cloned().map(Value::Object).collect()),
    );
    if let Some(s) = summary {
        doc.insert("summary".into(), Value::Object(s.clone()));
    }
    let doc = Value::Object(doc);
    check_finite("document", &doc)?;
    let mut s = serde_json::to_string_pretty(&doc).unwrap_or_default();
    s.push('\n');
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_flattens_and_refuses_nan() {
        let mut inner = Map::new();
        inner.insert("stat_nb".into(), number(0.5));
        let mut row = Map::new();
        row.insert("sqrt_s_gev".into(), number(3.0));
        row.insert("budget".into(), Value::Object(inner));
        let body = csv_body(std::slice::from_ref(&row)).unwrap();
        assert_eq!(body, "sqrt_s_gev,budget.stat_nb\n3.0,0.5\n");
        row.insert("bad_nb".into(), number(f64::NAN));
        let err = csv_body(&[row.clone()]).unwrap_err();
        assert_eq!(
            err,
            TableError::NotFinite {
                key: "bad_nb".into()
            }
        );
        let prov = Provenance::new("c.toml", "[a]\n", vec![]);
        assert!(json_text(&prov, &[row], None).is_err());
    }

    #[test]
    fn negative_zero_is_written_as_zero() {
        let mut row = Map::new();
        row.insert("shift_nb".into(), number(-0.0));
        row.insert("small_nb".into(), number(-1e-300));
        assert_eq!(
            csv_body(std::slice::from_ref(&row)).unwrap(),
            "shift_nb,small_nb\n0.0,-1e-300\n"
        );
        assert_eq!(serde_json::to_string(&number(-0.0)).unwrap(), "0.0");
    }
}
