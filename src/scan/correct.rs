//! A measured scan corrected end to end: counts → σ_obs → unfolded σ_dressed → σ_bare,
//! with the budget of each quantity.
//!
//! Budget sources and how each is propagated:
//! - `stat` (signal counts, √N) and `luminosity_stat` (monitor counts): uncorrelated in
//!   σ_obs; through the unfolding each input point's term moves every point it feeds, so
//!   in σ_dressed and σ_bare they are one fully correlated source per input point
//!   (δy = K⁻¹ δσ_obs with the response matrix K), grouped for reporting.
//! - `luminosity_scale`, `efficiency` and user-declared relative terms: a common scale of
//!   σ_obs, hence the same relative shift of every corrected point (the unfolding is
//!   linear), fully correlated unless the card says otherwise.
//! - `luminosity:<name>` (with a monitor of the luminosity layer, [`MonitorSigma::Layer`]):
//!   each source of that layer's σ_vis budget (`numerical`, `acceptance_width`,
//!   `acceptance_offset`, `rc_scale`, `rc_nonlog`; see [`crate::lumi::predict`]) and the
//!   monitor efficiency, as the relative shift δσ_vis/σ_vis of σ_obs at each point,
//!   propagated to σ_dressed as δy = K⁻¹ δσ_obs (a uniform relative shift stays uniform, as
//!   for `luminosity_scale`).
//! - `beam_energy`: every energy shifted by ±δE, the scan unfolded again, symmetric shift
//!   of the corrected values at their points (the correction-factor effect; the energy
//!   uncertainty itself is reported with √s). With a monitor of the luminosity layer the
//!   same δE moves σ_vis: that shift of σ_obs is part of this source (in σ_obs, and through
//!   K⁻¹ in σ_dressed, added to the correction-factor effect).
//! - `energy_spread`: every spread scaled by 1 ± its relative uncertainty, unfolded again.
//! - `radiator:<name>`: each alternative radiator, unfolded again, shift = alternative −
//!   nominal (the scheme spread, a theory uncertainty).
//! - `vp:<region>`: the hadronic VP with one R-model region at +1σ, through the VP factor
//!   of σ_bare (the dressed values do not depend on it beyond the template's shape); with a
//!   monitor of the luminosity layer with full VP, also through the monitor's σ_vis (in
//!   σ_obs, σ_dressed and σ_bare, coherently with the VP-factor shift).

use super::ScanError;
use super::data::{LuminosityInput, ScanPoint};
use super::forward::ForwardChain;
use super::shape::{ShapeModel, TemplateResonance};
use super::unfold::{UnfoldSettings, unfold};
use crate::budget::{Budget, Correlation, Kind, symmetric_shift};
use crate::isr::{Order, Scheme};
use crate::lumi::{Monitor, Prediction};
use crate::process::CrossSection;
use crate::vp::Polarisation;
use rayon::prelude::*;
use std::sync::Arc;

/// A user-declared relative uncertainty of σ_obs.
#[derive(Debug, Clone, PartialEq)]
pub struct RelativeTerm {
    pub name: String,
    pub rel: f64,
    pub correlation: Correlation,
}

/// The visible cross-section of the luminosity monitor, for rows with monitor counts.
#[derive(Clone)]
pub enum MonitorSigma {
    /// A given σ_vis(s) (e.g. [`InverseS`] from `visible_sigma_times_s_nb_gev2`), with no
    /// budget of its own beyond `luminosity_scale`.
    Fixed(Arc<dyn CrossSection + Send>),
    /// The luminosity layer: σ_vis in the monitor's acceptance with radiation and VP as its
    /// card says, and the layer's budget (theory, VP, geometry, beam energy, efficiency).
    Layer(Arc<Monitor>),
}

/// Where each point's luminosity comes from.
#[derive(Clone)]
pub struct LuminositySource {
    /// The visible cross-section of the luminosity monitor, for rows with Bhabha counts
    /// (`None`: such rows are an error).
    pub visible: Option<MonitorSigma>,
    /// A one-line description of `visible` for provenance.
    pub describe: String,
}

