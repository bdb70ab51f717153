//! `radnorm lumi`: visible cross-sections in an acceptance; luminosity from a counts file.

use anyhow::{Context, Result, anyhow, bail};
use clap::{Args, ValueEnum};
use rayon::prelude::*;
use std::path::PathBuf;

use super::output::{OutputArgs, Report, Row, emit};
use super::parse_energy_grid;
use radnorm::budget::Correlation;
use radnorm::lumi::{
    FinalState, LumiPlan, Monitor, Prediction, RawCard, luminosities, parse_counts,
};
use radnorm::vp::Polarisation;

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum ProcessFlag {
    /// Bhabha e⁺e⁻ → e⁺e⁻
    Ee,
    /// e⁺e⁻ → γγ
    Gg,
    /// e⁺e⁻ → μ⁺μ⁻
    Mumu,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum VpFlag {
    /// no vacuum polarisation
    None,
    /// leptons only
    Lep,
    /// leptons and hadrons, with the hadronic uncertainty in the budget
    Full,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum FinalStateFlag {
    /// collinear photons counted with their lepton
    Calorimetric,
    /// energy cut on the lepton after final-state radiation
    Bare,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
enum ScaleFlag {
    /// |t̄|, the Born-weighted mean momentum transfer
    T,
    /// s
    S,
}

fn key<T: ValueEnum>(v: T) -> String {
    v.to_possible_value()
        .map(|p| p.get_name().to_string())
        .unwrap_or_default()
}

#[derive(Debug, Args)]
#[command(
    after_help = "Examples:\n  radnorm lumi --process ee --sqrt-s 10.58 --theta-min-deg 40 --theta-max-deg 140 --acol-max-deg 10 --e-min-frac 0.5\n  radnorm lumi --card lumi.toml --data counts.csv --format json\n\nThe counts file has the columns run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n(n_bhabha counts the chosen normalisation channel's events). Flags override the card."
)]
pub struct LumiArgs {
    /// Run card (TOML) with the acceptance, physics settings and uncertainties.
    #[arg(long, value_name = "FILE")]
    card: Option<PathBuf>,
    /// Counts file (CSV): luminosity per run instead of σ_vis.
    #[arg(long, value_name = "FILE")]
    data: Option<PathBuf>,
    /// Normalisation channel.
    #[arg(long, value_enum)]
    process: Option<ProcessFlag>,
    /// Centre-of-mass energy in GeV: a value or a grid start:stop:count.
    // Negative numbers and hyphen values reach our validation, which names the allowed
    // range (clap would only say "unexpected argument").
    #[arg(long, value_name = "GEV", allow_hyphen_values = true)]
    sqrt_s: Option<String>,
    /// Both final particles above this polar angle (degrees).
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    theta_min_deg: Option<f64>,
    /// Both final particles below this polar angle (degrees).
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    theta_max_deg: Option<f64>,
    /// Maximum acollinearity (degrees; 180 = no cut).
    #[arg(long, value_name = "DEG", allow_negative_numbers = true)]
    acol_max_deg: Option<f64>,
    /// Minimum energy of each final particle, as a fraction of the beam energy.
    #[arg(long, value_name = "FRAC", allow_negative_numbers = true)]
    e_min_frac: Option<f64>,
    /// Vacuum polarisation of the photon propagators [default: full].
    #[arg(long, value_enum)]
    vp: Option<VpFlag>,
    /// Born level: no radiation, no vacuum polarisation.
    #[arg(long)]
    born_only: bool,
    /// Final leptons as calorimeter clusters or bare tracks [default: calorimetric].
    #[arg(long, value_enum)]
    final_state: Option<FinalStateFlag>,
    /// Structure-function scale [default: t for ee, s otherwise].
    #[arg(long, value_enum)]
    scale: Option<ScaleFlag>,
    /// Target relative numerical precision of σ_vis [default: 1e-4].
    #[arg(long, value_name = "REL", allow_negative_numbers = true)]
    precision: Option<f64>,
    #[command(flatten)]
    output: OutputArgs,
}

/// The flag that sets a card key, if any: the uncertainties, the second particle's window
/// and `z_exchange` are set in the run card only.
fn flag_of_card_key(key: &str) -> Option<&'static str> {
    Some(match key {
        "process" => "--process",
        "sqrt_s_gev" => "--sqrt-s",
        "vp" => "--vp",
        "born_only" => "--born-only",
        "final_state" => "--final-state",
        "scale" => "--scale",
        "precision" => "--precision",
        "acceptance.theta_min_deg" => "--theta-min-deg",
        "acceptance.theta_max_deg" => "--theta-max-deg",
        "acceptance.acol_max_deg" => "--acol-max-deg",
        "acceptance.e_min_frac" => "--e-min-frac",
        _ => return None,
    })
}

