//! Rendering results for people (text) and scripts (JSON, CSV), in one place.
//!
//! The output contract (design notes): one point → one JSON object, a grid → an array of
//! them, a result with rows and a summary → `{"rows": [...], "summary": {...}}`. Keys are
//! snake_case with the unit last; CSV headers are the same keys (nested objects flattened
//! as `parent.child`). Units are converted here and only here (`--units pb`), and a
//! non-finite number is refused here rather than written.

use anyhow::{Result, bail};
use clap::ValueEnum;
use serde_json::{Map, Value};
use std::borrow::Cow;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Output format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// An aligned table for people.
    Text,
    /// One JSON document.
    Json,
    /// CSV with a commented provenance header.
    Csv,
}

/// Cross-section (and luminosity) units of the output.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Units {
    Nb,
    Pb,
}

/// The output flags every command shares.
#[derive(Debug, Clone, clap::Args)]
pub struct OutputArgs {
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    pub format: Format,
    /// Write to this file (atomically) instead of standard output.
    #[arg(long, value_name = "PATH")]
    pub out: Option<PathBuf>,
    /// Cross-section units: nb (default) or pb; luminosity follows (nb⁻¹ or pb⁻¹).
    #[arg(long, value_enum, default_value_t = Units::Nb)]
    pub units: Units,
}

/// One output point: keys in order with their values (a nested object is a
/// `Value::Object`). A plain list rather than a map: a grid builds 10⁴ of them, and the
/// keys are almost always literals.
#[derive(Debug, Clone, Default)]
pub struct Row(Vec<(Cow<'static, str>, Value)>);

impl Row {
    pub fn new() -> Self {
        // Room for a typical point's keys without regrowing.
        Row(Vec::with_capacity(16))
    }

    /// A row from an already-built JSON object (the table writer's rows).
    pub fn from_map(map: Map<String, Value>) -> Self {
        Row(map.into_iter().map(|(k, v)| (Cow::Owned(k), v)).collect())
    }

    fn put(mut self, key: impl Into<Cow<'static, str>>, v: Value) -> Self {
        self.0.push((key.into(), v));
        self
    }

    pub fn num(self, key: impl Into<Cow<'static, str>>, v: f64) -> Self {
        self.put(key, num_value(v))
    }

    pub fn text(self, key: impl Into<Cow<'static, str>>, v: impl Into<String>) -> Self {
        self.put(key, Value::String(v.into()))
    }

    #[allow(dead_code, reason = "used by the commands that report counts")]
    pub fn int(self, key: impl Into<Cow<'static, str>>, v: i64) -> Self {
        self.put(key, Value::from(v))
    }

    #[allow(dead_code, reason = "used by the commands that report switches")]
    pub fn flag(self, key: impl Into<Cow<'static, str>>, v: bool) -> Self {
        self.put(key, Value::Bool(v))
    }

    /// A nested object (a breakdown, a budget) inside this point's object.
    #[allow(
        dead_code,
        reason = "used by the commands that report breakdowns and budgets"
    )]
    pub fn nested(self, key: impl Into<Cow<'static, str>>, v: Row) -> Self {
        self.put(key, Value::Object(v.into_map()))
    }

    fn into_map(self) -> Map<String, Value> {
        self.0
            .into_iter()
            .map(|(k, v)| (k.into_owned(), v))
            .collect()
    }

    fn to_map(&self) -> Map<String, Value> {
        self.clone().into_map()
    }
}

/// A number as JSON (the library's writer rule: negative zero as 0); a non-finite one
/// becomes `null` here and is refused in [`render`].
fn num_value(v: f64) -> Value {
    radnorm::io::tables::number(v)
}

/// What a command produced: its points, an optional summary, and how it was made.
#[derive(Debug, Clone, Default)]
pub struct Report {
    pub rows: Vec<Row>,
    pub summary: Option<Row>,
    /// Provenance lines: program version, schemes, constants' editions, inputs.
    pub provenance: Vec<String>,
}

