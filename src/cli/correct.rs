//! `radnorm correct`: a measured scan → observed, dressed and bare cross-sections with
//! their budget, written to a folder (CSV, JSON, HEPData YAML, covariance, SVG plots).
//!
//! When the card has a `[fit]` table the forward fit of a narrow resonance runs *instead
//! of* the unfolding (which is ill-posed where the resonance is narrower than the spread,
//! and would fail or mislead there): the folder then holds `fit.json`, `fit.csv` and
//! `plots/fit.svg`.

use anyhow::{Context, Result};
use clap::Args;
use serde_json::{Map, Value};
use std::path::{Path, PathBuf};

use radnorm::budget::{Budget, Kind};
use radnorm::io::tables::{csv_text, json_text, number};
use radnorm::io::{Provenance, StagedDir, hepdata};
use radnorm::plot::{Axes, Series, bars_svg, series_svg};
use radnorm::scan::fit::Parameter;
use radnorm::scan::{
    CorrectedScan, FitPlan, ForwardFit, ScanPlan, ScanPoint, fit_scan, parse_full_scan_card,
    read_scan,
};

#[derive(Debug, Args)]
#[command(
    after_help = "Example:\n  radnorm correct --card scan.toml --data scan.csv --out corrected"
)]
pub struct CorrectArgs {
    /// The scan run card (TOML).
    #[arg(long, value_name = "FILE")]
    card: PathBuf,
    /// The measured scan (CSV: sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv …).
    #[arg(long, value_name = "FILE")]
    data: PathBuf,
    /// The output folder (created; existing files of the same names are replaced).
    #[arg(long, value_name = "DIR")]
    out: PathBuf,
}

/// The per-point budget of one quantity: `<group>_nb` for every reporting group.
fn budget_row(b: &Budget, i: usize) -> Value {
    let mut m = Map::new();
    for g in b.groups() {
        m.insert(
            format!("{}_nb", g.replace(':', "_")),
            number(b.group_at(i, g)),
        );
    }
    Value::Object(m)
}

fn rows(r: &CorrectedScan) -> Vec<Map<String, Value>> {
    r.points
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let mut m = Map::new();
            let mut put = |k: &str, v: f64| {
                m.insert(k.into(), number(v));
            };
            put("sqrt_s_gev", p.sqrt_s_gev);
            put("luminosity_nb_inv", p.luminosity_nb_inv);
            put("energy_spread_mev", p.energy_spread_mev);
            for (key, v, b) in [
                ("sigma_obs", p.sigma_obs_nb, &r.obs),
                ("sigma_dressed", p.sigma_dressed_nb, &r.dressed),
                ("sigma_born", p.sigma_born_nb, &r.born),
            ] {
                put(&format!("{key}_nb"), v);
                put(&format!("{key}_stat_nb"), b.kind_at(i, Kind::Statistical));
                put(&format!("{key}_syst_nb"), b.kind_at(i, Kind::Systematic));
                if key == "sigma_obs" {
                    put("one_plus_delta", p.one_plus_delta);
                }
                if key == "sigma_dressed" {
                    put("vp_factor", p.vp_factor);
                }
            }
            let mut budget = Map::new();
            budget.insert("sigma_obs".into(), budget_row(&r.obs, i));
            budget.insert("sigma_dressed".into(), budget_row(&r.dressed, i));
            budget.insert("sigma_born".into(), budget_row(&r.born, i));
            m.insert("budget".into(), Value::Object(budget));
            m
        })
        .collect()
}

fn matrix_json(m: &radnorm::budget::SymMatrix) -> Value {
    Value::Array(
        m.rows()
            .map(|r| Value::Array(r.iter().map(|v| number(*v)).collect()))
            .collect(),
    )
}