/// One budget source of the luminosity monitor, as a relative shift of σ_obs per point.
#[derive(Debug, Clone, PartialEq)]
pub struct LuminosityTerm {
    /// The name in the scan budget (see [`scan_source_name`]).
    pub name: String,
    pub correlation: Correlation,
    /// δσ_obs/σ_obs at each point (0 where the luminosity is given). σ_obs ∝ ε_mon·σ_vis,
    /// so a σ_vis shift δσ moves σ_obs by +δσ/σ_vis.
    pub rel: Vec<f64>,
}

/// The luminosity of every point of a scan, with the monitor's budget.
#[derive(Debug, Clone, PartialEq)]
pub struct ScanLuminosity {
    /// (L, δL_stat) per point, nb⁻¹; δL_stat from the monitor counts (0 when L is given).
    pub values: Vec<(f64, f64)>,
    /// The monitor's σ_vis used at each point, nb (None where L is given).
    pub sigma_vis_nb: Vec<Option<f64>>,
    /// The luminosity layer's budget sources (empty for a fixed σ_vis or given L).
    pub terms: Vec<LuminosityTerm>,
}

/// The scan-budget name of a source of the luminosity layer's budget ([`crate::lumi::predict`]).
///
/// Two of them are the same physical cause as a scan source and share its name, so that
/// their shifts add coherently: `beam_energy` (one centre-of-mass energy uncertainty moves
/// σ_vis and the correction factors together) and `vp_<region>` → `vp:<region>` (one R-model
/// region at +1σ moves the monitor's σ_vis and the VP factor of σ_bare). The others are
/// `luminosity:<name>`.
pub fn scan_source_name(lumi_name: &str) -> String {
    if lumi_name == "beam_energy" {
        lumi_name.to_string()
    } else if let Some(region) = lumi_name.strip_prefix("vp_") {
        format!("vp:{region}")
    } else {
        format!("luminosity:{lumi_name}")
    }
}

impl LuminositySource {
    /// The luminosity of every point. A monitor of the luminosity layer is evaluated once
    /// per distinct energy of the rows with monitor counts (in parallel).
    ///
    /// # Errors
    /// Bhabha counts without a monitor, a monitor prediction that fails, a non-positive σ_vis.
    pub fn evaluate(&self, data: &[ScanPoint]) -> Result<ScanLuminosity, ScanError> {
        let mut energies: Vec<f64> = data
            .iter()
            .filter(|p| matches!(p.luminosity, LuminosityInput::Bhabha { .. }))
            .map(|p| p.sqrt_s_gev)
            .collect();
        energies.sort_by(f64::total_cmp);
        energies.dedup();
        let n = data.len();
        let mut out = ScanLuminosity {
            values: Vec::with_capacity(n),
            sigma_vis_nb: Vec::with_capacity(n),
            terms: Vec::new(),
        };
        let predictions: Vec<Prediction> = match (&self.visible, energies.is_empty()) {
            (_, true) => Vec::new(),
            (None, false) => {
                return Err(ScanError::Model(
                    "the data give Bhabha counts but the card has no luminosity monitor; \
                     allowed: [luminosity.monitor] (a luminosity run card inline), \
                     luminosity.monitor_card (its file) or \
                     luminosity.visible_sigma_times_s_nb_gev2"
                        .into(),
                ));
            }
            (Some(MonitorSigma::Fixed(_)), false) => Vec::new(),
            (Some(MonitorSigma::Layer(m)), false) => energies
                .par_iter()
                .map(|&e| {
                    m.predict(e).map_err(|err| {
                        ScanError::Model(format!("luminosity monitor at sqrt_s_gev = {e}: {err}"))
                    })
                })
                .collect::<Result<_, _>>()?,
        };
        let sigma_at = |e: f64| -> f64 {
            match &self.visible {
                Some(MonitorSigma::Fixed(vis)) => vis.sigma_nb(e * e),
                _ => {
                    predictions[energies.partition_point(|&x| x < e)]
                        .sigma
                        .sigma_nb
                }
            }
        };
        for p in data {
            match p.luminosity {
                LuminosityInput::Given { luminosity_nb_inv } => {
                    out.values.push((luminosity_nb_inv, 0.0));
                    out.sigma_vis_nb.push(None);
                }
                LuminosityInput::Bhabha {
                    n_events,
                    n_bkg,
                    efficiency,
                } => {
                    let sigma = sigma_at(p.sqrt_s_gev);
                    if !(sigma > 0.0 && sigma.is_finite()) {
                        return Err(ScanError::Model(format!(
                            "visible luminosity cross-section {sigma} nb at sqrt_s_gev = {}",
                            p.sqrt_s_gev
                        )));
                    }
                    let l = (n_events - n_bkg) / (efficiency * sigma);
                    out.values
                        .push((l, l * n_events.sqrt() / (n_events - n_bkg)));
                    out.sigma_vis_nb.push(Some(sigma));
                }
            }
        }
        if let (Some(MonitorSigma::Layer(m)), Some(first)) = (&self.visible, predictions.first()) {
            let bhabha = |p: &ScanPoint| matches!(p.luminosity, LuminosityInput::Bhabha { .. });
            let eff = m.plan().uncertainty.efficiency_rel;
            if eff > 0.0 {
                out.terms.push(LuminosityTerm {
                    name: "luminosity:efficiency".into(),
                    correlation: Correlation::Full,
                    rel: data
                        .iter()
                        .map(|p| if bhabha(p) { eff } else { 0.0 })
                        .collect(),
                });
            }
            for (k, source) in first.shifts.iter().enumerate() {
                let rel: Vec<f64> = data
                    .iter()
                    .map(|p| {
                        if !bhabha(p) {
                            return 0.0;
                        }
                        let q = &predictions[energies.partition_point(|&x| x < p.sqrt_s_gev)];
                        q.shifts[k].shift_nb / q.sigma.sigma_nb
                    })
                    .collect();
                if rel.iter().any(|r| *r != 0.0) {
                    out.terms.push(LuminosityTerm {
                        name: scan_source_name(&source.name),
                        correlation: source.correlation,
                        rel,
                    });
                }
            }
        }
        Ok(out)
    }
}

