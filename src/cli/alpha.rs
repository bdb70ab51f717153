//! `radnorm alpha`: running α at spacelike or timelike q² — Δα_lep, Δα_had with its
//! uncertainty, Im Π and 1/α(q²).

use anyhow::{Context, Result, bail};
use clap::Args;
use rayon::prelude::*;
use std::path::PathBuf;
use std::sync::Arc;

use super::output::{OutputArgs, Report, Row, emit};
use super::parse_energy_grid;
use radnorm::constants::{ALPHA_INV, ALPHA_S_MZ, EDITIONS};
use radnorm::numeric::Grid;
use radnorm::process::RRatio;
use radnorm::rmodel::params::Parameters;
use radnorm::rmodel::{RModel, RTable};
use radnorm::vp::hadronic::HadronicVp;
use radnorm::vp::leptonic::pi_leptonic;
use radnorm::vp::standard_hadronic;
use radnorm::{MAX_SQRT_S_GEV, shown};

/// Largest |q²| accepted, GeV²: MAX_SQRT_S_GEV² (the dispersion rule covers s up to 10¹² GeV²).
const Q2_MAX_GEV2: f64 = MAX_SQRT_S_GEV * MAX_SQRT_S_GEV;

#[derive(Debug, Args)]
#[command(
    group = clap::ArgGroup::new("point").required(true).args(["q2", "sqrt_s"]),
    after_help = "Examples:\n  radnorm alpha --q2 -100:-1:5\n  radnorm alpha --sqrt-s 91.1876 --breakdown --format json"
)]
pub struct AlphaArgs {
    /// q² in GeV² (negative = spacelike): a value or a grid start:stop:count (ends included).
    #[arg(long, value_name = "GEV2", allow_hyphen_values = true)]
    q2: Option<String>,
    /// Timelike point(s) q² = s given as √s in GeV: a value or a grid start:stop:count.
    // Hyphen values reach our validation, which names the allowed range.
    #[arg(long, value_name = "GEV", allow_hyphen_values = true)]
    sqrt_s: Option<String>,
    /// A user R table (CSV `sqrt_s_gev,r,r_stat,r_syst`) replacing the model over its range.
    #[arg(long, value_name = "FILE")]
    r_table: Option<PathBuf>,
    /// The R table already contains J/ψ, ψ(2S), Υ(1S–3S) (else they are added analytically).
    #[arg(long, requires = "r_table")]
    table_includes_narrow: bool,
    /// Add Δα_had and its uncertainty for each region of the R model.
    #[arg(long)]
    breakdown: bool,
    #[command(flatten)]
    output: OutputArgs,
}

pub fn run(args: AlphaArgs) -> Result<()> {
    let (points, timelike_energy, single) = points(&args)?;
    let mut inputs = Vec::new();
    let hadronic = match &args.r_table {
        Some(path) => {
            let text = std::fs::read_to_string(path)
                .with_context(|| format!("--r-table {}: cannot read the file", path.display()))?;
            let table = RTable::parse(
                &text,
                &path.display().to_string(),
                args.table_includes_narrow,
            )?;
            inputs.push(path.as_path());
            Arc::new(HadronicVp::new(RModel::new(
                &Parameters::shipped(),
                ALPHA_S_MZ,
                Some(table),
            )))
        }
        None => standard_hadronic(),
    };
    let rows: Vec<Row> = points
        .par_iter()
        .map(|&q2| {
            let lep = pi_leptonic(q2);
            let had = hadronic.pi(q2);
            let (budget, unc) = hadronic.uncertainty(q2);
            let mut row = Row::new().num("q2_gev2", q2);
            if timelike_energy {
                row = row.num("sqrt_s_gev", q2.sqrt());
            }
            row = row
                .num("delta_alpha_lep", lep.re)
                .num("delta_alpha_had", had.re)
                .num("delta_alpha_had_unc", unc)
                .num("im_pi", lep.im + had.im)
                .num("alpha_inv", ALPHA_INV * (1.0 - lep.re - had.re));
            if args.breakdown {
                // Each region's share and 1σ; the point-to-point part of a user table has
                // an uncertainty but no separate share.
                let shares = hadronic.breakdown(q2);
                let mut nested = Row::new();
                for b in &budget {
                    let mut entry = Row::new();
                    if let Some(p) = shares.iter().find(|p| p.region == b.region) {
                        entry = entry.num("delta_alpha_had", p.value);
                    }
                    nested =
                        nested.nested(b.region.key(), entry.num("delta_alpha_had_unc", b.value));
                }
                row = row.nested("breakdown", nested);
            }
            row
        })
        .collect();
    let mut report = Report::new(rows)
        .note("alpha(q2) = alpha/(1 - Pi(q2)), Pi(0) = 0, delta_alpha = Re Pi; im_pi = Im Pi(q2 + i0) = -(alpha/3) R_total (0 spacelike)")
        .note("leptonic: e, mu, tau one loop exact + two/three loops (Steinhauser 1998 high-energy expansion)")
        .note(format!("hadronic: dispersion integral over the {}", hadronic.model().describe()))
        .note("delta_alpha_had_unc: 1 sigma, regions in quadrature (correlated within a region); top quark not included")
        .note(format!("constants: {EDITIONS}"));
    if let Some(path) = &args.r_table {
        report = report.note(format!("user R table: {}", path.display()));
    }
    emit(report, &args.output, &inputs, single)
}

/// The q² points, whether they came from --sqrt-s, and whether there is exactly one.
fn points(args: &AlphaArgs) -> Result<(Vec<f64>, bool, bool)> {
    if let Some(text) = &args.q2 {
        let grid = Grid::parse(text).with_context(|| format!("--q2 {text}"))?;
        if let Some(bad) = grid.points().iter().find(|q| q.abs() > Q2_MAX_GEV2) {
            bail!(
                "--q2 {text}: {} is not allowed; allowed: |q2| <= {Q2_MAX_GEV2:e} GeV^2",
                shown(*bad)
            );
        }
        return Ok((grid.points().to_vec(), false, grid.is_single()));
    }
    let text = args.sqrt_s.as_deref().unwrap_or_default();
    let grid = parse_energy_grid("--sqrt-s", text)?;
    let q2 = grid.points().iter().map(|e| e * e).collect();
    Ok((q2, true, grid.is_single()))
}