impl Report {
    pub fn new(rows: Vec<Row>) -> Self {
        Report {
            rows,
            summary: None,
            provenance: vec![format!("radnorm {}", env!("CARGO_PKG_VERSION"))],
        }
    }

    pub fn note(mut self, line: impl Into<String>) -> Self {
        self.provenance.push(line.into());
        self
    }
}

/// Render `report` and write it to `--out` (atomically, never over an input) or stdout.
pub fn emit(report: Report, args: &OutputArgs, inputs: &[&Path], single: bool) -> Result<()> {
    let text = render(report, args.format, args.units, single)?;
    match &args.out {
        Some(path) => radnorm::io::write_atomic(path, text.as_bytes(), inputs)?,
        None => {
            use std::io::Write;
            let mut out = std::io::stdout().lock();
            // A closed pipe (`| head`) is not an error worth a message.
            if let Err(e) = out.write_all(text.as_bytes())
                && e.kind() != std::io::ErrorKind::BrokenPipe
            {
                return Err(e.into());
            }
        }
    }
    Ok(())
}

/// Render to a string. `single` picks the one-object JSON shape for a one-point result.
pub fn render(mut report: Report, format: Format, units: Units, single: bool) -> Result<String> {
    for row in report.rows.iter_mut().chain(report.summary.iter_mut()) {
        check_finite(row.entries(), "")?;
        if units == Units::Pb {
            row.0 = std::mem::take(&mut row.0)
                .into_iter()
                .map(|(k, v)| to_pb(k, v))
                .collect();
        }
    }
    match format {
        Format::Json => Ok(render_json(&report, single)),
        Format::Csv => Ok(render_csv(&report)),
        Format::Text => Ok(render_text(&report)),
    }
}

impl Row {
    fn entries(&self) -> impl Iterator<Item = (&str, &Value)> {
        self.0.iter().map(|(k, v)| (k.as_ref(), v))
    }
}

fn object_entries(map: &Map<String, Value>) -> impl Iterator<Item = (&str, &Value)> {
    map.iter().map(|(k, v)| (k.as_str(), v))
}

fn check_finite<'a>(
    entries: impl Iterator<Item = (&'a str, &'a Value)>,
    prefix: &str,
) -> Result<()> {
    for (k, v) in entries {
        match v {
            Value::Null => bail!(
                "internal error: the value of {prefix}{k} is not a finite number; nothing was written"
            ),
            Value::Object(inner) => check_finite(object_entries(inner), &format!("{prefix}{k}."))?,
            _ => {}
        }
    }
    Ok(())
}

/// Rename a `*_nb` key to `*_pb` (×1000) and `*_nb_inv` to `*_pb_inv` (÷1000), recursively.
fn to_pb<K: AsRef<str> + From<String>>(k: K, v: Value) -> (K, Value) {
    let scale = |v: Value, f: f64| match v.as_f64() {
        Some(x) => num_value(x * f),
        None => v,
    };
    if let Some(stem) = k.as_ref().strip_suffix("_nb_inv") {
        (format!("{stem}_pb_inv").into(), scale(v, 1e-3))
    } else if let Some(stem) = k.as_ref().strip_suffix("_nb") {
        (format!("{stem}_pb").into(), scale(v, 1e3))
    } else if let Value::Object(inner) = v {
        let inner = inner.into_iter().map(|(k, v)| to_pb(k, v)).collect();
        (k, Value::Object(inner))
    } else {
        (k, v)
    }
}

fn render_json(report: &Report, single: bool) -> String {
    let rows = || {
        Value::Array(
            report
                .rows
                .iter()
                .map(|r| Value::Object(r.to_map()))
                .collect(),
        )
    };
    let value = match (&report.summary, single, report.rows.as_slice()) {
        (Some(summary), _, _) => {
            let mut m = Map::new();
            m.insert("rows".into(), rows());
            m.insert("summary".into(), Value::Object(summary.to_map()));
            Value::Object(m)
        }
        (None, true, [one]) => Value::Object(one.to_map()),
        (None, _, _) => rows(),
    };
    let mut s = serde_json::to_string_pretty(&value).unwrap_or_default();
    s.push('\n');
    s
}

