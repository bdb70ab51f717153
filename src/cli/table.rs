//! `radnorm table`: correction tables on a grid from a run card, with per-variation
//! shifts; shards for job arrays and their merge.
//!
//! A shard is written like the whole table (same provenance, same columns) plus a marker:
//! a first comment line `# shard k/n: rows a..b of N` in CSV, `summary.shard` in JSON.
//! `--merge` checks that the shards come from one card (SHA-256) and one program
//! version, that every shard 1..n is there once, and writes the table exactly as a single
//! run would have written it.

use anyhow::{Context, Result, anyhow, bail};
use clap::{Args, ValueEnum};
use serde_json::{Map, Value};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

use super::output::{self, Report, Row, Units};
use radnorm::io::tables::{csv_text, flatten, json_text, number};
use radnorm::io::{Provenance, StagedDir, hepdata, write_atomic};
use radnorm::table::{Shift, TablePlan, TableRow, parse_table_card};

/// Output format of a table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum TableFormat {
    /// An aligned table for people.
    Text,
    /// One JSON document {"provenance", "rows", "summary"}.
    Json,
    /// CSV with a commented provenance header.
    Csv,
    /// A HEPData submission folder (needs --out DIR): one table per process and cut set.
    Hepdata,
}

#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  \
    radnorm table --card tables/demo/corrections.toml --format csv --out corrections.csv\n  \
    radnorm table --card tables/demo/corrections.toml --format csv --shard 1/2 --out part1.csv\n  \
    radnorm table --merge part1.csv part2.csv --out corrections.csv")]
pub struct TableArgs {
    /// The correction-table run card (TOML).
    #[arg(long, value_name = "FILE", required_unless_present = "merge")]
    card: Option<PathBuf>,
    /// Compute only shard k of n (k from 1 to n), for the job arrays of a batch system.
    #[arg(long, value_name = "K/N", conflicts_with = "merge")]
    shard: Option<String>,
    /// Join shard files (CSV or JSON) into the table a single run writes.
    #[arg(long, value_name = "FILE", num_args = 1.., conflicts_with = "card")]
    merge: Vec<PathBuf>,
    /// Output format (default: text; with --merge, the shards' format).
    #[arg(long, value_enum)]
    format: Option<TableFormat>,
    /// Write to this file (a folder for hepdata) instead of standard output.
    #[arg(long, value_name = "PATH")]
    out: Option<PathBuf>,
    /// Cross-section units: nb (default) or pb (with --merge, the shards' units).
    #[arg(long, value_enum)]
    units: Option<Units>,
}

/// Which rows of how many a file holds.
#[derive(Debug, Clone, Copy, PartialEq)]
struct ShardMark {
    k: usize,
    n: usize,
    first: usize,
    end: usize,
    total: usize,
}

fn parse_k_of_n(text: &str) -> Result<(usize, usize)> {
    let bad = || anyhow!("--shard {text}: not allowed; allowed: k/n with 1 ≤ k ≤ n, e.g. 3/10");
    let (k, n) = text.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (
        k.trim().parse().map_err(|_| bad())?,
        n.trim().parse().map_err(|_| bad())?,
    );
    if k == 0 || k > n {
        return Err(bad());
    }
    Ok((k, n))
}

fn unit_key(units: Units) -> &'static str {
    match units {
        Units::Nb => "nb",
        Units::Pb => "pb",
    }
}

