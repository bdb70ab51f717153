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

/// One output point: keys in order with their values. A plain list of compact cells
/// rather than a JSON map: a grid builds 10⁴ of them, the keys are almost always literals,
/// and JSON values are built only when JSON is written.
#[derive(Debug, Clone, Default)]
pub struct Row(Vec<(Cow<'static, str>, Cell)>);

/// One value of a [`Row`], 24 bytes (a grid's rows are ~10⁵ of them: every byte is a
/// page of fresh memory to fault in per 4096/24 cells).
#[derive(Debug, Clone)]
enum Cell {
    Num(f64),
    Static(&'static str),
    Text(Box<str>),
    Int(i64),
    Flag(bool),
    Nested(Box<Row>),
    /// A value from an already-built JSON object (the table writer's rows).
    Json(Box<Value>),
}

impl Row {
    pub fn new() -> Self {
        Row(Vec::new())
    }

    fn with_capacity(cells: usize) -> Self {
        Row(Vec::with_capacity(cells))
    }

    /// The row without spare capacity: a grid keeps 10⁴ rows, and the slack a growing row
    /// leaves is fresh memory to fault in (the freed buffer serves the next row).
    pub fn shrunk(mut self) -> Self {
        self.0.shrink_to_fit();
        self
    }

    /// A row from an already-built JSON object (the table writer's rows).
    pub fn from_map(map: Map<String, Value>) -> Self {
        Row(map
            .into_iter()
            .map(|(k, v)| (Cow::Owned(k), Cell::Json(Box::new(v))))
            .collect())
    }

    fn put(mut self, key: impl Into<Cow<'static, str>>, v: Cell) -> Self {
        self.0.push((key.into(), v));
        self
    }

    pub fn num(self, key: impl Into<Cow<'static, str>>, v: f64) -> Self {
        // The library's writer rule: negative zero is written as 0.
        self.put(key, Cell::Num(if v == 0.0 { 0.0 } else { v }))
    }

    pub fn text(self, key: impl Into<Cow<'static, str>>, v: impl Into<Cow<'static, str>>) -> Self {
        let cell = match v.into() {
            Cow::Borrowed(t) => Cell::Static(t),
            Cow::Owned(t) => Cell::Text(t.into_boxed_str()),
        };
        self.put(key, cell)
    }

    #[allow(dead_code, reason = "used by the commands that report counts")]
    pub fn int(self, key: impl Into<Cow<'static, str>>, v: i64) -> Self {
        self.put(key, Cell::Int(v))
    }

    #[allow(dead_code, reason = "used by the commands that report switches")]
    pub fn flag(self, key: impl Into<Cow<'static, str>>, v: bool) -> Self {
        self.put(key, Cell::Flag(v))
    }

    /// A nested object (a breakdown, a budget) inside this point's object.
    #[allow(
        dead_code,
        reason = "used by the commands that report breakdowns and budgets"
    )]
    pub fn nested(self, key: impl Into<Cow<'static, str>>, v: Row) -> Self {
        self.put(key, Cell::Nested(Box::new(v)))
    }

    /// The row as a JSON object.
    fn to_map(&self) -> Map<String, Value> {
        self.0
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_value()))
            .collect()
    }
}

impl Cell {
    /// As JSON (a non-finite number as `null`, refused in [`render`]).
    fn to_value(&self) -> Value {
        match self {
            Cell::Num(x) => radnorm::io::tables::number(*x),
            Cell::Static(t) => Value::String(t.to_string()),
            Cell::Text(t) => Value::String(t.to_string()),
            Cell::Int(i) => Value::from(*i),
            Cell::Flag(b) => Value::Bool(*b),
            Cell::Nested(row) => Value::Object(row.to_map()),
            Cell::Json(v) => (**v).clone(),
        }
    }
}

/// Rows 0..n, each from `row(i, an empty row)`, built in order. The rows of one command share
/// their keys, so each starts with the capacity the one before needed: a row never grows
/// (four reallocations and copies) nor keeps slack (fresh memory to fault in).
pub fn rows_in_order(n: usize, mut row: impl FnMut(usize, Row) -> Result<Row>) -> Result<Vec<Row>> {
    let mut rows = Vec::with_capacity(n);
    let mut cells = 0;
    for i in 0..n {
        let done = row(i, Row::with_capacity(cells))?.shrunk();
        cells = done.0.len();
        rows.push(done);
    }
    Ok(rows)
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
    write_out(&text, args, inputs)
}