/// The card (if any) with the flags laid over it.
fn raw_card(args: &LumiArgs) -> Result<RawCard> {
    let mut raw = match &args.card {
        Some(path) => {
            let text = std::fs::read_to_string(path)
                .with_context(|| format!("cannot read run card {}", path.display()))?;
            RawCard::parse(&text).with_context(|| format!("run card {}", path.display()))?
        }
        None => RawCard::default(),
    };
    let set = |slot: &mut Option<f64>, v: Option<f64>| {
        if v.is_some() {
            *slot = v;
        }
    };
    if let Some(p) = args.process {
        raw.process = Some(key(p));
    }
    if let Some(v) = args.vp {
        raw.vp = Some(key(v));
    }
    if let Some(f) = args.final_state {
        raw.final_state = Some(key(f));
    }
    if let Some(s) = args.scale {
        raw.scale = Some(key(s));
    }
    if args.born_only {
        raw.born_only = Some(true);
    }
    set(&mut raw.precision, args.precision);
    let a = &mut raw.acceptance;
    set(&mut a.theta_min_deg, args.theta_min_deg);
    set(&mut a.theta_max_deg, args.theta_max_deg);
    set(&mut a.acol_max_deg, args.acol_max_deg);
    set(&mut a.e_min_frac, args.e_min_frac);
    if args.theta_min_deg.is_some() || args.theta_max_deg.is_some() {
        // A window given by flags applies to both particles.
        a.second_theta_min_deg = None;
        a.second_theta_max_deg = None;
    }
    Ok(raw)
}

