//! `radnorm demo`: the whole pipeline on the shipped, invented demo scenario.
//!
//! It writes the scenario's inputs into the output folder, then runs the same commands a
//! user would — `lumi` (luminosity per point from the Bhabha counts), `correct` (observed
//! → dressed → bare cross-sections with the budget, HEPData and plots) and `table`
//! (correction tables) — and finally compares the unfolded dressed cross-sections with
//! the invented truth the counts were drawn from (closure).

use anyhow::{Context, Result, anyhow, bail};
use clap::{Args, Parser};
use std::path::{Path, PathBuf};

use radnorm::demo::{Scenario, Truth, counts_csv, generate, parse_scenario};
use radnorm::io::write_atomic;
use radnorm::process::CrossSection;
use radnorm::scan::MonitorSigma;
use radnorm::scan::generate::scan_to_csv;
use radnorm::scan::{Matrix, ScanPlan, parse_scan_card};

/// The shipped scenario files (`tables/demo/`), built into the program so the demo runs
/// from any folder.
const FILES: [(&str, &str); 7] = [
    ("README.md", include_str!("../../tables/demo/README.md")),
    (
        "scenario.toml",
        include_str!("../../tables/demo/scenario.toml"),
    ),
    ("lumi.toml", include_str!("../../tables/demo/lumi.toml")),
    ("scan.toml", include_str!("../../tables/demo/scan.toml")),
    (
        "corrections.toml",
        include_str!("../../tables/demo/corrections.toml"),
    ),
    ("scan.csv", include_str!("../../tables/demo/scan.csv")),
    (
        "bhabha_counts.csv",
        include_str!("../../tables/demo/bhabha_counts.csv"),
    ),
];

const DATA_COMMENT: &str = "INVENTED demo data for radnorm: the fictional collider \"Halcyon\" \
scanning the invented resonance Y5200.\nDrawn with Poisson noise (fixed seed) from the forward \
chain of scenario.toml, scan.toml and lumi.toml;\nregenerate with `radnorm demo --write-data DIR`.";

#[derive(Debug, Args)]
#[command(after_help = "Examples:\n  radnorm demo\n  radnorm demo --out /tmp/halcyon --force")]
pub struct DemoArgs {
    /// The output folder (created; a non-empty one only with --force).
    #[arg(long, value_name = "DIR", default_value = "radnorm-demo")]
    out: PathBuf,
    /// Write into a non-empty output folder, replacing files of the same names.
    #[arg(long)]
    force: bool,
    /// Only regenerate the demo data (scan.csv, bhabha_counts.csv) into DIR from the
    /// shipped scenario and cards, and stop.
    #[arg(long, value_name = "DIR", conflicts_with_all = ["out", "force"])]
    write_data: Option<PathBuf>,
}

fn file(name: &str) -> &'static str {
    FILES
        .iter()
        .find(|(n, _)| *n == name)
        .map_or("", |(_, t)| t)
}

/// The scenario and the scan card's plan, read from the folder holding the inputs.
fn load(inputs: &Path) -> Result<(Scenario, ScanPlan)> {
    let scenario = parse_scenario(file("scenario.toml"), "scenario.toml")?;
    let card = inputs.join("scan.toml");
    let plan = parse_scan_card(file("scan.toml"), &card.display().to_string())?;
    Ok((scenario, plan))
}

/// The demo data: (scan CSV, Bhabha counts CSV).
fn data(scenario: &Scenario, plan: &ScanPlan) -> Result<(String, String)> {
    let Some(MonitorSigma::Layer(monitor)) = &plan.luminosity.visible else {
        bail!("scan.toml: the demo needs a luminosity monitor card (luminosity.monitor_card)");
    };
    let truth = Truth::new(scenario, plan.vp.clone());
    let points = generate(scenario, &plan.chain, &truth, monitor)?;
    Ok((
        scan_to_csv(&points, DATA_COMMENT),
        counts_csv(&points, DATA_COMMENT),
    ))
}

/// Run one radnorm command line (the program's own parser, as a user would type it).
fn radnorm(args: &[&str]) -> Result<()> {
    let cli = super::Cli::try_parse_from(std::iter::once("radnorm").chain(args.iter().copied()))
        .map_err(|e| anyhow!("internal: demo command {args:?}: {e}"))?;
    super::run(cli).with_context(|| format!("radnorm {}", args.join(" ")))
}

fn path_str(p: &Path) -> Result<&str> {
    p.to_str()
        .ok_or_else(|| anyhow!("--out {}: not valid UTF-8", p.display()))
}