/// [`emit`] for a report whose rows 0..n are made by `row(i, an empty row)`, in order. As
/// CSV each row is written as soon as it is made, all of them in one reused row: a grid's
/// rows never exist together (10⁴ of them are 5 MB of fresh memory to fault in and free,
/// a third of a grid command's time on machines where a page fault costs µs). Other
/// formats collect the rows first ([`rows_in_order`]). As with [`emit`], nothing is written
/// unless every row is.
pub fn emit_rows(
    mut report: Report,
    n: usize,
    mut row: impl FnMut(usize, Row) -> Result<Row>,
    args: &OutputArgs,
    inputs: &[&Path],
    single: bool,
) -> Result<()> {
    if args.format != Format::Csv {
        report.rows = rows_in_order(n, row)?;
        return emit(report, args, inputs, single);
    }
    let mut csv = Csv::new(&report, n);
    let (mut scratch, mut prefix) = (Row::new(), String::new());
    for i in 0..n {
        scratch.0.clear();
        let mut made = row(i, scratch)?;
        prepare(&mut made, args.units, &mut prefix)?;
        csv.row(&made);
        scratch = made;
    }
    if let Some(summary) = &mut report.summary {
        prepare(summary, args.units, &mut prefix)?;
    }
    let text = csv.finish(&report);
    write_out(&text, args, inputs)
}

/// Write `text` to `--out` (atomically, never over an input) or stdout.
fn write_out(text: &str, args: &OutputArgs, inputs: &[&Path]) -> Result<()> {
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
    let mut prefix = String::new();
    for row in report.rows.iter_mut().chain(report.summary.iter_mut()) {
        prepare(row, units, &mut prefix)?;
    }
    match format {
        Format::Json => Ok(render_json(&report, single)),
        Format::Csv => Ok(render_csv(&report)),
        Format::Text => Ok(render_text(&report)),
    }
}

/// The scale and new key of a `*_nb` key (→ `*_pb`, ×1000) or `*_nb_inv` key (→ `*_pb_inv`,
/// ÷1000); None for any other key.
fn pb_key(k: &str) -> Option<(String, f64)> {
    if let Some(stem) = k.strip_suffix("_nb_inv") {
        Some((format!("{stem}_pb_inv"), 1e-3))
    } else {
        k.strip_suffix("_nb")
            .map(|stem| (format!("{stem}_pb"), 1e3))
    }
}

impl Row {
    /// Cross-sections in pb and luminosities in pb⁻¹, keys renamed, recursively.
    fn convert_to_pb(&mut self) {
        for (k, v) in &mut self.0 {
            match (pb_key(k), v) {
                (Some((key, f)), Cell::Num(x)) => {
                    *k = Cow::Owned(key);
                    *x *= f;
                }
                (Some((key, f)), Cell::Json(j)) => {
                    *k = Cow::Owned(key);
                    if let Some(x) = j.as_f64() {
                        **j = radnorm::io::tables::number(x * f);
                    }
                }
                (None, Cell::Nested(row)) => row.convert_to_pb(),
                (None, Cell::Json(j)) => {
                    if let Value::Object(map) = &mut **j {
                        *map = std::mem::take(map)
                            .into_iter()
                            .map(|(k, v)| json_to_pb(k, v))
                            .collect()
                    }
                }
                _ => {}
            }
        }
    }
}