/// A fixed visible cross-section that scales as 1/s: σ_vis(s) = C/s, C in nb GeV² (a
/// Born-level Bhabha acceptance at fixed angles scales so).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InverseS {
    pub nb_gev2: f64,
}

impl CrossSection for InverseS {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.nb_gev2 / s_gev2
    }
}

/// Everything the correction needs besides the data: the validated plan of a run card.
#[derive(Clone)]
pub struct ScanPlan {
    pub chain: ForwardChain,
    /// The dressed continuum of the process (template φ₀; the model below the lowest point).
    pub continuum: Arc<dyn CrossSection + Send>,
    /// The vacuum polarisation whose factor |1 − Π|⁻² separates dressed from bare.
    pub vp: Arc<dyn Polarisation>,
    pub resonances: Vec<TemplateResonance>,
    pub settings: UnfoldSettings,
    pub luminosity: LuminositySource,
    /// Relative, fully correlated uncertainty of the luminosity scale (theory, geometry).
    pub luminosity_scale_rel: f64,
    /// Relative, fully correlated uncertainty of the efficiencies.
    pub efficiency_rel: f64,
    pub relative_terms: Vec<RelativeTerm>,
    /// Beam (centre-of-mass) energy uncertainty, MeV, common to all points.
    pub energy_unc_mev: f64,
    /// The spread for rows that give none, MeV.
    pub energy_spread_mev: f64,
    /// Relative uncertainty of every spread.
    pub energy_spread_rel: f64,
    /// Alternative radiators whose difference to the nominal is a budget source.
    pub alternative_radiators: Vec<Scheme>,
    /// Varied VP models (name, model): each moves σ_bare through the VP factor.
    pub vp_variations: Vec<(String, Arc<dyn Polarisation>)>,
}