fn budget_json(r: &CorrectedScan) -> Value {
    let mut doc = Map::new();
    for (key, b) in [
        ("sigma_obs", &r.obs),
        ("sigma_dressed", &r.dressed),
        ("sigma_born", &r.born),
    ] {
        let mut q = Map::new();
        let sources: Vec<Value> = b
            .sources()
            .iter()
            .map(|s| {
                let mut o = Map::new();
                o.insert("name".into(), Value::from(s.name.clone()));
                o.insert("group".into(), Value::from(s.group.clone()));
                let kind = match s.kind {
                    Kind::Statistical => "statistical",
                    Kind::Systematic => "systematic",
                };
                o.insert("kind".into(), Value::from(kind));
                o.insert("correlation".into(), Value::from(s.correlation.name()));
                o.insert(
                    "shifts_nb".into(),
                    Value::Array(s.shifts.iter().map(|v| number(*v)).collect()),
                );
                Value::Object(o)
            })
            .collect();
        let cov = b.covariance();
        q.insert("sources".into(), Value::Array(sources));
        q.insert("covariance_nb2".into(), matrix_json(&cov));
        q.insert("correlation".into(), matrix_json(&cov.correlation()));
        doc.insert(key.into(), Value::Object(q));
    }
    Value::Object(doc)
}

fn hepdata_tables(r: &CorrectedScan, reaction: &str) -> Vec<hepdata::Table> {
    use hepdata::{Table, Variable};
    let col = |f: fn(&radnorm::scan::CorrectedPoint) -> f64| -> Vec<f64> {
        r.points.iter().map(f).collect()
    };
    let n = r.points.len();
    let energy = || Variable::new("SQRT(S)", "GEV", col(|p| p.sqrt_s_gev));
    let errs = |b: &Budget, kind| (0..n).map(|i| b.kind_at(i, kind)).collect::<Vec<_>>();
    let sigma = |name: &str, v: Vec<f64>, b: &Budget| {
        Variable::new(name, "NB", v)
            .error("stat", errs(b, Kind::Statistical))
            .error("sys", errs(b, Kind::Systematic))
            .qualifier("RE", reaction)
    };
    let cov = r.born.covariance();
    let (mut ei, mut ej, mut c) = (Vec::new(), Vec::new(), Vec::new());
    for i in 0..n {
        for j in 0..n {
            ei.push(r.points[i].sqrt_s_gev);
            ej.push(r.points[j].sqrt_s_gev);
            c.push(cov.get(i, j));
        }
    }
    let table = |name: &str, stem: &str, description: &str, independent, dependent| Table {
        name: name.into(),
        file_stem: stem.into(),
        description: description.into(),
        reactions: vec![reaction.into()],
        independent,
        dependent,
    };
    vec![
        table(
            "Cross sections",
            "cross_sections",
            "Observed, dressed (vacuum polarisation kept) and bare (Born) cross-sections",
            vec![energy()],
            vec![
                sigma("SIG(OBS)", col(|p| p.sigma_obs_nb), &r.obs),
                sigma("SIG(DRESSED)", col(|p| p.sigma_dressed_nb), &r.dressed),
                sigma("SIG(BARE)", col(|p| p.sigma_born_nb), &r.born),
            ],
        ),
        table(
            "Correction factors",
            "corrections",
            "1+delta = SIG(OBS)/SIG(DRESSED); VP factor = SIG(DRESSED)/SIG(BARE)",
            vec![energy()],
            vec![
                Variable::new("1+DELTA", "", col(|p| p.one_plus_delta)),
                Variable::new("VP FACTOR", "", col(|p| p.vp_factor)),
            ],
        ),
        table(
            "Covariance of the bare cross-section",
            "covariance_bare",
            "Total (statistical and systematic) covariance of SIG(BARE) between points",
            vec![
                Variable::new("SQRT(S)", "GEV", ei),
                Variable::new("SQRT(S)", "GEV", ej),
            ],
            vec![Variable::new("COV(SIG(BARE))", "NB**2", c)],
        ),
    ]
}