/// [`Row::convert_to_pb`] for a JSON value under key `k`.
fn json_to_pb(k: String, v: Value) -> (String, Value) {
    match (pb_key(&k), v) {
        (Some((key, f)), v) => {
            let v = v.as_f64().map_or(v, |x| radnorm::io::tables::number(x * f));
            (key, v)
        }
        (None, Value::Object(inner)) => (
            k,
            Value::Object(inner.into_iter().map(|(k, v)| json_to_pb(k, v)).collect()),
        ),
        (None, v) => (k, v),
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

/// A leaf of a row: one of its cells, or a value inside a JSON object it holds.
#[derive(Clone, Copy)]
enum Leaf<'a> {
    Cell(&'a Cell),
    Json(&'a Value),
}

impl Leaf<'_> {
    fn is_finite(self) -> bool {
        match self {
            Leaf::Cell(Cell::Num(x)) => x.is_finite(),
            Leaf::Json(v) => !v.is_null(),
            _ => true,
        }
    }

    fn number(self) -> Option<f64> {
        match self {
            Leaf::Cell(Cell::Num(x)) => Some(*x),
            Leaf::Json(v) if v.is_f64() => v.as_f64(),
            _ => None,
        }
    }

    /// Append as a CSV cell (numbers in JSON's shortest round-trip form).
    fn write_csv(self, s: &mut String) {
        match self {
            Leaf::Cell(Cell::Num(x)) => s.push_str(zmij::Buffer::new().format_finite(*x)),
            Leaf::Cell(Cell::Static(t)) => s.push_str(&csv_field(t)),
            Leaf::Cell(Cell::Text(t)) => s.push_str(&csv_field(t)),
            Leaf::Json(Value::String(t)) => s.push_str(&csv_field(t)),
            other => s.push_str(&other.plain()),
        }
    }

    /// As plain text (strings unquoted).
    fn plain(self) -> String {
        match self {
            Leaf::Cell(Cell::Num(x)) => zmij::Buffer::new().format_finite(*x).to_string(),
            Leaf::Cell(Cell::Static(t)) => t.to_string(),
            Leaf::Cell(Cell::Text(t)) => t.to_string(),
            Leaf::Cell(Cell::Int(i)) => i.to_string(),
            Leaf::Cell(Cell::Flag(b)) => b.to_string(),
            Leaf::Cell(other) => other.to_value().to_string(),
            Leaf::Json(Value::String(t)) => t.clone(),
            Leaf::Json(v) => v.to_string(),
        }
    }
}

/// Visit the leaves of a row in order with their `parent.child` keys (built in `prefix`,
/// which is restored on return).
fn for_each_leaf<'a>(row: &'a Row, prefix: &mut String, visit: &mut impl FnMut(&str, Leaf<'a>)) {
    for (k, v) in &row.0 {
        under_key(prefix, k, |prefix| match v {
            Cell::Nested(inner) => for_each_leaf(inner, prefix, visit),
            Cell::Json(json) => for_each_json_leaf(json, prefix, visit),
            leaf => visit(prefix, Leaf::Cell(leaf)),
        });
    }
}

/// [`for_each_leaf`] for a JSON value (an object's members are `parent.child`).
fn for_each_json_leaf<'a>(
    value: &'a Value,
    prefix: &mut String,
    visit: &mut impl FnMut(&str, Leaf<'a>),
) {
    match value {
        Value::Object(map) => {
            for (k, v) in map {
                under_key(prefix, k, |prefix| for_each_json_leaf(v, prefix, visit));
            }
        }
        leaf => visit(prefix, Leaf::Json(leaf)),
    }
}

/// Run `f` with `k` appended to the flattened key `prefix` (after a dot, unless first).
fn under_key(prefix: &mut String, k: &str, f: impl FnOnce(&mut String)) {
    let len = prefix.len();
    if len > 0 {
        prefix.push('.');
    }
    prefix.push_str(k);
    f(prefix);
    prefix.truncate(len);
}

/// A row's leaves as (flattened key, value).
fn flatten(row: &Row) -> Vec<(String, Leaf<'_>)> {
    let mut out = Vec::new();
    for_each_leaf(row, &mut String::new(), &mut |k, v| {
        out.push((k.to_string(), v))
    });
    out
}

/// Refuse a row with a non-finite value (before anything is written); convert to pb.
fn prepare(row: &mut Row, units: Units, prefix: &mut String) -> Result<()> {
    let mut bad = None;
    for_each_leaf(row, prefix, &mut |k, leaf| {
        if bad.is_none() && !leaf.is_finite() {
            bad = Some(k.to_string());
        }
    });
    if let Some(k) = bad {
        bail!("internal error: the value of {k} is not a finite number; nothing was written");
    }
    if units == Units::Pb {
        row.convert_to_pb();
    }
    Ok(())
}

fn render_csv(report: &Report) -> String {
    let mut csv = Csv::new(report, report.rows.len());
    for row in &report.rows {
        csv.row(row);
    }
    csv.finish(report)
}

/// CSV text being written: the provenance, then the header from the first row and one line
/// a row, then the summary (shared by [`render`] and the rows written as made).
struct Csv {
    text: String,
    /// The flattened-key buffer of `for_each_leaf`.
    prefix: String,
    rows: usize,
    written: usize,
}

impl Csv {
    fn new(report: &Report, rows: usize) -> Self {
        let mut text = String::new();
        for line in &report.provenance {
            let _ = writeln!(text, "# {line}");
        }
        Csv {
            text,
            prefix: String::new(),
            rows,
            written: 0,
        }
    }

    /// One row's line, after the header if it is the first.
    fn row(&mut self, row: &Row) {
        if self.written == 0 {
            let head = self.text.len();
            self.record(row, true);
            self.record(row, false);
            // Every line about as long as the first: one allocation for them all.
            self.text.reserve((self.text.len() - head) * self.rows);
        } else {
            self.record(row, false);
        }
        self.written += 1;
    }

    /// One CSV line of `row`: its flattened keys, or its values.
    fn record(&mut self, row: &Row, keys: bool) {
        let (text, mut sep) = (&mut self.text, "");
        for_each_leaf(row, &mut self.prefix, &mut |k, v| {
            text.push_str(sep);
            if keys {
                text.push_str(k);
            } else {
                v.write_csv(text);
            }
            sep = ",";
        });
        text.push('\n');
    }

    fn finish(mut self, report: &Report) -> String {
        if let Some(summary) = &report.summary {
            self.text.push_str("# summary\n");
            for (k, v) in flatten(summary) {
                let _ = writeln!(self.text, "# {k},{}", v.plain());
            }
        }
        self.text
    }
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

fn text_cell(v: Leaf) -> String {
    let Some(x) = v.number() else {
        return v.plain();
    };
    if x == 0.0 {
        "0".into()
    } else if (1e-3..1e6).contains(&x.abs()) {
        let digits = (6 - x.abs().log10().floor() as i32).clamp(0, 9) as usize;
        format!("{x:.digits$}")
    } else {
        format!("{x:.6e}")
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
            let _ = writeln!(s, "{h}{}  {}", " ".repeat(pad), text_cell(*v));
        }
    } else if !report.rows.is_empty() {
        let first = columns(&report.rows[0]);
        let headers: Vec<String> = first.iter().map(|(k, _)| header_with_unit(k)).collect();
        let body: Vec<Vec<String>> = report
            .rows
            .iter()
            .map(|r| columns(r).iter().map(|(_, v)| text_cell(*v)).collect())
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

    /// Rows made and written one by one give the text of the collected rows (pb units, a
    /// nested object, a summary); a non-finite value anywhere writes nothing.
    #[test]
    fn rows_written_as_made_match_the_collected_ones() {
        let make = |i: usize, row: Row| -> Result<Row> {
            let x = i as f64;
            Ok(row
                .text("process", "mumu")
                .num("sigma_nb", 1.5 * x + 0.25)
                .nested("radiators", Row::new().num("kf2", 1.0 - 0.01 * x)))
        };
        let report = || Report::new(Vec::new()).note("a note");
        let summary = || Row::new().num("total_nb", 7.0);
        let dir = tempfile::tempdir().unwrap();
        let args = OutputArgs {
            format: Format::Csv,
            out: Some(dir.path().join("rows.csv")),
            units: Units::Pb,
        };
        let mut streamed = report();
        streamed.summary = Some(summary());
        emit_rows(streamed, 5, make, &args, &[], false).unwrap();
        let mut collected = report();
        collected.rows = rows_in_order(5, make).unwrap();
        collected.summary = Some(summary());
        let want = render(collected, Format::Csv, Units::Pb, false).unwrap();
        let got = std::fs::read_to_string(dir.path().join("rows.csv")).unwrap();
        assert_eq!(got, want);
        assert!(
            got.contains("sigma_pb") && got.contains("radiators.kf2"),
            "{got}"
        );

        let bad = OutputArgs {
            out: Some(dir.path().join("bad.csv")),
            ..args
        };
        let nan_at_3 = |i: usize, row: Row| -> Result<Row> {
            Ok(row.num("sigma_nb", if i == 3 { f64::NAN } else { 1.0 }))
        };
        assert!(emit_rows(report(), 5, nan_at_3, &bad, &[], false).is_err());
        assert!(!dir.path().join("bad.csv").exists());
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