pub fn run(args: LumiArgs) -> Result<()> {
    let raw = raw_card(&args)?;
    let plan = LumiPlan::try_from(raw).map_err(|e| match (e.key(), flag_of_card_key(e.key())) {
        ("", _) => anyhow!("{e}"),
        (_, Some(flag)) => anyhow!("{e} (card key; as a flag: {flag})"),
        (_, None) => anyhow!("{e} (run card key; it has no flag)"),
    })?;
    // `single`: a plain value (flag or card) gives one JSON object, any grid an array.
    let (card_sqrt_s, single) = match &args.sqrt_s {
        Some(text) => {
            let grid = parse_energy_grid("--sqrt-s", text)?;
            (Some(grid.points().to_vec()), grid.is_single())
        }
        None => (plan.sqrt_s_gev.map(|e| vec![e]), true),
    };
    let monitor = Monitor::new(plan.clone())?;
    let provenance = provenance(&plan, monitor.vp());
    let mut inputs: Vec<&std::path::Path> = Vec::new();
    if let Some(c) = &args.card {
        inputs.push(c);
    }

    match &args.data {
        None => {
            let Some(energies) = card_sqrt_s else {
                bail!("--sqrt-s: required without --data (or sqrt_s_gev in the card)");
            };
            let predictions: Vec<Prediction> = energies
                .par_iter()
                .map(|&e| monitor.predict(e))
                .collect::<Result<_, _>>()
                .map_err(|e| match (e.energy_gev(), &args.sqrt_s) {
                    (Some(_), Some(text)) => anyhow!("--sqrt-s {text}: {e}"),
                    _ => anyhow!(e),
                })?;
            let rows = predictions.iter().map(|p| sigma_row(&plan, p)).collect();
            let mut report = Report::new(rows);
            for n in provenance.iter().chain(&precision_notes(&predictions)) {
                report = report.note(n.clone());
            }
            emit(report, &args.output, &inputs, single)
        }
        Some(path) => {
            let text = std::fs::read_to_string(path)
                .with_context(|| format!("cannot read counts file {}", path.display()))?;
            let runs = parse_counts(&path.display().to_string(), &text)?;
            if let Some(card) = &card_sqrt_s {
                if card.len() != 1 {
                    bail!("--sqrt-s: give one energy (or none) with --data; each run has its own");
                }
                if let Some(r) = runs
                    .iter()
                    .find(|r| (r.sqrt_s_gev - card[0]).abs() > 1e-9 * card[0])
                {
                    bail!(
                        "{}, line {}, field sqrt_s_gev: {} differs from the run card's / --sqrt-s {} GeV; drop the card's energy to use each run's own",
                        path.display(),
                        r.line,
                        r.sqrt_s_gev,
                        card[0]
                    );
                }
            }
            // σ_vis once per distinct energy.
            let mut energies: Vec<f64> = runs.iter().map(|r| r.sqrt_s_gev).collect();
            energies.sort_by(f64::total_cmp);
            energies.dedup();
            let predictions: Vec<Prediction> = energies
                .par_iter()
                .map(|&e| monitor.predict(e))
                .collect::<Result<_, _>>()
                .map_err(|e| {
                    match e
                        .energy_gev()
                        .and_then(|w| runs.iter().find(|r| r.sqrt_s_gev == w))
                    {
                        Some(r) => {
                            anyhow!("{}, line {}, field sqrt_s_gev: {e}", path.display(), r.line)
                        }
                        None => anyhow!(e),
                    }
                })?;
            let per_run: Vec<&Prediction> = runs
                .iter()
                .map(|r| &predictions[energies.partition_point(|&e| e < r.sqrt_s_gev)])
                .collect();
            let (lumis, budget) = luminosities(&runs, &per_run, plan.uncertainty.efficiency_rel)?;
            let rows = runs
                .iter()
                .zip(&lumis)
                .enumerate()
                .map(|(i, (r, l))| {
                    let mut b = Row::new();
                    for s in budget.sources() {
                        b = b.num(format!("{}_nb_inv", s.name), s.shifts[i]);
                    }
                    let syst = budget
                        .sources()
                        .iter()
                        .filter(|s| s.name != "statistical")
                        .map(|s| s.shifts[i] * s.shifts[i])
                        .sum::<f64>()
                        .sqrt();
                    Row::new()
                        .text("run", r.run.clone())
                        .num("sqrt_s_gev", r.sqrt_s_gev)
                        .int("n_bhabha", r.n as i64)
                        .int("n_bhabha_bkg", r.n_bkg as i64)
                        .num("bhabha_efficiency", r.efficiency)
                        .num("sigma_vis_nb", l.sigma_vis_nb)
                        .num("luminosity_nb_inv", l.luminosity_nb_inv)
                        .num(
                            "luminosity_stat_nb_inv",
                            budget.sources()[0].shifts[i].abs(),
                        )
                        .num("luminosity_syst_nb_inv", syst)
                        .num(
                            "luminosity_correlated_unc_nb_inv",
                            budget.total_at(i, Some(Correlation::Full)),
                        )
                        .num(
                            "luminosity_uncorrelated_unc_nb_inv",
                            budget.total_at(i, Some(Correlation::None)),
                        )
                        .nested("budget", b)
                })
                .collect();
            let (unc, cor, total) = budget.sum_uncertainty();
            let stat_sum = budget.sources()[0]
                .shifts
                .iter()
                .map(|d| d * d)
                .sum::<f64>()
                .sqrt();
            let mut sum_budget = Row::new();
            for s in budget.sources() {
                let v = match s.correlation {
                    Correlation::Full => s.shifts.iter().sum::<f64>().abs(),
                    Correlation::None => s.shifts.iter().map(|d| d * d).sum::<f64>().sqrt(),
                };
                sum_budget = sum_budget.num(format!("{}_nb_inv", s.name), v);
            }
            let summary = Row::new()
                .int("runs", runs.len() as i64)
                .int("energies", energies.len() as i64)
                .num(
                    "luminosity_nb_inv",
                    lumis.iter().map(|l| l.luminosity_nb_inv).sum(),
                )
                .num("luminosity_stat_nb_inv", stat_sum)
                .num(
                    "luminosity_syst_nb_inv",
                    (total * total - stat_sum * stat_sum).max(0.0).sqrt(),
                )
                .num("luminosity_correlated_unc_nb_inv", cor)
                .num("luminosity_uncorrelated_unc_nb_inv", unc)
                .num("luminosity_unc_nb_inv", total)
                .nested("budget", sum_budget);
            let mut report = Report::new(rows);
            report.summary = Some(summary);
            for n in provenance.iter().chain(&precision_notes(&predictions)) {
                report = report.note(n.clone());
            }
            report = report.note(format!("counts file: {}", path.display()));
            inputs.push(path);
            emit(report, &args.output, &inputs, false)
        }
    }
}