pub fn run(args: DemoArgs) -> Result<()> {
    if let Some(dir) = &args.write_data {
        std::fs::create_dir_all(dir).with_context(|| format!("--write-data {}", dir.display()))?;
        // The monitor card is found next to the scan card: give the shipped one a folder.
        let inputs = tempfile_dir()?;
        std::fs::write(inputs.join("lumi.toml"), file("lumi.toml"))?;
        let (scenario, plan) = load(&inputs)?;
        let (scan, counts) = data(&scenario, &plan)?;
        write_atomic(&dir.join("scan.csv"), scan.as_bytes(), &[])?;
        write_atomic(&dir.join("bhabha_counts.csv"), counts.as_bytes(), &[])?;
        std::fs::remove_dir_all(&inputs).ok();
        say!(
            "wrote {0}/scan.csv and {0}/bhabha_counts.csv",
            dir.display()
        );
        return Ok(());
    }

    let out = &args.out;
    if out.is_file() {
        bail!("--out {}: is a file; allowed: a folder", out.display());
    }
    let non_empty = out.read_dir().is_ok_and(|mut d| d.next().is_some());
    if non_empty && !args.force {
        bail!(
            "--out {}: the folder is not empty; choose another --out or add --force",
            out.display()
        );
    }
    let started = std::time::Instant::now();
    let inputs = out.join("inputs");
    std::fs::create_dir_all(&inputs).with_context(|| format!("--out {}", out.display()))?;
    for (name, text) in FILES {
        write_atomic(&inputs.join(name), text.as_bytes(), &[])?;
    }
    let (scenario, plan) = load(&inputs)?;
    say!("radnorm demo — {} (INVENTED scenario)", scenario.name);
    say!(
        "{} points {:.3}–{:.3} GeV, {} nb⁻¹ each; inputs in {}",
        scenario.points.len(),
        scenario.points[0].sqrt_s_gev,
        scenario.points[scenario.points.len() - 1].sqrt_s_gev,
        scenario.points[0].luminosity_nb_inv,
        inputs.display()
    );

    let p = |name: &str| -> Result<String> { Ok(path_str(&out.join(name))?.to_string()) };
    let i = |name: &str| -> Result<String> { Ok(path_str(&inputs.join(name))?.to_string()) };
    say!("\n1. luminosity from the Bhabha counts (radnorm lumi)");
    radnorm(&[
        "lumi",
        "--card",
        &i("lumi.toml")?,
        "--data",
        &i("bhabha_counts.csv")?,
        "--format",
        "json",
        "--out",
        &p("luminosity.json")?,
    ])?;
    print_luminosity(&out.join("luminosity.json"))?;

    say!("\n2. observed → dressed → bare cross-sections (radnorm correct)");
    radnorm(&[
        "correct",
        "--card",
        &i("scan.toml")?,
        "--data",
        &i("scan.csv")?,
        "--out",
        &p("corrected")?,
    ])?;

    say!("\n3. correction tables (radnorm table)");
    radnorm(&[
        "table",
        "--card",
        &i("corrections.toml")?,
        "--format",
        "csv",
        "--out",
        &p("corrections.csv")?,
    ])?;
    radnorm(&[
        "table",
        "--card",
        &i("corrections.toml")?,
        "--format",
        "hepdata",
        "--out",
        &p("corrections_hepdata")?,
    ])?;
    say!("  corrections.csv and corrections_hepdata/: 1+δ, vp factor and shifts on 41 energies");

    say!("\n4. closure against the invented truth");
    let truth = Truth::new(&scenario, plan.vp.clone());
    let c = closure(&out.join("corrected"), &truth)?;
    say!(
        "  dressed cross-sections vs truth: χ² = {:.1} for {} points (full covariance), largest |pull| {:.2}",
        c.chi2,
        c.points,
        c.max_pull
    );

    say!(
        "\nwrote {} in {:.1} s: inputs/, luminosity.json, corrected/ (corrected.csv/json, \
         budget.json, hepdata/, plots/), corrections.csv, corrections_hepdata/",
        out.display(),
        started.elapsed().as_secs_f64()
    );
    Ok(())
}

/// A private scratch folder for --write-data (removed afterwards).
fn tempfile_dir() -> Result<PathBuf> {
    let dir = std::env::temp_dir().join(format!("radnorm-demo-inputs-{}", std::process::id()));
    std::fs::create_dir_all(&dir).with_context(|| format!("{}", dir.display()))?;
    Ok(dir)
}

fn print_luminosity(path: &Path) -> Result<()> {
    let doc: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(path)?)?;
    let s = &doc["summary"];
    let num = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap_or(f64::NAN);
    if let Some(total) = s.get("luminosity_nb_inv") {
        say!(
            "  total {:.1} nb⁻¹ ± {:.1} (stat) ± {:.1} (syst)",
            total.as_f64().unwrap_or(f64::NAN),
            num(s, "luminosity_stat_nb_inv"),
            num(s, "luminosity_syst_nb_inv"),
        );
    }
    Ok(())
}

/// The agreement of the unfolded dressed cross-sections with the truth.
pub struct Closure {
    pub chi2: f64,
    pub points: usize,
    pub max_pull: f64,
}

/// χ² = dᵀ C⁻¹ d of d = σ_dressed − truth with the dressed covariance of `budget.json`.
pub fn closure(corrected: &Path, truth: &Truth) -> Result<Closure> {
    let read = |name: &str| -> Result<serde_json::Value> {
        let path = corrected.join(name);
        let text = std::fs::read_to_string(&path).with_context(|| format!("{}", path.display()))?;
        Ok(serde_json::from_str(&text)?)
    };
    let rows = read("corrected.json")?;
    let budget = read("budget.json")?;
    let rows = rows["rows"].as_array().cloned().unwrap_or_default();
    let cov = &budget["budget"]["sigma_dressed"]["covariance_nb2"];
    let n = rows.len();
    let mut c = Matrix::zeros(n);
    let mut d = Vec::with_capacity(n);
    let mut max_pull: f64 = 0.0;
    for (i, r) in rows.iter().enumerate() {
        let e = r["sqrt_s_gev"].as_f64().unwrap_or(f64::NAN);
        let diff = r["sigma_dressed_nb"].as_f64().unwrap_or(f64::NAN) - truth.sigma_nb(e * e);
        for j in 0..n {
            c.set(i, j, cov[i][j].as_f64().unwrap_or(f64::NAN));
        }
        max_pull = max_pull.max(diff.abs() / c.get(i, i).sqrt());
        d.push(diff);
    }
    let inv = c
        .inverse()
        .ok_or_else(|| anyhow!("the dressed covariance is singular"))?;
    let chi2 = d.iter().zip(inv.apply(&d)).map(|(a, b)| a * b).sum();
    Ok(Closure {
        chi2,
        points: n,
        max_pull,
    })
}
