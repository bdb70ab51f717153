//! `radnorm born`: Born cross-sections at one energy or on a grid.

use anyhow::{Result, bail};
use clap::{Args, ValueEnum};
use rayon::prelude::*;

use super::output::{OutputArgs, Report, Row, emit};
use super::{flag_error, parse_energy_grid};
use radnorm::MAX_SQRT_S_GEV;
use radnorm::process::{
    Angular, Bhabha, ConstantR, CosRange, CrossSection, Diphoton, FermionPair, Hadrons,
    MIN_POLAR_DEG, RRatio, WidthScheme, ZExchange,
};
use radnorm::rmodel::RModel;

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ProcessName {
    /// e⁺e⁻ → μ⁺μ⁻
    Mumu,
    /// e⁺e⁻ → τ⁺τ⁻
    Tautau,
    /// Bhabha e⁺e⁻ → e⁺e⁻ (needs a polar-angle range)
    Ee,
    /// e⁺e⁻ → γγ (needs a polar-angle range)
    Gg,
    /// e⁺e⁻ → hadrons through an R model
    Hadrons,
}

impl ProcessName {
    pub fn key(self) -> &'static str {
        match self {
            ProcessName::Mumu => "mumu",
            ProcessName::Tautau => "tautau",
            ProcessName::Ee => "ee",
            ProcessName::Gg => "gg",
            ProcessName::Hadrons => "hadrons",
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum ZWidth {
    /// s·Γ_Z/M_Z in the propagator (the convention of the PDG M_Z, Γ_Z)
    Running,
    /// constant width, with M_Z and Γ_Z transformed to that convention
    Fixed,
}

#[derive(Debug, Args)]
#[command(after_help = "Example:\n  radnorm born --process mumu --sqrt-s 2:12:6 --z --format csv")]
pub struct BornArgs {
    /// The process.
    #[arg(long, value_enum)]
    process: ProcessName,
    /// Centre-of-mass energy in GeV: a value or a grid start:stop:count (ends included).
    // Hyphen values reach our validation, which names the range (clap would only say
    // "unexpected argument").
    #[arg(long, value_name = "GEV", allow_hyphen_values = true)]
    sqrt_s: String,
    /// Both final particles above this polar angle (degrees). Required for ee and gg.
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    theta_min_deg: Option<f64>,
    /// Both final particles below this polar angle (degrees).
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    theta_max_deg: Option<f64>,
    /// Include Z exchange (improved Born: G_mu κ, sin²θ_eff; A_FB is reported).
    #[arg(long)]
    z: bool,
    /// Z width convention in the propagator.
    #[arg(long, value_enum, default_value_t = ZWidth::Running)]
    z_width: ZWidth,
    /// Multiply by the Coulomb (Sommerfeld–Sakharov) threshold factor (fermion pairs).
    #[arg(long)]
    coulomb: bool,
    /// Also report dσ/dcosθ of the first final particle at this cosθ: −1 ≤ C ≤ 1, but
    /// C < 1 for ee and −1 < C < 1 for gg, where dσ/dcosθ has its poles. A C outside the
    /// θ window is allowed (the differential does not depend on the window) and noted.
    #[arg(long, value_name = "C", allow_negative_numbers = true)]
    cos_theta: Option<f64>,
    /// A constant R ratio for hadrons (σ = σ_pt·R) instead of the default R model.
    #[arg(long, value_name = "R", allow_negative_numbers = true)]
    r_const: Option<f64>,
    #[command(flatten)]
    output: OutputArgs,
}

/// The lowest energy `born` accepts, GeV: below, σ ∝ 1/s leaves the range of a double
/// (σ_ee at √s = 1e-160 GeV overflows).
const MIN_SQRT_S_GEV: f64 = 1e-100;

pub fn run(args: BornArgs) -> Result<()> {
    let grid = parse_energy_grid("--sqrt-s", &args.sqrt_s)?;
    if let Some(bad) = grid.points().iter().find(|&&e| e < MIN_SQRT_S_GEV) {
        bail!(
            "--sqrt-s {}: {bad:e} is not allowed; allowed: {MIN_SQRT_S_GEV:e} ≤ sqrt_s ≤ {MAX_SQRT_S_GEV:e} GeV (below, σ leaves the floating-point range)",
            args.sqrt_s
        );
    }
    // Flags that do not apply to the process are errors, not silently ignored.
    let lepton_pair = matches!(args.process, ProcessName::Mumu | ProcessName::Tautau);
    if args.coulomb && !lepton_pair {
        bail!(
            "--coulomb: not for --process {}; allowed: with --process mumu or tautau (a lepton pair at threshold)",
            args.process.key()
        );
    }
    if args.r_const.is_some() && args.process != ProcessName::Hadrons {
        bail!(
            "--r-const: not for --process {}; allowed: with --process hadrons only",
            args.process.key()
        );
    }
    if args.process == ProcessName::Hadrons
        && (args.theta_min_deg.is_some() || args.theta_max_deg.is_some())
    {
        bail!(
            "--theta-min-deg/--theta-max-deg: not for --process hadrons (an inclusive total cross-section has no final-state angle); allowed: with mumu, tautau, ee, gg"
        );
    }
    if let Some(c) = args.cos_theta {
        // dσ/dcosθ is infinite at the poles of the t-channel photon (ee: cosθ = 1) and of
        // the t- and u-channel electron (gg: cosθ = ±1).
        let (ok, allowed) = match args.process {
            ProcessName::Ee => (
                (-1.0..1.0).contains(&c),
                "-1 ≤ cos-theta < 1 for --process ee (dσ/dcosθ has the t-channel pole at cosθ = 1)",
            ),
            ProcessName::Gg => (
                c > -1.0 && c < 1.0,
                "-1 < cos-theta < 1 for --process gg (dσ/dcosθ has poles at cosθ = ±1)",
            ),
            _ => ((-1.0..=1.0).contains(&c), "-1 ≤ cos-theta ≤ 1"),
        };
        if !ok {
            bail!("--cos-theta {c}: not allowed; allowed: {allowed}");
        }
    }
    let range = match (args.theta_min_deg, args.theta_max_deg) {
        (None, None) => match args.process {
            ProcessName::Ee | ProcessName::Gg => bail!(
                "--process {}: needs --theta-min-deg and --theta-max-deg (σ diverges along the beam)",
                args.process.key()
            ),
            _ => CosRange::FULL,
        },
        // A missing end is the closest to the beam allowed; with the other given it does not
        // bind (both back-to-back particles inside).
        (lo, hi) => CosRange::both_inside_deg(
            lo.unwrap_or(MIN_POLAR_DEG),
            hi.unwrap_or(180.0 - MIN_POLAR_DEG),
        )
        .map_err(flag_error)?,
    };
    let z = args.z.then(|| {
        ZExchange::standard(match args.z_width {
            ZWidth::Running => WidthScheme::Running,
            ZWidth::Fixed => WidthScheme::Fixed,
        })
    });
    let mut notes = vec![
        format!(
            "process {}, Born level, alpha(0) in the photon terms",
            args.process.key()
        ),
        format!(
            "cos_theta of the first final particle in [{:.9}, {:.9}]",
            range.lo(),
            range.hi()
        ),
        format!("constants: {}", radnorm::constants::EDITIONS),
    ];
    if let Some(z) = &z {
        notes.push(z.describe());
    }
    if args.coulomb {
        notes.push("Coulomb (Sommerfeld-Sakharov) threshold factor on".into());
    }
    // Hadrons have no window: their σ is the total one.
    if let Some(c) = args.cos_theta
        && args.process != ProcessName::Hadrons
        && !(range.lo()..=range.hi()).contains(&c)
    {
        notes.push(format!(
            "cos_theta = {c} is outside the window [{:.9}, {:.9}]: dsigma_dcos_nb is the differential there (it does not depend on the window); sigma_nb counts the window only",
            range.lo(),
            range.hi()
        ));
    }

    let fermion = |mut f: FermionPair| {
        if let Some(z) = z {
            f = f.with_z(z);
        }
        f.with_coulomb(args.coulomb).with_range(range)
    };
    let process: Box<dyn AngularProcess> = match args.process {
        ProcessName::Mumu => Box::new(fermion(FermionPair::muon())),
        ProcessName::Tautau => Box::new(fermion(FermionPair::tau())),
        ProcessName::Ee => {
            let mut b = Bhabha::new(range);
            if let Some(z) = z {
                b = b.with_z(z);
            }
            Box::new(b)
        }
        ProcessName::Gg => Box::new(Diphoton::new(range)),
        ProcessName::Hadrons => match args.r_const {
            Some(r) => {
                let r = ConstantR::new("r_const", r).map_err(flag_error)?;
                notes.push(format!("R model: {}", r.describe()));
                Box::new(Hadrons::new(r))
            }
            None => {
                let model = RModel::standard();
                notes.push(format!("R model: {} (bare R)", model.describe()));
                Box::new(Hadrons::new(model))
            }
        },
    };
    if z.is_some() && matches!(args.process, ProcessName::Gg | ProcessName::Hadrons) {
        bail!("--z: applies to mumu, tautau and ee only");
    }
    let afb = args.z && matches!(args.process, ProcessName::Mumu | ProcessName::Tautau);

    let rows: Vec<Row> = grid
        .points()
        .par_iter()
        .map(|&sqrt_s| {
            let s = sqrt_s * sqrt_s;
            let mut row = Row::new()
                .text("process", args.process.key())
                .num("sqrt_s_gev", sqrt_s)
                .num("sigma_nb", process.sigma_nb(s));
            if afb {
                row = row.num("afb", process.afb(s));
            }
            if let Some(c) = args.cos_theta {
                row = row
                    .num("cos_theta", c)
                    .num("dsigma_dcos_nb", process.dsigma_dcos_nb(s, c));
            }
            row
        })
        .collect();
    let mut report = Report::new(rows);
    for n in notes {
        report = report.note(n);
    }
    emit(report, &args.output, &[], grid.is_single())
}

/// What `born` needs of a process: σ, dσ/dcosθ, and A_FB where defined.
trait AngularProcess: Angular + Send {
    fn afb(&self, _s: f64) -> f64 {
        0.0
    }
}

impl AngularProcess for FermionPair {
    fn afb(&self, s: f64) -> f64 {
        FermionPair::afb(self, s)
    }
}
impl AngularProcess for Bhabha {}
impl AngularProcess for Diphoton {}
impl AngularProcess for Hadrons<ConstantR> {}
impl AngularProcess for Hadrons<RModel> {}