fn plots(r: &CorrectedScan) -> Result<Vec<(String, String)>> {
    let x: Vec<f64> = r.points.iter().map(|p| p.sqrt_s_gev).collect();
    let n = x.len();
    let total = |b: &Budget| (0..n).map(|i| b.total_at(i, None)).collect::<Vec<_>>();
    let series = |label: &str, y: Vec<f64>, e: Vec<f64>, line: bool| Series {
        label: label.into(),
        x: x.clone(),
        y,
        y_err: e,
        line,
    };
    let shape = series_svg(
        &Axes {
            title: "Line shape".into(),
            x_label: "√s [GeV]".into(),
            y_label: "σ [nb]".into(),
        },
        &[
            series(
                "σ_obs",
                r.points.iter().map(|p| p.sigma_obs_nb).collect(),
                total(&r.obs),
                false,
            ),
            series(
                "σ_dressed",
                r.points.iter().map(|p| p.sigma_dressed_nb).collect(),
                total(&r.dressed),
                false,
            ),
            series(
                "σ_bare",
                r.points.iter().map(|p| p.sigma_born_nb).collect(),
                total(&r.born),
                false,
            ),
        ],
    )?;
    let factors = series_svg(
        &Axes {
            title: "Correction factors".into(),
            x_label: "√s [GeV]".into(),
            y_label: "factor (dimensionless)".into(),
        },
        &[
            series(
                "1+δ",
                r.points.iter().map(|p| p.one_plus_delta).collect(),
                vec![],
                true,
            ),
            series(
                "vp factor",
                r.points.iter().map(|p| p.vp_factor).collect(),
                vec![],
                true,
            ),
        ],
    )?;
    // The budget of the bare cross-section summed over points, per source group.
    let mut bars = Vec::new();
    for g in r.born.groups() {
        let rel = (0..n)
            .map(|i| r.born.group_at(i, g) / r.points[i].sigma_born_nb)
            .fold(0.0, f64::max);
        bars.push((g.to_string(), 100.0 * rel));
    }
    let mut files = vec![
        ("plots/line_shape.svg".to_string(), shape),
        ("plots/corrections.svg".to_string(), factors),
    ];
    if !bars.is_empty() {
        let budget = bars_svg(
            &Axes {
                title: "Budget of σ_bare (largest over the points)".into(),
                x_label: "relative uncertainty [%]".into(),
                y_label: "source".into(),
            },
            &bars,
        )?;
        files.push(("plots/budget.svg".to_string(), budget));
    }
    Ok(files)
}