/// The output row of a table row: cross-sections already in `units`.
fn row_map(row: &TableRow, plan: &TablePlan, units: Units) -> Map<String, Value> {
    let u = unit_key(units);
    let mut m = Map::new();
    m.insert("process".into(), Value::from(row.process.clone()));
    m.insert("cut".into(), Value::from(row.cut.clone()));
    let mut put = |k: String, v: f64| {
        m.insert(k, number(v));
    };
    put("sqrt_s_gev".into(), row.sqrt_s_gev);
    put("x_max".into(), row.x_max);
    put(format!("sigma_born_{u}"), row.sigma_born_nb);
    put(format!("sigma_dressed_{u}"), row.sigma_dressed_nb);
    put(format!("sigma_obs_{u}"), row.sigma_obs_nb);
    put("one_plus_delta".into(), row.one_plus_delta);
    put("one_plus_delta_syst".into(), row.one_plus_delta_syst);
    put("vp_factor".into(), row.vp_factor);
    put("vp_factor_syst".into(), row.vp_factor_syst);
    if !plan.variations.is_empty() {
        let mut shifts = Map::new();
        for (v, s) in plan.variations.iter().zip(&row.shifts) {
            let mut o = Map::new();
            o.insert("one_plus_delta".into(), number(s.one_plus_delta));
            o.insert("vp_factor".into(), number(s.vp_factor));
            shifts.insert(v.name.clone(), Value::Object(o));
        }
        m.insert("shifts".into(), Value::Object(shifts));
    }
    m
}

/// A row read back from a file: the flat `key → value` pairs of [`row_map`].
fn row_from_flat(
    flat: &HashMap<String, Value>,
    plan: &TablePlan,
    u: &str,
    where_: &str,
) -> Result<TableRow> {
    let text = |k: &str| -> Result<String> {
        flat.get(k)
            .and_then(Value::as_str)
            .map(str::to_string)
            .ok_or_else(|| anyhow!("{where_}: column {k} is missing or not text"))
    };
    let num = |k: &str| -> Result<f64> {
        flat.get(k)
            .and_then(Value::as_f64)
            .ok_or_else(|| anyhow!("{where_}: column {k} is missing or not a number"))
    };
    let mut shifts = Vec::with_capacity(plan.variations.len());
    for v in &plan.variations {
        shifts.push(Shift {
            one_plus_delta: num(&format!("shifts.{}.one_plus_delta", v.name))?,
            vp_factor: num(&format!("shifts.{}.vp_factor", v.name))?,
        });
    }
    Ok(TableRow {
        process: text("process")?,
        cut: text("cut")?,
        sqrt_s_gev: num("sqrt_s_gev")?,
        x_max: num("x_max")?,
        sigma_born_nb: num(&format!("sigma_born_{u}"))?,
        sigma_dressed_nb: num(&format!("sigma_dressed_{u}"))?,
        sigma_obs_nb: num(&format!("sigma_obs_{u}"))?,
        one_plus_delta: num("one_plus_delta")?,
        one_plus_delta_syst: num("one_plus_delta_syst")?,
        vp_factor: num("vp_factor")?,
        vp_factor_syst: num("vp_factor_syst")?,
        shifts,
    })
}

fn summary(plan: &TablePlan, rows: usize, shard: Option<ShardMark>) -> Map<String, Value> {
    let mut s = Map::new();
    s.insert("rows".into(), Value::from(rows));
    s.insert("table_rows".into(), Value::from(plan.len()));
    s.insert("radiator".into(), Value::from(plan.scheme.key()));
    s.insert("vp".into(), Value::from(plan.vp.choice().key()));
    s.insert(
        "variations".into(),
        Value::Array(
            plan.variations
                .iter()
                .map(|v| Value::from(v.name.clone()))
                .collect(),
        ),
    );
    if let Some(m) = shard {
        s.insert("shard".into(), Value::from(format!("{}/{}", m.k, m.n)));
        s.insert("first_row".into(), Value::from(m.first));
    }
    s
}

fn shard_line(m: ShardMark) -> String {
    format!(
        "# shard {}/{}: rows {}..{} of {}\n",
        m.k, m.n, m.first, m.end, m.total
    )
}

