//! HEPData YAML: a submission directory with `submission.yaml` (one document for the
//! submission, one per table) and one data file per table, in the open HEPData
//! submission format (independent and dependent variables, qualifiers, symmetric errors).
//!
//! Floats go through serde-saphyr, whose plain scalars load as numbers in YAML 1.1
//! readers too; a non-finite value is refused before anything is written.

use super::Provenance;
use serde::Serialize;
use thiserror::Error;

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum HepdataError {
    #[error("internal error: table '{table}', variable '{variable}' has a non-finite value")]
    NotFinite { table: String, variable: String },
    #[error("table '{table}': variable '{variable}' has {got} values, want {want}")]
    Length {
        table: String,
        variable: String,
        got: usize,
        want: usize,
    },
    #[error("cannot render YAML: {0}")]
    Yaml(String),
}

/// One variable (a column) of a table, with optional symmetric errors by label.
#[derive(Debug, Clone, PartialEq)]
pub struct Variable {
    pub name: String,
    /// HEPData-style units, e.g. `GEV`, `NB`; empty for dimensionless.
    pub units: String,
    pub values: Vec<f64>,
    /// (label, error per value) — e.g. ("stat", …), ("sys", …).
    pub errors: Vec<(String, Vec<f64>)>,
    /// (name, value) qualifiers, e.g. ("RE", "E+ E- --> HADRONS").
    pub qualifiers: Vec<(String, String)>,
}

impl Variable {
    pub fn new(name: &str, units: &str, values: Vec<f64>) -> Self {
        Variable {
            name: name.into(),
            units: units.into(),
            values,
            errors: Vec::new(),
            qualifiers: Vec::new(),
        }
    }

    pub fn error(mut self, label: &str, values: Vec<f64>) -> Self {
        self.errors.push((label.into(), values));
        self
    }

    pub fn qualifier(mut self, name: &str, value: &str) -> Self {
        self.qualifiers.push((name.into(), value.into()));
        self
    }
}

/// One table: its file name stem, description, reaction keywords and variables.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    pub name: String,
    /// The data file's name without `.yaml`.
    pub file_stem: String,
    pub description: String,
    pub reactions: Vec<String>,
    pub independent: Vec<Variable>,
    pub dependent: Vec<Variable>,
}

#[derive(Serialize)]
struct Header<'a> {
    name: &'a str,
    #[serde(skip_serializing_if = "str::is_empty")]
    units: &'a str,
}

#[derive(Serialize)]
struct Qualifier<'a> {
    name: &'a str,
    value: &'a str,
}

#[derive(Serialize)]
struct SymError<'a> {
    symerror: f64,
    label: &'a str,
}

#[derive(Serialize)]
struct Value<'a> {
    value: f64,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    errors: Vec<SymError<'a>>,
}

#[derive(Serialize)]
struct VariableDoc<'a> {
    header: Header<'a>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    qualifiers: Vec<Qualifier<'a>>,
    values: Vec<Value<'a>>,
}

#[derive(Serialize)]
struct DataDoc<'a> {
    independent_variables: Vec<VariableDoc<'a>>,
    dependent_variables: Vec<VariableDoc<'a>>,
}

#[derive(Serialize)]
struct Keyword<'a> {
    name: &'a str,
    values: &'a [String],
}

#[derive(Serialize)]
struct TableDoc<'a> {
    name: &'a str,
    description: &'a str,
    keywords: Vec<Keyword<'a>>,
    data_file: String,
}

#[derive(Serialize)]
struct SubmissionDoc {
    comment: String,
}

fn variable_doc<'a>(
    table: &Table,
    v: &'a Variable,
    n: usize,
) -> Result<VariableDoc<'a>, HepdataError> {
    let check = |name: &str, values: &[f64]| {
        if values.len() != n {
            return Err(HepdataError::Length {
                table: table.name.clone(),
                variable: name.to_string(),
                got: values.len(),
                want: n,
            });
        }
        if values.iter().any(|x| !x.is_finite()) {
            return Err(HepdataError::NotFinite {
                table: table.name.clone(),
                variable: name.to_string(),
            });
        }
        Ok(())
    };
    check(&v.name, &v.values)?;
    for (label, e) in &v.errors {
        check(&format!("{} error {label}", v.name), e)?;
    }
    Ok(VariableDoc {
        header: Header {
            name: &v.name,
            units: &v.units,
        },
        qualifiers: v
            .qualifiers
            .iter()
            .map(|(name, value)| Qualifier { name, value })
            .collect(),
        values: (0..n)
            .map(|i| Value {
                value: v.values[i],
                // A zero error is no error: the format refuses values whose errors
                // are all zero, so zeros are left out.
                errors: v
                    .errors
                    .iter()
                    .filter(|(_, e)| e[i] != 0.0)
                    .map(|(label, e)| SymError {
                        symerror: e[i],
                        label,
                    })
                    .collect(),
            })
            .collect(),
    })
}

/// The files of a submission: `(file name, text)`, `submission.yaml` first.
///
/// # Errors
/// A non-finite value or a variable of the wrong length.
pub fn submission_files(
    prov: &Provenance,
    tables: &[Table],
) -> Result<Vec<(String, String)>, HepdataError> {
    let yaml = |e: serde_saphyr::ser::Error| HepdataError::Yaml(e.to_string());
    let comment = prov.lines().join("\n");
    let mut submission = serde_saphyr::to_string(&SubmissionDoc { comment }).map_err(yaml)?;
    let mut files = Vec::new();
    for t in tables {
        let n = t.independent.first().map_or(0, |v| v.values.len());
        let doc = TableDoc {
            name: &t.name,
            description: &t.description,
            keywords: vec![Keyword {
                name: "reactions",
                values: &t.reactions,
            }],
            data_file: format!("{}.yaml", t.file_stem),
        };
        submission.push_str("---\n");
        submission.push_str(&serde_saphyr::to_string(&doc).map_err(yaml)?);
        let data = DataDoc {
            independent_variables: t
                .independent
                .iter()
                .map(|v| variable_doc(t, v, n))
                .collect::<Result<_, _>>()?,
            dependent_variables: t
                .dependent
                .iter()
                .map(|v| variable_doc(t, v, n))
                .collect::<Result<_, _>>()?,
        };
        files.push((
            format!("{}.yaml", t.file_stem),
            serde_saphyr::to_string(&data).map_err(yaml)?,
        ));
    }
    files.insert(0, ("submission.yaml".into(), submission));
    Ok(files)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_numbers_as_plain_scalars_and_refuses_nan() {
        let prov = Provenance::new("c.toml", "[x]\n", vec![]);
        let t = Table {
            name: "Table 1".into(),
            file_stem: "table1".into(),
            description: "test".into(),
            reactions: vec!["E+ E- --> MU+ MU-".into()],
            independent: vec![Variable::new("SQRT(S)", "GEV", vec![3.0, 1e-7])],
            dependent: vec![
                Variable::new("SIG", "NB", vec![6.02e23, 1.5]).error("stat", vec![0.1, 0.2]),
            ],
        };
        let files = submission_files(&prov, std::slice::from_ref(&t)).unwrap();
        assert_eq!(files[0].0, "submission.yaml");
        assert!(files[1].1.contains("symerror"), "{}", files[1].1);
        let mut bad = t;
        bad.dependent[0].values[1] = f64::NAN;
        assert!(matches!(
            submission_files(&prov, &[bad]),
            Err(HepdataError::NotFinite { .. })
        ));
    }
}