/// Visit the leaves of nested objects in order with their `parent.child` keys (built in
/// `prefix`, which is restored on return).
fn for_each_leaf<'a>(
    entries: impl Iterator<Item = (&'a str, &'a Value)>,
    prefix: &mut String,
    visit: &mut impl FnMut(&str, &'a Value),
) {
    for (k, v) in entries {
        let len = prefix.len();
        prefix.push_str(k);
        match v {
            Value::Object(inner) => {
                prefix.push('.');
                for_each_leaf(object_entries(inner), prefix, visit);
            }
            leaf => visit(prefix, leaf),
        }
        prefix.truncate(len);
    }
}

/// A row's leaves as (flattened key, value).
fn flatten(row: &Row) -> Vec<(String, &Value)> {
    let mut out = Vec::new();
    for_each_leaf(row.entries(), &mut String::new(), &mut |k, v| {
        out.push((k.to_string(), v))
    });
    out
}

/// Append a value as a CSV cell (numbers in JSON's shortest round-trip form).
fn write_cell(s: &mut String, v: &Value) {
    match v {
        Value::String(t) => s.push_str(&csv_field(t)),
        Value::Number(n) => {
            let _ = write!(s, "{n}");
        }
        other => {
            let _ = write!(s, "{other}");
        }
    }
}

/// A value as plain text (strings unquoted).
fn cell(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

fn render_csv(report: &Report) -> String {
    let mut s = String::with_capacity(64 * (report.rows.len() + 1) * 12);
    for line in &report.provenance {
        let _ = writeln!(s, "# {line}");
    }
    let mut prefix = String::new();
    if let Some(first) = report.rows.first() {
        let mut sep = "";
        for_each_leaf(first.entries(), &mut prefix, &mut |k, _| {
            s.push_str(sep);
            s.push_str(k);
            sep = ",";
        });
        s.push('\n');
    }
    for row in &report.rows {
        let mut sep = "";
        for_each_leaf(row.entries(), &mut prefix, &mut |_, v| {
            s.push_str(sep);
            write_cell(&mut s, v);
            sep = ",";
        });
        s.push('\n');
    }
    if let Some(summary) = &report.summary {
        s.push_str("# summary\n");
        for (k, v) in flatten(summary) {
            let _ = writeln!(s, "# {k},{}", cell(v));
        }
    }
    s
}

fn csv_field(s: &str) -> Cow<'_, str> {
    if s.contains([',', '"', '\n']) {
        Cow::Owned(format!("\"{}\"", s.replace('"', "\"\"")))
    } else {
        Cow::Borrowed(s)
    }
}

/// "sigma_dressed_nb" → "sigma_dressed [nb]".
fn header_with_unit(key: &str) -> String {
    const UNITS: [(&str, &str); 10] = [
        ("_nb_inv", "nb⁻¹"),
        ("_pb_inv", "pb⁻¹"),
        ("_gev2", "GeV²"),
        ("_gev", "GeV"),
        ("_mev", "MeV"),
        ("_nb", "nb"),
        ("_pb", "pb"),
        ("_deg", "deg"),
        ("_mrad", "mrad"),
        ("_percent", "%"),
    ];
    for (suffix, unit) in UNITS {
        if let Some(stem) = key.strip_suffix(suffix) {
            return format!("{stem} [{unit}]");
        }
    }
    key.to_string()
}