/// One data-record table per process and cut set.
fn hepdata_tables(plan: &TablePlan, rows: &[TableRow], u: &str) -> Vec<hepdata::Table> {
    use hepdata::{Table, Variable};
    let mut tables = Vec::new();
    for p in &plan.processes {
        for c in &plan.cuts {
            let sel: Vec<&TableRow> = rows
                .iter()
                .filter(|r| r.process == p.key && r.cut == c.name)
                .collect();
            if sel.is_empty() {
                continue;
            }
            let col = |f: fn(&TableRow) -> f64| sel.iter().map(|r| f(r)).collect::<Vec<f64>>();
            let with_shifts = |mut var: Variable, f: fn(&Shift) -> f64| {
                for (i, v) in plan.variations.iter().enumerate() {
                    let e = sel.iter().map(|r| f(&r.shifts[i]).abs()).collect();
                    var = var.error(&format!("sys,{}", v.name), e);
                }
                var.qualifier("RE", p.reaction)
                    .qualifier("CUTS", &c.describe)
            };
            let sigma = |name: &str, f: fn(&TableRow) -> f64| {
                Variable::new(name, &u.to_uppercase(), col(f))
                    .qualifier("RE", p.reaction)
                    .qualifier("CUTS", &c.describe)
            };
            tables.push(Table {
                name: format!("Corrections {} {}", p.key, c.name),
                file_stem: format!("corrections_{}_{}", p.key, c.name),
                description: format!(
                    "ISR and vacuum-polarisation correction factors for {} with cuts: {}. \
                     1+DELTA = SIG(OBS)/SIG(DRESSED), VP FACTOR = SIG(DRESSED)/SIG(BARE); \
                     each sys error is the size of one variation's shift",
                    p.reaction, c.describe
                ),
                reactions: vec![p.reaction.to_string()],
                independent: vec![Variable::new("SQRT(S)", "GEV", col(|r| r.sqrt_s_gev))],
                dependent: vec![
                    with_shifts(
                        Variable::new("1+DELTA", "", col(|r| r.one_plus_delta)),
                        |s| s.one_plus_delta,
                    ),
                    with_shifts(Variable::new("VP FACTOR", "", col(|r| r.vp_factor)), |s| {
                        s.vp_factor
                    }),
                    sigma("SIG(BARE)", |r| r.sigma_born_nb),
                    sigma("SIG(DRESSED)", |r| r.sigma_dressed_nb),
                    sigma("SIG(OBS)", |r| r.sigma_obs_nb),
                ],
            });
        }
    }
    tables
}

/// Render and write `rows` (cross-sections already in `units`) as a single run would.
#[allow(
    clippy::too_many_arguments,
    reason = "one writer for the single run, the shards and the merge"
)]
fn write_table(
    plan: &TablePlan,
    prov: &Provenance,
    rows: &[TableRow],
    units: Units,
    format: TableFormat,
    out: Option<&Path>,
    inputs: &[&Path],
    shard: Option<ShardMark>,
) -> Result<()> {
    let u = unit_key(units);
    let maps: Vec<Map<String, Value>> = rows.iter().map(|r| row_map(r, plan, units)).collect();
    let text = match format {
        TableFormat::Csv => {
            let body = csv_text(prov, &maps)?;
            match shard {
                Some(m) => shard_line(m) + &body,
                None => body,
            }
        }
        TableFormat::Json => json_text(prov, &maps, Some(&summary(plan, rows.len(), shard)))?,
        TableFormat::Text => {
            let mut report = Report::new(maps.into_iter().map(Row::from_map).collect());
            for line in &prov.notes {
                report = report.note(line.clone());
            }
            // Units were applied to the rows already.
            output::render(report, output::Format::Text, Units::Nb, false)?
        }
        TableFormat::Hepdata => {
            let dir = out.ok_or_else(|| anyhow!("--format hepdata: needs --out DIR"))?;
            let mut staged = StagedDir::new(dir)?;
            for (name, text) in hepdata::submission_files(prov, &hepdata_tables(plan, rows, u))? {
                staged.write(&name, text.as_bytes())?;
            }
            staged.commit(inputs)?;
            return Ok(());
        }
    };
    match out {
        Some(path) => write_atomic(path, text.as_bytes(), inputs)?,
        None => {
            use std::io::Write as _;
            let _ = std::io::stdout().write_all(text.as_bytes());
        }
    }
    Ok(())
}