/// One σ_vis point: the value, its Born counterpart, the budget of σ shifts.
fn sigma_row(plan: &LumiPlan, p: &Prediction) -> Row {
    let mut b = Row::new();
    for s in &p.shifts {
        b = b.num(format!("{}_nb", s.name), s.shift_nb);
    }
    Row::new()
        .text("process", plan.channel.key())
        .num("sqrt_s_gev", p.sqrt_s_gev)
        .num("sigma_vis_nb", p.sigma.sigma_nb)
        .num("sigma_vis_unc_nb", p.sigma_unc_nb())
        .num("sigma_vis_born_nb", p.sigma_born_nb)
        .num("sigma_vis_num_unc_nb", p.sigma.error_nb)
        .num("vis_over_born", p.sigma.sigma_nb / p.sigma_born_nb)
        .nested("budget", b)
}

fn provenance(plan: &LumiPlan, vp: Option<&dyn Polarisation>) -> Vec<String> {
    let a = &plan.acceptance;
    let (f, s) = (a.first(), a.second());
    let mut notes = vec![
        format!(
            "process {}; acceptance: first {}-{} deg, second {}-{} deg, acollinearity <= {} deg, E >= {} E_beam, {} final state",
            plan.channel.key(),
            f.theta_min_deg(),
            f.theta_max_deg(),
            s.theta_min_deg(),
            s.theta_max_deg(),
            a.acol_max_deg(),
            a.e_min_frac(),
            match a.final_state() {
                FinalState::Calorimetric => "calorimetric",
                FinalState::BareTrack => "bare-track",
            }
        ),
        match vp {
            // `describe` names the model itself ("vacuum polarisation: …").
            Some(v) => format!(
                "{} (t channel spacelike, s channel complex, dressed amplitudes)",
                v.describe()
            ),
            None => "vacuum polarisation: none".into(),
        },
        format!("constants: {}", radnorm::constants::EDITIONS),
    ];
    if plan.settings.radiation {
        notes.push(format!(
            "radiation: leading-log exponentiated structure functions (Kuraev-Fadin 1985, Nicrosini-Trentadue 1987) on both beams{}; scale {}; exact two-body kinematics after the boost",
            if a.final_state() == FinalState::BareTrack { " and both final leptons" } else { "" },
            plan.settings.scale.key()
        ));
        notes.push(format!(
            "theory precision claimed: leading log only; missing non-log O(alpha) terms ~{:.2}% (rc_nonlog) plus the scale variation (rc_scale)",
            100.0 * radnorm::lumi::RC_NONLOG_REL
        ));
    } else {
        notes.push("Born level: no radiation".into());
    }
    if plan.settings.z_exchange {
        notes.push("Z exchange on".into());
    }
    notes
}

fn precision_notes(predictions: &[Prediction]) -> Vec<String> {
    let worst = predictions
        .iter()
        .map(|p| p.sigma.error_nb / p.sigma.sigma_nb)
        .fold(0.0, f64::max);
    let mut notes = vec![format!(
        "numerical precision reached (estimate): {worst:.1e} relative"
    )];
    if predictions.iter().any(|p| !p.sigma.converged) {
        notes.push("WARNING: the numerical precision target was not met at every energy".into());
    }
    notes
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn card_keys_map_to_flags_that_exist() {
        let cmd = LumiArgs::augment_args(clap::Command::new("lumi"));
        let longs: Vec<String> = cmd
            .get_arguments()
            .filter_map(|a| a.get_long())
            .map(|l| format!("--{l}"))
            .collect();
        for key in [
            "process",
            "sqrt_s_gev",
            "vp",
            "born_only",
            "final_state",
            "scale",
            "precision",
            "z_exchange",
            "acceptance.theta_min_deg",
            "acceptance.theta_max_deg",
            "acceptance.second_theta_min_deg",
            "acceptance.second_theta_max_deg",
            "acceptance.acol_max_deg",
            "acceptance.e_min_frac",
            "uncertainty.theta_edge_deg",
            "uncertainty.sqrt_s_gev",
            "uncertainty.efficiency_rel",
        ] {
            if let Some(flag) = flag_of_card_key(key) {
                assert!(
                    longs.iter().any(|l| l == flag),
                    "{key} → {flag}: no such flag"
                );
            }
        }
        assert_eq!(flag_of_card_key("uncertainty.theta_edge_deg"), None);
        assert_eq!(flag_of_card_key("uncertainty.sqrt_s_gev"), None);
    }
}