fn text_cell(v: &Value) -> String {
    match v {
        Value::Number(n) if n.is_f64() => {
            let x = n.as_f64().unwrap_or(0.0);
            if x == 0.0 {
                "0".into()
            } else if (1e-3..1e6).contains(&x.abs()) {
                let digits = (6 - x.abs().log10().floor() as i32).clamp(0, 9) as usize;
                format!("{x:.digits$}")
            } else {
                format!("{x:.6e}")
            }
        }
        other => cell(other),
    }
}

fn render_text(report: &Report) -> String {
    let mut s = String::new();
    let columns = flatten;
    if report.rows.len() == 1 {
        // One point: a key/value list reads better than a one-line table.
        let flat = columns(&report.rows[0]);
        let width = flat
            .iter()
            .map(|(k, _)| header_with_unit(k).chars().count())
            .max()
            .unwrap_or(0);
        for (k, v) in &flat {
            let h = header_with_unit(k);
            let pad = width - h.chars().count();
            let _ = writeln!(s, "{h}{}  {}", " ".repeat(pad), text_cell(v));
        }
    } else if !report.rows.is_empty() {
        let first = columns(&report.rows[0]);
        let headers: Vec<String> = first.iter().map(|(k, _)| header_with_unit(k)).collect();
        let body: Vec<Vec<String>> = report
            .rows
            .iter()
            .map(|r| columns(r).iter().map(|(_, v)| text_cell(v)).collect())
            .collect();
        let widths: Vec<usize> = (0..headers.len())
            .map(|i| {
                body.iter()
                    .filter_map(|r| r.get(i))
                    .map(|c| c.chars().count())
                    .chain([headers[i].chars().count()])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let line = |cells: &[String]| {
            cells
                .iter()
                .zip(&widths)
                .map(|(c, w)| format!("{}{c}", " ".repeat(w - c.chars().count())))
                .collect::<Vec<_>>()
                .join("  ")
        };
        let _ = writeln!(s, "{}", line(&headers));
        for r in &body {
            let _ = writeln!(s, "{}", line(r));
        }
    }
    if let Some(summary) = &report.summary {
        s.push_str("\nsummary\n");
        for (k, v) in columns(summary) {
            let _ = writeln!(s, "  {}  {}", header_with_unit(&k), text_cell(v));
        }
    }
    for line in report.provenance.iter().skip(1) {
        let _ = writeln!(s, "# {line}");
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_shapes_follow_the_contract() {
        let r = Report::new(vec![
            Row::new().num("sqrt_s_gev", 3.0).num("sigma_nb", 9.65),
        ]);
        let one = render(r.clone(), Format::Json, Units::Nb, true).unwrap();
        assert!(one.trim_start().starts_with('{'));
        let many = render(r.clone(), Format::Json, Units::Nb, false).unwrap();
        assert!(many.trim_start().starts_with('['));
        let pb = render(r, Format::Json, Units::Pb, true).unwrap();
        let v: Value = serde_json::from_str(&pb).unwrap();
        assert_eq!(v["sigma_pb"].as_f64().unwrap(), 9650.0);
    }

    #[test]
    fn negative_zero_is_rendered_as_zero() {
        let r = Report::new(vec![Row::new().num("shift_nb", -0.0)]);
        for format in [Format::Json, Format::Csv, Format::Text] {
            let s = render(r.clone(), format, Units::Pb, true).unwrap();
            assert!(!s.contains("-0"), "{format:?}: {s}");
        }
    }

    #[test]
    fn refuses_non_finite_numbers() {
        let r = Report::new(vec![Row::new().num("sigma_nb", f64::NAN)]);
        assert!(render(r, Format::Csv, Units::Nb, true).is_err());
    }

    #[test]
    fn csv_flattens_nested_keys() {
        let row = Row::new()
            .num("a_nb", 1.0)
            .nested("budget", Row::new().num("stat", 0.5));
        let r = Report::new(vec![row]);
        let s = render(r, Format::Csv, Units::Nb, false).unwrap();
        assert!(s.lines().any(|l| l == "a_nb,budget.stat"));
    }
}