fn file_name(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

pub fn run(args: CorrectArgs) -> Result<()> {
    let card_text = std::fs::read_to_string(&args.card)
        .with_context(|| format!("--card {}", args.card.display()))?;
    let card = parse_full_scan_card(&card_text, &args.card.display().to_string())?;
    let plan = card.plan;
    let data = read_scan(&args.data)?;
    if let Some(fit) = &card.fit {
        return run_fit(&args, &card_text, &plan, fit, &data);
    }
    let result = radnorm::scan::correct_scan(&plan, &data)?;

    let prov = Provenance::new(
        &file_name(&args.card),
        &card_text,
        vec![
            format!("data: {}", file_name(&args.data)),
            format!("isr: {}", plan.chain.describe()),
            format!("vp: {}", plan.vp.describe()),
            format!("luminosity: {}", plan.luminosity.describe),
            format!(
                "unfolding: {} iterations, last relative change {:.2e}",
                result.iterations, result.last_change
            ),
        ],
    );
    let rows = rows(&result);
    let mut summary = Map::new();
    summary.insert("points".into(), Value::from(result.points.len()));
    summary.insert("iterations".into(), Value::from(result.iterations));
    summary.insert("last_change".into(), number(result.last_change));
    summary.insert("response_residual".into(), number(result.response_residual));
    summary.insert("radiator".into(), Value::from(plan.chain.radiator_key()));

    let mut out = StagedDir::new(&args.out)?;
    out.write("corrected.csv", csv_text(&prov, &rows)?.as_bytes())?;
    out.write(
        "corrected.json",
        json_text(&prov, &rows, Some(&summary))?.as_bytes(),
    )?;
    let mut budget = Map::new();
    budget.insert("provenance".into(), prov.to_json());
    budget.insert("budget".into(), budget_json(&result));
    let budget = Value::Object(budget);
    out.write(
        "budget.json",
        (serde_json::to_string_pretty(&budget)? + "\n").as_bytes(),
    )?;
    let reaction = "E+ E- --> X";
    for (name, text) in hepdata::submission_files(&prov, &hepdata_tables(&result, reaction))? {
        out.write(&format!("hepdata/{name}"), text.as_bytes())?;
    }
    for (name, svg) in plots(&result)? {
        out.write(&name, svg.as_bytes())?;
    }
    out.commit(&[args.card.as_path(), args.data.as_path()])?;

    let worst = |b: &Budget, kind| {
        (0..result.points.len())
            .map(|i| b.kind_at(i, kind) / result.points[i].sigma_born_nb)
            .fold(0.0, f64::max)
    };
    say!(
        "corrected {} points ({:.3}–{:.3} GeV) in {} iterations with {}",
        result.points.len(),
        result.points[0].sqrt_s_gev,
        result.points[result.points.len() - 1].sqrt_s_gev,
        result.iterations,
        plan.chain.radiator_key()
    );
    say!(
        "1+delta from {:.4} to {:.4}; largest relative uncertainty of sigma_born: stat {:.3}%, syst {:.3}%",
        result
            .points
            .iter()
            .map(|p| p.one_plus_delta)
            .fold(f64::INFINITY, f64::min),
        result
            .points
            .iter()
            .map(|p| p.one_plus_delta)
            .fold(0.0, f64::max),
        100.0 * worst(&result.born, Kind::Statistical),
        100.0 * worst(&result.born, Kind::Systematic),
    );
    let groups = result.born.groups();
    let width = groups.iter().map(|g| g.chars().count()).max().unwrap_or(0);
    for g in groups {
        let m = (0..result.points.len())
            .map(|i| result.born.group_at(i, g) / result.points[i].sigma_born_nb)
            .fold(0.0, f64::max);
        say!("  {g:<width$}  up to {:.3}%", 100.0 * m);
    }
    say!("wrote {}", args.out.display());
    Ok(())
}

/// The per-point rows of a forward fit.
fn fit_rows(r: &ForwardFit) -> Vec<Map<String, Value>> {
    let fit_stat = r.sigma_obs_fit_stat_nb();
    r.points
        .iter()
        .zip(&r.sigma_obs_fit_nb)
        .zip(fit_stat)
        .zip(r.pulls())
        .map(|(((p, f), fs), pull)| {
            let mut m = Map::new();
            let mut put = |k: &str, v: f64| {
                m.insert(k.into(), number(v));
            };
            put("sqrt_s_gev", p.sqrt_s_gev);
            put("energy_spread_mev", p.energy_spread_mev);
            put("sigma_obs_nb", p.sigma_obs_nb);
            put("sigma_obs_stat_nb", p.sigma_obs_stat_nb);
            put("sigma_obs_fit_nb", *f);
            put("sigma_obs_fit_stat_nb", fs);
            put("pull", pull);
            m
        })
        .collect()
}

/// The summary of a forward fit: parameters with `_unc`, correlation, χ², provenance of
/// the fixed width.
fn fit_summary(r: &ForwardFit) -> Map<String, Value> {
    let mut m = Map::new();
    m.insert("resonance".into(), Value::from(r.plan.resonance.clone()));
    m.insert("status".into(), Value::from(r.stop.key()));
    m.insert("iterations".into(), Value::from(r.iterations));
    m.insert("edm".into(), number(r.edm));
    m.insert("points".into(), Value::from(r.points.len()));
    m.insert("continuum".into(), Value::from(r.plan.continuum.key()));
    m.insert(
        "continuum_pivot_sqrt_s_gev".into(),
        number(r.plan.pivot_sqrt_s_gev),
    );
    m.insert("width_gev".into(), number(r.plan.width_gev));
    m.insert("width_fixed".into(), Value::from(true));
    for &p in &r.parameters {
        m.insert(p.key().into(), number(r.value(p).unwrap_or(f64::NAN)));
        m.insert(
            p.unc_key().into(),
            number(r.uncertainty(p).unwrap_or(f64::NAN)),
        );
    }
    let (area, area_unc) = r.peak_area_nb_gev();
    m.insert("peak_area_nb_gev".into(), number(area));
    m.insert("peak_area_unc_nb_gev".into(), number(area_unc));
    m.insert(
        "parameters".into(),
        Value::Array(r.parameters.iter().map(|p| Value::from(p.key())).collect()),
    );
    let c = r.correlation();
    let k = c.size();
    m.insert(
        "correlation".into(),
        Value::Array(
            (0..k)
                .map(|i| Value::Array((0..k).map(|j| number(c.get(i, j))).collect()))
                .collect(),
        ),
    );
    m.insert("chi2".into(), number(r.chi2));
    m.insert("ndf".into(), Value::from(r.ndf));
    m.insert("chi2_per_ndf".into(), number(r.chi2 / r.ndf as f64));
    m
}

fn fit_plot(r: &ForwardFit) -> Result<String> {
    let x: Vec<f64> = r.points.iter().map(|p| p.sqrt_s_gev).collect();
    Ok(series_svg(
        &Axes {
            title: format!("Forward fit of {}", r.plan.resonance),
            x_label: "√s [GeV]".into(),
            y_label: "σ_obs [nb]".into(),
        },
        &[
            Series {
                label: "σ_obs (stat)".into(),
                x: x.clone(),
                y: r.points.iter().map(|p| p.sigma_obs_nb).collect(),
                y_err: r.points.iter().map(|p| p.sigma_obs_stat_nb).collect(),
                line: false,
            },
            Series {
                label: "fit at the points".into(),
                x,
                y: r.sigma_obs_fit_nb.clone(),
                y_err: vec![],
                line: true,
            },
        ],
    )?)
}

/// `[fit]`: the forward fit instead of the unfolding.
fn run_fit(
    args: &CorrectArgs,
    card_text: &str,
    plan: &ScanPlan,
    fit: &FitPlan,
    data: &[ScanPoint],
) -> Result<()> {
    let r = fit_scan(plan, fit, data)?;
    let prov = Provenance::new(
        &file_name(&args.card),
        card_text,
        vec![
            format!("data: {}", file_name(&args.data)),
            format!("isr: {}", plan.chain.describe()),
            format!("vp: {}", plan.vp.describe()),
            format!("luminosity: {}", plan.luminosity.describe),
            format!(
                "forward fit: resonance {} as a relativistic Breit-Wigner normalised by \
                 Gamma_ee*B (dressed Gamma_ee), total width {} GeV held fixed, continuum {}; \
                 Levenberg-Marquardt, central differences through the chain, {} iterations, \
                 edm {:.2e}; uncertainties statistical only",
                r.plan.resonance,
                r.plan.width_gev,
                r.plan.continuum.key(),
                r.iterations,
                r.edm
            ),
        ],
    );
    let rows = fit_rows(&r);
    let summary = fit_summary(&r);
    let mut out = StagedDir::new(&args.out)?;
    out.write(
        "fit.json",
        json_text(&prov, &rows, Some(&summary))?.as_bytes(),
    )?;
    out.write("fit.csv", csv_text(&prov, &rows)?.as_bytes())?;
    out.write("plots/fit.svg", fit_plot(&r)?.as_bytes())?;
    out.commit(&[args.card.as_path(), args.data.as_path()])?;

    let n = r.points.len();
    say!(
        "forward fit of {} to {} points ({:.4}–{:.4} GeV) with {}: {} after {} iterations",
        r.plan.resonance,
        n,
        r.points[0].sqrt_s_gev,
        r.points[n - 1].sqrt_s_gev,
        plan.chain.radiator_key(),
        r.stop.key(),
        r.iterations
    );
    for &p in &r.parameters {
        let (v, u) = (
            r.value(p).unwrap_or(f64::NAN),
            r.uncertainty(p).unwrap_or(f64::NAN),
        );
        match p {
            Parameter::Mass => say!("  {:<24} {v:.6} ± {u:.6}", p.key()),
            _ => say!("  {:<24} {v:.5} ± {u:.5}", p.key()),
        }
    }
    say!(
        "  width_gev                {} (held fixed)",
        r.plan.width_gev
    );
    say!(
        "  chi2/ndf                 {:.2}/{} = {:.3}",
        r.chi2,
        r.ndf,
        r.chi2 / r.ndf as f64
    );
    say!("wrote {}", args.out.display());
    Ok(())
}
