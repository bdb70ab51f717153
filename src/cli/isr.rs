//! `radnorm isr`: the ISR-corrected (observed) cross-section and 1 + δ at one energy or
//! on a grid, with cuts, a VP choice, a radiator scheme and a beam-energy spread.

use anyhow::{Result, anyhow, bail};
use clap::{Args, ValueEnum};
use rayon::prelude::*;

use super::output::{OutputArgs, Report, Row, emit_rows};
use super::{flag_error, parse_energy_grid};
use radnorm::isr::{
    Cuts, Isr, IsrError, Observed, RUN_NODES, Radiated, Scheme, Smeared, max_spread_mev,
    schwinger_factor,
};
use radnorm::process::{ConstantR, CrossSection, FermionPair, Hadrons, RRatio};
use radnorm::rmodel::RModel;
use radnorm::vp::{Dressed, Polarisation, Vp, VpChoice};

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum IsrProcess {
    /// e⁺e⁻ → μ⁺μ⁻
    Mumu,
    /// e⁺e⁻ → τ⁺τ⁻
    Tautau,
    /// e⁺e⁻ → hadrons (the default R model, or --r-const)
    Hadrons,
}

impl IsrProcess {
    fn key(self) -> &'static str {
        match self {
            IsrProcess::Mumu => "mumu",
            IsrProcess::Tautau => "tautau",
            IsrProcess::Hadrons => "hadrons",
        }
    }
}

/// Radiator schemes by our short names.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum RadiatorName {
    /// Kuraev–Fadin O(β²) (Sov. J. Nucl. Phys. 41 (1985) 466), the default
    Kf2,
    /// first-order exponentiated (the O(β) truncation of Kuraev–Fadin)
    Exp1,
    /// exponentiated leading-log structure-function form (Nicrosini–Trentadue 1987)
    Sfll,
}