impl ScanPlan {
    /// The spread of a data point (its own, else the card's), once the point is known to be
    /// observable: the cuts must leave a final state at its energy.
    ///
    /// # Errors
    /// A point at or below the card's minimum mass, or a spread too wide there.
    pub fn spread_at(&self, p: &ScanPoint) -> Result<f64, ScanError> {
        self.chain.check_energy(p.sqrt_s_gev).map_err(|e| {
            ScanError::Model(format!(
                "data point: {e}; allowed: points above radiation.min_mass_gev"
            ))
        })?;
        p.spread_mev(self.energy_spread_mev)
    }
}

/// One corrected point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CorrectedPoint {
    pub sqrt_s_gev: f64,
    pub luminosity_nb_inv: f64,
    pub energy_spread_mev: f64,
    pub sigma_obs_nb: f64,
    pub one_plus_delta: f64,
    pub sigma_dressed_nb: f64,
    pub vp_factor: f64,
    pub sigma_born_nb: f64,
}

/// The corrected scan and its budgets.
#[derive(Debug, Clone)]
pub struct CorrectedScan {
    pub points: Vec<CorrectedPoint>,
    pub obs: Budget,
    pub dressed: Budget,
    pub born: Budget,
    pub iterations: usize,
    pub last_change: f64,
    /// max |σ_obs\[L\](sᵢ) − σ_obs,ᵢ|/σ_obs,ᵢ with the converged line shape L pushed through
    /// the chain by the response matrix of the higher rules (the fast paths' error estimate
    /// for L; rows outside the fast paths come from the chain itself either way): checks the
    /// response matrix the iteration and the covariance rely on.
    pub response_residual: f64,
}

/// Largest relative miss of the converged line shape through the chain: far below any
/// statistical precision of a scan, far above the quadratures' ~1e-8 (common practice, no
/// source).
const RESPONSE_RESIDUAL_MAX: f64 = 1e-6;

fn budget_err(e: crate::budget::BudgetError) -> ScanError {
    ScanError::Model(format!("budget: {e}"))
}