fn file_name(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

pub fn run(args: TableArgs) -> Result<()> {
    if !args.merge.is_empty() {
        return merge(&args);
    }
    let Some(card) = &args.card else {
        bail!("--card FILE or --merge FILE… is needed");
    };
    let card_text =
        std::fs::read_to_string(card).with_context(|| format!("--card {}", card.display()))?;
    let plan = parse_table_card(&card_text, &card.display().to_string())?;
    let format = args.format.unwrap_or(TableFormat::Text);
    let units = args.units.unwrap_or(Units::Nb);
    let shard = match &args.shard {
        None => None,
        Some(text) => {
            let (k, n) = parse_k_of_n(text)?;
            if !matches!(format, TableFormat::Csv | TableFormat::Json) {
                bail!("--shard: needs --format csv or json (the formats --merge reads)");
            }
            let r = plan.shard_range(k, n)?;
            Some(ShardMark {
                k,
                n,
                first: r.start,
                end: r.end,
                total: plan.len(),
            })
        }
    };
    let range = shard.map_or(0..plan.len(), |m| m.first..m.end);
    let bar = indicatif::ProgressBar::new(range.len() as u64);
    if range.len() < 2000 {
        bar.set_draw_target(indicatif::ProgressDrawTarget::hidden());
    }
    let mut rows = plan.compute(range, &|| bar.inc(1))?;
    bar.finish_and_clear();
    if units == Units::Pb {
        for r in &mut rows {
            for v in [
                &mut r.sigma_born_nb,
                &mut r.sigma_dressed_nb,
                &mut r.sigma_obs_nb,
            ] {
                *v *= 1e3;
            }
        }
    }
    let prov = Provenance::new(&file_name(card), &card_text, plan.describe());
    write_table(
        &plan,
        &prov,
        &rows,
        units,
        format,
        args.out.as_deref(),
        &[card.as_path()],
        shard,
    )
}

/// One shard file read back.
struct ShardFile {
    prov: Provenance,
    mark: ShardMark,
    format: TableFormat,
    units: Units,
    flat_rows: Vec<HashMap<String, Value>>,
}

fn parse_mark(text: &str, file: &str) -> Result<ShardMark> {
    // "k/n: rows a..b of N"
    let bad = || anyhow!("{file}: the shard marker '{text}' is not k/n: rows a..b of N");
    let (kn, rest) = text.split_once(':').ok_or_else(bad)?;
    let (k, n) = kn.trim().split_once('/').ok_or_else(bad)?;
    let rest = rest.trim().strip_prefix("rows ").ok_or_else(bad)?;
    let (range, total) = rest.split_once(" of ").ok_or_else(bad)?;
    let (a, b) = range.split_once("..").ok_or_else(bad)?;
    let p = |s: &str| s.trim().parse::<usize>().map_err(|_| bad());
    Ok(ShardMark {
        k: p(k)?,
        n: p(n)?,
        first: p(a)?,
        end: p(b)?,
        total: p(total)?,
    })
}

/// Provenance from the comment lines of a CSV table (see `Provenance::lines`).
fn prov_from_csv(lines: &[&str], file: &str) -> Result<Provenance> {
    let bad = |what: &str| anyhow!("{file}: not a radnorm table file ({what})");
    let card = lines
        .get(1)
        .and_then(|l| l.strip_prefix("card: "))
        .ok_or_else(|| bad("no card line"))?;
    let (name, sha) = card
        .rsplit_once(" sha256 ")
        .ok_or_else(|| bad("no card hash"))?;
    let text_at = lines
        .iter()
        .position(|l| *l == "card text:")
        .ok_or_else(|| bad("no card text"))?;
    let notes = lines
        .get(3..text_at)
        .ok_or_else(|| bad("no notes"))?
        .iter()
        .map(|s| s.to_string())
        .collect();
    let body: Vec<&str> = lines[text_at + 1..]
        .iter()
        .map(|l| l.strip_prefix("  ").unwrap_or(l))
        .collect();
    // The lines lose whether the card ended in a newline: the hash decides.
    let joined = body.join("\n");
    let card_text = [joined.clone() + "\n", joined]
        .into_iter()
        .find(|t| Provenance::new(name, t, vec![]).card_sha256 == sha)
        .ok_or_else(|| anyhow!("{file}: the card text does not match its sha256 {sha}"))?;
    let program = lines.first().copied().unwrap_or_default();
    if program != Provenance::program() {
        bail!(
            "{file}: written by {program}, this is {}; merge shards with the program that wrote them",
            Provenance::program()
        );
    }
    Ok(Provenance {
        card_name: name.to_string(),
        card_sha256: sha.to_string(),
        card_text,
        notes,
    })
}

fn units_of(keys: impl Iterator<Item = String>, file: &str) -> Result<Units> {
    for k in keys {
        match k.as_str() {
            "sigma_obs_nb" => return Ok(Units::Nb),
            "sigma_obs_pb" => return Ok(Units::Pb),
            _ => {}
        }
    }
    bail!("{file}: no column sigma_obs_nb or sigma_obs_pb")
}

fn read_csv_shard(text: &str, file: &str) -> Result<ShardFile> {
    let mut lines = text.lines();
    let mark = lines
        .next()
        .and_then(|l| l.strip_prefix("# shard "))
        .ok_or_else(|| anyhow!("{file}: no '# shard k/n' first line; is it a shard?"))?;
    let mark = parse_mark(mark, file)?;
    let comments: Vec<&str> = text
        .lines()
        .skip(1)
        .map_while(|l| l.strip_prefix("# ").or_else(|| (l == "#").then_some("")))
        .collect();
    let prov = prov_from_csv(&comments, file)?;
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    let headers: Vec<String> = reader
        .headers()
        .with_context(|| format!("{file}: header"))?
        .iter()
        .map(str::to_string)
        .collect();
    let units = units_of(headers.iter().cloned(), file)?;
    let mut flat_rows = Vec::new();
    for (i, rec) in reader.records().enumerate() {
        let rec = rec.with_context(|| format!("{file}: data row {}", i + 1))?;
        let mut m = HashMap::new();
        for (h, cell) in headers.iter().zip(rec.iter()) {
            let v = match h.as_str() {
                "process" | "cut" => Value::from(cell),
                _ => cell.parse::<f64>().map(number).map_err(|_| {
                    anyhow!("{file}: data row {}: {h} = '{cell}' is not a number", i + 1)
                })?,
            };
            m.insert(h.clone(), v);
        }
        flat_rows.push(m);
    }
    Ok(ShardFile {
        prov,
        mark,
        format: TableFormat::Csv,
        units,
        flat_rows,
    })
}

fn read_json_shard(text: &str, file: &str) -> Result<ShardFile> {
    let doc: Value = serde_json::from_str(text).with_context(|| format!("{file}: not JSON"))?;
    let bad = |what: &str| anyhow!("{file}: not a radnorm table shard ({what})");
    let p = doc.get("provenance").ok_or_else(|| bad("no provenance"))?;
    let s = |k: &str| -> Result<String> {
        p.get(k)
            .and_then(Value::as_str)
            .map(str::to_string)
            .ok_or_else(|| bad(k))
    };
    let program = s("program")?;
    if program != Provenance::program() {
        bail!(
            "{file}: written by {program}, this is {}; merge shards with the program that wrote them",
            Provenance::program()
        );
    }
    let prov = Provenance {
        card_name: s("card_file")?,
        card_sha256: s("card_sha256")?,
        card_text: s("card")?,
        notes: p
            .get("schemes")
            .and_then(Value::as_array)
            .ok_or_else(|| bad("schemes"))?
            .iter()
            .filter_map(|v| v.as_str().map(str::to_string))
            .collect(),
    };
    if Provenance::new("", &prov.card_text, vec![]).card_sha256 != prov.card_sha256 {
        bail!("{file}: the card text does not match its sha256");
    }
    let summary = doc.get("summary").ok_or_else(|| bad("no summary"))?;
    let shard = summary
        .get("shard")
        .and_then(Value::as_str)
        .ok_or_else(|| bad("no summary.shard; is it a shard?"))?;
    let (k, n) = shard.split_once('/').ok_or_else(|| bad("summary.shard"))?;
    let int = |v: Option<&Value>, what: &str| {
        v.and_then(Value::as_u64)
            .map(|x| x as usize)
            .ok_or_else(|| bad(what))
    };
    let rows = doc
        .get("rows")
        .and_then(Value::as_array)
        .ok_or_else(|| bad("rows"))?;
    let first = int(summary.get("first_row"), "summary.first_row")?;
    let mark = ShardMark {
        k: k.parse().map_err(|_| bad("summary.shard"))?,
        n: n.parse().map_err(|_| bad("summary.shard"))?,
        first,
        end: first + rows.len(),
        total: int(summary.get("table_rows"), "summary.table_rows")?,
    };
    let mut flat_rows = Vec::new();
    for r in rows {
        let obj = r.as_object().ok_or_else(|| bad("a row is not an object"))?;
        flat_rows.push(flatten(obj).into_iter().collect::<HashMap<_, _>>());
    }
    let units = units_of(
        flat_rows
            .first()
            .into_iter()
            .flat_map(|m| m.keys().cloned()),
        file,
    )?;
    Ok(ShardFile {
        prov,
        mark,
        format: TableFormat::Json,
        units,
        flat_rows,
    })
}

fn merge(args: &TableArgs) -> Result<()> {
    let mut shards = Vec::new();
    for path in &args.merge {
        let file = path.display().to_string();
        let text = std::fs::read_to_string(path).with_context(|| format!("--merge {file}"))?;
        let shard = if text.trim_start().starts_with('{') {
            read_json_shard(&text, &file)?
        } else {
            read_csv_shard(&text, &file)?
        };
        shards.push((file, shard));
    }
    shards.sort_by_key(|(_, s)| s.mark.k);
    let (first_file, first) = &shards[0];
    let n = first.mark.n;
    for (file, s) in &shards {
        if s.prov.card_sha256 != first.prov.card_sha256 {
            bail!("{file}: made from another card than {first_file} (sha256 differs)");
        }
        if s.mark.n != n || s.units != first.units || s.format != first.format {
            bail!("{file}: shard count, units or format differ from {first_file}");
        }
    }
    let ks: Vec<usize> = shards.iter().map(|(_, s)| s.mark.k).collect();
    if ks != (1..=n).collect::<Vec<_>>() {
        bail!("--merge: shards {ks:?} given; allowed: each of 1..={n} exactly once");
    }
    let plan = parse_table_card(&first.prov.card_text, &first.prov.card_name)?;
    let mut rows = Vec::with_capacity(plan.len());
    let u = unit_key(first.units);
    for (file, s) in &shards {
        let want = plan.shard_range(s.mark.k, n)?;
        if (s.mark.first..s.mark.end) != want || s.flat_rows.len() != want.len() {
            bail!(
                "{file}: holds rows {}..{} ({} read); shard {}/{n} of this card is rows {}..{}",
                s.mark.first,
                s.mark.end,
                s.flat_rows.len(),
                s.mark.k,
                want.start,
                want.end
            );
        }
        for (i, flat) in s.flat_rows.iter().enumerate() {
            rows.push(row_from_flat(
                flat,
                &plan,
                u,
                &format!("{file}: row {}", i + 1),
            )?);
        }
    }
    let notes = plan.describe();
    if notes != first.prov.notes {
        bail!("{first_file}: its provenance differs from what this program makes of the card");
    }
    if args.units.is_some_and(|u| u != first.units) {
        bail!("--units: the shards are in {u}; a merge keeps their units");
    }
    let inputs: Vec<&Path> = args.merge.iter().map(PathBuf::as_path).collect();
    write_table(
        &plan,
        &first.prov,
        &rows,
        first.units,
        args.format.unwrap_or(first.format),
        args.out.as_deref(),
        &inputs,
        None,
    )
}