impl RadiatorName {
    fn scheme(self) -> Scheme {
        match self {
            RadiatorName::Kf2 => Scheme::KuraevFadin2,
            RadiatorName::Exp1 => Scheme::Exponentiated1,
            RadiatorName::Sfll => Scheme::StructureFunctionLl,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum VpName {
    /// no vacuum polarisation (σ_dressed = σ_born)
    None,
    /// leptonic Π (e, μ, τ)
    Lep,
    /// leptonic + hadronic Π (default R model)
    Full,
}

#[derive(Debug, Args)]
#[command(
    after_help = "Example:\n  radnorm isr --process mumu --sqrt-s 2:12:6 --x-max 0.5 --compare-radiators --format csv"
)]
pub struct IsrArgs {
    /// The process (ISR of a single s-channel annihilation).
    #[arg(long, value_enum)]
    process: IsrProcess,
    /// Centre-of-mass energy in GeV: a value or a grid start:stop:count (ends included).
    // Negative numbers and hyphen values reach our validation, which names the allowed
    // range (clap would only say "unexpected argument").
    #[arg(long, value_name = "GEV", allow_hyphen_values = true)]
    sqrt_s: String,
    /// Upper limit on x = 1 − s′/s, 0 < x ≤ 1 (default: the kinematic limit).
    #[arg(long, value_name = "X", allow_negative_numbers = true)]
    x_max: Option<f64>,
    /// Minimum final-state invariant mass √s′ in GeV.
    #[arg(long, value_name = "GEV", allow_negative_numbers = true)]
    min_mass_gev: Option<f64>,
    /// Maximum ISR photon energy in the centre-of-mass frame, GeV (x ≤ 2E/√s).
    #[arg(long, value_name = "GEV", allow_negative_numbers = true)]
    max_photon_gev: Option<f64>,
    /// Radiator scheme.
    #[arg(long, value_enum, default_value_t = RadiatorName::Kf2)]
    radiator: RadiatorName,
    /// Vacuum polarisation in σ_dressed.
    #[arg(long, value_enum, default_value_t = VpName::Full)]
    vp: VpName,
    /// Gaussian centre-of-mass energy spread σ_W in MeV applied after ISR.
    #[arg(long, value_name = "MEV", allow_negative_numbers = true)]
    energy_spread_mev: Option<f64>,
    /// Report the inclusive final-state factor (Schwinger) as fsr_factor (lepton pairs).
    #[arg(long)]
    fsr: bool,
    /// Add every radiator's 1 + δ (nested `radiators`) and their full range (`spread`).
    #[arg(long)]
    compare_radiators: bool,
    /// A constant R ratio for hadrons instead of the default R model.
    #[arg(long, value_name = "R", allow_negative_numbers = true)]
    r_const: Option<f64>,
    #[command(flatten)]
    output: OutputArgs,
}

/// Any Born cross-section the command can radiate.
type Born = Box<dyn CrossSection + Send>;

pub fn run(args: IsrArgs) -> Result<()> {
    let grid = parse_energy_grid("--sqrt-s", &args.sqrt_s)?;
    let mut cuts = Cuts::NONE;
    if let Some(x) = args.x_max {
        cuts = cuts.with_x_max(x).map_err(flag_error)?;
    }
    if let Some(m) = args.min_mass_gev {
        cuts = cuts.with_min_mass_gev(m).map_err(flag_error)?;
    }
    if let Some(e) = args.max_photon_gev {
        cuts = cuts.with_max_photon_gev(e).map_err(flag_error)?;
    }
    let spread_mev = args.energy_spread_mev.unwrap_or(0.0);
    if !(spread_mev >= 0.0 && spread_mev.is_finite()) {
        bail!("--energy-spread-mev {spread_mev}: not allowed; allowed: a finite spread ≥ 0 MeV");
    }
    let lowest = grid.points().iter().copied().fold(f64::INFINITY, f64::min);
    if spread_mev > max_spread_mev(lowest) {
        bail!(
            "--energy-spread-mev {spread_mev}: too wide at sqrt_s = {lowest} GeV; allowed: ≤ {} MeV (sqrt_s/8: the Gaussian's ±8σ window stays at positive energy)",
            max_spread_mev(lowest)
        );
    }
    if args.r_const.is_some() && args.process != IsrProcess::Hadrons {
        bail!("--r-const: applies to --process hadrons only");
    }
    let fsr_factor = match (args.fsr, args.process) {
        (false, _) => None,
        (true, IsrProcess::Hadrons) => bail!(
            "--fsr: the inclusive final-state factor is offered for lepton pairs (mumu, tautau) only"
        ),
        (true, _) => Some(schwinger_factor(-1.0)),
    };

    let mut notes = vec![format!("process {}", args.process.key())];
    let born: Born = match args.process {
        IsrProcess::Mumu => Box::new(FermionPair::muon()),
        IsrProcess::Tautau => Box::new(FermionPair::tau()),
        IsrProcess::Hadrons => match args.r_const {
            Some(r) => {
                let r = ConstantR::new("r_const", r).map_err(flag_error)?;
                notes.push(format!("R model: {}", r.describe()));
                Box::new(Hadrons::new(r))
            }
            None => {
                let model = RModel::standard();
                notes.push(format!("R model: {}", model.describe()));
                Box::new(Hadrons::new(model))
            }
        },
    };
    let vp = Vp::from_choice(match args.vp {
        VpName::None => VpChoice::None,
        VpName::Lep => VpChoice::Leptonic,
        VpName::Full => VpChoice::Full,
    });
    notes.push(vp.describe());
    // The s-channel factor table now, across threads, before the parallel work.
    vp.tabulate();
    let dressed = Dressed::new(born, vp);
    let scheme = args.radiator.scheme();
    let isr = Isr::new(scheme, cuts);
    notes.push(format!("radiator {}: {}", scheme.key(), scheme.describe()));
    notes.push(
        "one_plus_delta = sigma_obs/sigma_dressed; vp_factor = sigma_dressed/sigma_born; x = 1 - s'/s; ISR accuracy target 1e-8 relative".into(),
    );
    if let Some(f) = fsr_factor {
        notes.push(format!(
            "fsr_factor = 1 + 3 alpha/(4 pi) (Schwinger, massless, inclusive) = {f:.10}; not included in sigma_obs or one_plus_delta"
        ));
    }
    if spread_mev > 0.0 {
        notes.push(format!(
            "sigma_obs includes a Gaussian centre-of-mass spread of {spread_mev} MeV; sigma_radiated_nb is before it"
        ));
    }
    notes.push(format!("constants: {}", radnorm::constants::EDITIONS));

    // σ_obs for the whole grid at once (nearby energies share the far part of the
    // integral), for the chosen radiator and, when compared, for each scheme.
    let s_values: Vec<f64> = grid.points().iter().map(|e| e * e).collect();
    let observe_all = |isr: Isr| -> Result<Vec<Observed>> {
        isr.observe_many(&dressed, &s_values)
            .into_iter()
            .map(|r| r.map_err(|e| isr_error(e, &args)))
            .collect()
    };
    let observed = observe_all(isr)?;
    let compared: Vec<(Scheme, Vec<Observed>)> = if args.compare_radiators {
        Scheme::ALL
            .iter()
            .map(|&other| {
                // The chosen scheme's values are already there.
                let obs = if other == scheme {
                    observed.clone()
                } else {
                    observe_all(isr.with_scheme(other))?
                };
                Ok((other, obs))
            })
            .collect::<Result<_>>()?
    } else {
        Vec::new()
    };
    // With a spread, σ_obs at each energy is a convolution in √s: done across threads
    // before the rows (which are then a few table lookups each).
    let smeared: Vec<f64> = if spread_mev > 0.0 {
        let smeared = Smeared::new(Radiated::new(&dressed, isr), spread_mev).map_err(flag_error)?;
        grid.points()
            .par_iter()
            .map(|&sqrt_s| smeared.smeared(sqrt_s).value)
            .collect()
    } else {
        Vec::new()
    };
    let point = |i: usize, row: Row| -> Result<Row> {
        let (sqrt_s, s, observed) = (grid.points()[i], s_values[i], &observed[i]);
        // σ_dressed = σ_born·|1/(1 − Π)|², as `Dressed::sigma_nb` forms it (same bits).
        let (sigma_born, vp_factor) = (dressed.born().sigma_nb(s), dressed.vp_factor(s));
        let sigma_dressed = sigma_born * vp_factor;
        let ratio = |obs: f64| {
            if sigma_dressed > 0.0 {
                obs / sigma_dressed
            } else {
                0.0
            }
        };
        let sigma_obs = smeared.get(i).copied().unwrap_or(observed.sigma_nb);
        let mut row = row
            .text("process", args.process.key())
            .num("sqrt_s_gev", sqrt_s)
            .num("sigma_born_nb", sigma_born)
            .num("sigma_dressed_nb", sigma_dressed)
            .num("sigma_obs_nb", sigma_obs)
            .num("one_plus_delta", ratio(sigma_obs))
            .num("vp_factor", vp_factor)
            .text("radiator", scheme.key())
            .num("x_max", observed.x_max)
            .num("isr_integration_error_nb", observed.error_nb);
        if spread_mev > 0.0 {
            row = row
                .num("energy_spread_mev", spread_mev)
                .num("sigma_radiated_nb", observed.sigma_nb);
        }
        if let Some(f) = fsr_factor {
            row = row.num("fsr_factor", f);
        }
        if args.compare_radiators {
            let mut nested = Row::new();
            let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
            for (other, obs) in &compared {
                let r = ratio(obs[i].sigma_nb);
                lo = lo.min(r);
                hi = hi.max(r);
                nested = nested.num(other.key(), r);
            }
            row = row.nested("radiators", nested).num("spread", hi - lo);
        }
        Ok(row)
    };
    let interpolated = observed.iter().filter(|o| o.interpolated).count();
    if interpolated > 0 {
        // Beside the accuracy note, before the constants' editions.
        notes.insert(notes.len() - 1, format!(
            "sigma_obs at {interpolated} of {} energies interpolated across runs of nearby energies (Chebyshev, {RUN_NODES} nodes: sigma_obs itself away from sigma_d's structures, its part from s' below the run near them); isr_integration_error_nb includes the interpolation's estimate",
            observed.len()
        ));
    }
    let mut report = Report::new(Vec::new());
    for n in notes {
        report = report.note(n);
    }
    let n = s_values.len();
    emit_rows(report, n, point, &args.output, &[], grid.is_single())
}

/// An ISR error in the words of the command line.
fn isr_error(e: IsrError, args: &IsrArgs) -> anyhow::Error {
    match e {
        IsrError::MinMassAboveEnergy {
            min_mass_gev,
            sqrt_s_gev,
        } => anyhow!(
            "--min-mass-gev {min_mass_gev}: not allowed at --sqrt-s {sqrt_s_gev}; allowed: a minimum mass below sqrt(s) (grid {})",
            args.sqrt_s
        ),
        other => anyhow!("{other}"),
    }
}