/// Correct a measured scan.
///
/// # Errors
/// Bad luminosity inputs, a template the points cannot fit, an unfolding that does not
/// converge (for the nominal or any varied chain).
pub fn correct_scan(plan: &ScanPlan, data: &[ScanPoint]) -> Result<CorrectedScan, ScanError> {
    let n = data.len();
    let luminosity = plan.luminosity.evaluate(data)?;
    let lumi = &luminosity.values;
    let energies: Vec<f64> = data.iter().map(|p| p.sqrt_s_gev).collect();
    let spread = data
        .iter()
        .map(|p| plan.spread_at(p))
        .collect::<Result<Vec<f64>, _>>()?;
    let obs: Vec<f64> = data
        .iter()
        .zip(lumi)
        .map(|(p, (l, _))| (p.n_events - p.n_bkg) / (p.efficiency * l))
        .collect();
    let obs_stat: Vec<f64> = data
        .iter()
        .zip(lumi)
        .map(|(p, (l, _))| p.n_events.sqrt() / (p.efficiency * l))
        .collect();
    let obs_lumi_stat: Vec<f64> = obs
        .iter()
        .zip(lumi)
        .map(|(o, (l, dl))| o * dl / l)
        .collect();
    let weights: Vec<f64> = obs_stat.iter().map(|d| 1.0 / (d * d)).collect();

    let unfold_with = |chain: &ForwardChain, e: &[f64], w: &[f64]| {
        let model = ShapeModel::new(
            plan.continuum.clone(),
            plan.resonances.clone(),
            e.to_vec(),
            &weights,
        )?;
        unfold(chain, &model, w, &obs, plan.settings).map(|u| (u, model))
    };
    let (nominal, model) = unfold_with(&plan.chain, &energies, &spread)?;
    let y = &nominal.sigma_dressed_nb;

    // The response matrix, its inverse, and the check of the converged line shape with the
    // fast paths' higher rules (their error estimate, for this shape).
    let k = &nominal.response;
    let kinv = k
        .inverse()
        .ok_or_else(|| ScanError::Model("the response matrix of the scan is singular".into()))?;
    let through_chain = plan
        .chain
        .response_reusing(&model, &spread, Order::High, k)
        .apply(y);
    let response_residual = through_chain
        .iter()
        .zip(&obs)
        .map(|(a, o)| (a / o - 1.0).abs())
        .fold(0.0, f64::max);
    if response_residual.is_nan() || response_residual >= RESPONSE_RESIDUAL_MAX {
        return Err(ScanError::Model(format!(
            "the converged line shape reproduces the observed cross-sections only to \
             {response_residual:.2e} relative with the higher-order rules (allowed below \
             {RESPONSE_RESIDUAL_MAX:e}): the response matrix's quadrature is not trustworthy here"
        )));
    }

    let vp_factor: Vec<f64> = energies
        .iter()
        .map(|e| plan.vp.s_channel_factor(e * e).norm_sqr())
        .collect();
    let mut b_obs = Budget::new(n);
    let mut b_dressed = Budget::new(n);
    let statistical = [("stat", &obs_stat), ("luminosity_stat", &obs_lumi_stat)];
    for (group, delta) in statistical {
        if delta.iter().all(|d| *d == 0.0) {
            continue;
        }
        b_obs
            .add_in_group(
                group,
                group,
                Kind::Statistical,
                Correlation::None,
                delta.clone(),
            )
            .map_err(budget_err)?;
        for (j, dj) in delta.iter().enumerate() {
            let shifts = (0..n).map(|i| kinv.get(i, j) * dj).collect();
            b_dressed
                .add_in_group(
                    format!("{group}[{j}]"),
                    group,
                    Kind::Statistical,
                    Correlation::Full,
                    shifts,
                )
                .map_err(budget_err)?;
        }
    }
    let mut scales = vec![
        (
            "luminosity_scale".to_string(),
            plan.luminosity_scale_rel,
            Correlation::Full,
        ),
        (
            "efficiency".to_string(),
            plan.efficiency_rel,
            Correlation::Full,
        ),
    ];
    scales.extend(
        plan.relative_terms
            .iter()
            .map(|t| (t.name.clone(), t.rel, t.correlation)),
    );
    for (name, rel, corr) in scales.into_iter().filter(|s| s.1 > 0.0) {
        b_obs
            .add_relative(&name, corr, rel, &obs)
            .map_err(budget_err)?;
        b_dressed
            .add_relative(&name, corr, rel, y)
            .map_err(budget_err)?;
    }
    // The luminosity layer's sources: a relative shift of σ_obs per point, through the
    // unfolding as δy = K⁻¹ δσ_obs (for a uniform shift that is the same relative shift
    // of every corrected point, like luminosity_scale). The monitor's beam-energy term is
    // held back to join the scan's own beam_energy source.
    let mut lumi_energy: Option<Vec<f64>> = None;
    for t in &luminosity.terms {
        let delta: Vec<f64> = obs.iter().zip(&t.rel).map(|(o, r)| o * r).collect();
        b_obs
            .add(t.name.clone(), t.correlation, delta.clone())
            .map_err(budget_err)?;
        let through = |columns: std::ops::Range<usize>| -> Vec<f64> {
            let mut d = vec![0.0; n];
            for j in columns {
                for (i, di) in d.iter_mut().enumerate() {
                    *di += kinv.get(i, j) * delta[j];
                }
            }
            d
        };
        match t.correlation {
            Correlation::Full if t.name == "beam_energy" => {
                lumi_energy = Some(through(0..n));
            }
            Correlation::Full => b_dressed
                .add(t.name.clone(), Correlation::Full, through(0..n))
                .map_err(budget_err)?,
            Correlation::None => {
                for j in (0..n).filter(|&j| delta[j] != 0.0) {
                    b_dressed
                        .add_in_group(
                            format!("{}[{j}]", t.name),
                            t.name.clone(),
                            Kind::Systematic,
                            Correlation::Full,
                            through(j..j + 1),
                        )
                        .map_err(budget_err)?;
                }
            }
        }
    }
    if plan.energy_unc_mev > 0.0 {
        let d = plan.energy_unc_mev * 1e-3;
        let up: Vec<f64> = energies.iter().map(|e| e + d).collect();
        let down: Vec<f64> = energies.iter().map(|e| e - d).collect();
        let (u, _) = unfold_with(&plan.chain, &up, &spread)?;
        let (l, _) = unfold_with(&plan.chain, &down, &spread)?;
        let shifts = (0..n)
            .map(|i| {
                symmetric_shift(u.sigma_dressed_nb[i], l.sigma_dressed_nb[i])
                    + lumi_energy.as_ref().map_or(0.0, |m| m[i])
            })
            .collect();
        b_dressed
            .add("beam_energy", Correlation::Full, shifts)
            .map_err(budget_err)?;
    } else if let Some(m) = lumi_energy {
        b_dressed
            .add("beam_energy", Correlation::Full, m)
            .map_err(budget_err)?;
    }
    if plan.energy_spread_rel > 0.0 && spread.iter().any(|w| *w > 0.0) {
        let scaled = |f: f64| spread.iter().map(|w| w * f).collect::<Vec<_>>();
        let (u, _) = unfold_with(
            &plan.chain,
            &energies,
            &scaled(1.0 + plan.energy_spread_rel),
        )?;
        let (l, _) = unfold_with(
            &plan.chain,
            &energies,
            &scaled(1.0 - plan.energy_spread_rel),
        )?;
        let shifts = (0..n)
            .map(|i| symmetric_shift(u.sigma_dressed_nb[i], l.sigma_dressed_nb[i]))
            .collect();
        b_dressed
            .add("energy_spread", Correlation::Full, shifts)
            .map_err(budget_err)?;
    }
    for &alt in &plan.alternative_radiators {
        let chain = plan.chain.with_scheme(alt);
        let (a, _) = unfold_with(&chain, &energies, &spread)?;
        let shifts = (0..n).map(|i| a.sigma_dressed_nb[i] - y[i]).collect();
        b_dressed
            .add(format!("radiator:{}", alt.key()), Correlation::Full, shifts)
            .map_err(budget_err)?;
    }
    // σ_bare = σ_dressed/vp_factor: every dressed shift divided by the point's factor; a
    // VP variation also moves the factor itself, added to the dressed shift of the same
    // name when the luminosity monitor's σ_vis carries that variation too.
    let mut vp_shifts: Vec<(String, Vec<f64>)> = plan
        .vp_variations
        .iter()
        .map(|(name, vp)| {
            let shifts = (0..n)
                .map(|i| {
                    let f = vp.s_channel_factor(energies[i] * energies[i]).norm_sqr();
                    y[i] / f - y[i] / vp_factor[i]
                })
                .collect();
            (name.clone(), shifts)
        })
        .collect();
    let mut b_born = Budget::new(n);
    for s in b_dressed.sources() {
        let mut shifts: Vec<f64> = s
            .shifts
            .iter()
            .zip(&vp_factor)
            .map(|(d, f)| d / f)
            .collect();
        if let Some(k) = vp_shifts.iter().position(|(name, _)| *name == s.name) {
            let (_, factor) = vp_shifts.remove(k);
            shifts.iter_mut().zip(factor).for_each(|(a, b)| *a += b);
        }
        b_born
            .add_in_group(
                s.name.clone(),
                s.group.clone(),
                s.kind,
                s.correlation,
                shifts,
            )
            .map_err(budget_err)?;
    }
    for (name, shifts) in vp_shifts {
        b_born
            .add(name, Correlation::Full, shifts)
            .map_err(budget_err)?;
    }
    let points = (0..n)
        .map(|i| CorrectedPoint {
            sqrt_s_gev: energies[i],
            luminosity_nb_inv: lumi[i].0,
            energy_spread_mev: spread[i],
            sigma_obs_nb: obs[i],
            one_plus_delta: nominal.one_plus_delta[i],
            sigma_dressed_nb: y[i],
            vp_factor: vp_factor[i],
            sigma_born_nb: y[i] / vp_factor[i],
        })
        .collect();
    Ok(CorrectedScan {
        points,
        obs: b_obs,
        dressed: b_dressed,
        born: b_born,
        iterations: nominal.iterations,
        last_change: nominal.last_change,
        response_residual,
    })
}
