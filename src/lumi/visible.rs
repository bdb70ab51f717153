//! Visible cross-sections: a Born process, dressed by VP at amplitude level, radiated by
//! structure functions on the incoming (and, for bare tracks, outgoing) legs, inside an
//! [`Acceptance`].
//!
//! σ_vis(s) = ∫dz₁ dz₂ D(z₁, Q²) D(z₂, Q²) ∫_{A(z₁,z₂)} dc (dσ̂/dc)(z₁z₂s, c) · W_FSR(c)
//!
//! (the structure-function form of physics notes §4; Kuraev–Fadin 1985, Nicrosini–Trentadue
//! 1987), with A(z₁, z₂) the accepted intervals of the hard angle after the boost
//! ([`Acceptance::intervals`]) and, for bare tracks, W_FSR = Π_i P(y_i E_i ≥ E_min), where
//! P is the closed-form cumulative of D on the outgoing leg (collinear photons leave the
//! direction unchanged, so only the energy cut sees them). Calorimetric leptons have W = 1.
//!
//! Numerics: each beam's z is mapped to t = (1 − z)^(β/2), which removes the soft
//! singularity; the t range is cut into panels at fixed z values where the cuts bend the
//! integrand, and integrated with fixed 6-point Gauss–Legendre rules per panel. The panels
//! are halved until two successive results agree to the requested precision; their
//! difference is the error estimate. The hard-angle integral is closed form without VP and
//! FSR weights, else a fixed 16-point rule after the substitution that flattens dσ̂/dc
//! (u = ln(1 − c) for Bhabha, c = tanh η for γγ).

use super::acceptance::{Acceptance, FinalState};
use super::structure_function::StructureFunction;
use crate::constants::{M_E_GEV, M_MU_GEV};
use crate::error::ParamError;
use crate::numeric::{CubicSpline, GaussLegendre, Integral, Tolerance, integrate};
use crate::process::{Angular, Bhabha, CosRange, Diphoton, FermionPair, WidthScheme, ZExchange};
use crate::vp::Polarisation;
use num_complex::Complex64;
use rayon::prelude::*;
use std::sync::atomic::{AtomicUsize, Ordering};

/// The normalisation channel.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Channel {
    /// Bhabha scattering e⁺e⁻ → e⁺e⁻ (first particle: the electron).
    Bhabha,
    /// e⁺e⁻ → γγ (identical photons: symmetric windows only).
    Diphoton,
    /// e⁺e⁻ → μ⁺μ⁻ (first particle: μ⁻).
    MuonPair,
}

impl Channel {
    pub fn key(self) -> &'static str {
        match self {
            Channel::Bhabha => "ee",
            Channel::Diphoton => "gg",
            Channel::MuonPair => "mumu",
        }
    }

    /// The production threshold in √s, GeV: twice the final lepton mass (0 for photons).
    pub fn threshold_gev(self) -> f64 {
        self.final_mass_gev().map_or(0.0, |m| 2.0 * m)
    }

    /// The final lepton mass (None for photons).
    fn final_mass_gev(self) -> Option<f64> {
        match self {
            Channel::Bhabha => Some(M_E_GEV),
            Channel::MuonPair => Some(M_MU_GEV),
            Channel::Diphoton => None,
        }
    }
}

/// The scale Q² of the structure functions.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// |t̄|: the Born-weighted geometric mean of |t| = s(1 − c)/2 over the acceptance
    /// (the natural choice for t-channel-dominated Bhabha scattering).
    MomentumTransfer,
    /// s (the natural choice for annihilation channels).
    S,
}

impl Scale {
    pub fn key(self) -> &'static str {
        match self {
            Scale::MomentumTransfer => "t",
            Scale::S => "s",
        }
    }

    /// The other choice: the scale variation of the theory budget.
    pub fn other(self) -> Scale {
        match self {
            Scale::MomentumTransfer => Scale::S,
            Scale::S => Scale::MomentumTransfer,
        }
    }
}

/// Errors of a visible cross-section.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum VisibleError {
    #[error(transparent)]
    Param(#[from] ParamError),
    #[error(
        "identical photons need the same polar window for both particles (process gg); got two different windows"
    )]
    AsymmetricPhotons,
    #[error(
        "e_min_frac = 0 with radiation on: without an energy cut σ_vis grows without bound as both beams radiate; allowed: 0 < e_min_frac < 1 (or born_only)"
    )]
    NoEnergyCut,
    #[error(
        "sqrt_s_gev = {sqrt_s_gev} is at or below the {channel} threshold {threshold_gev} GeV, where σ_vis = 0 (nothing to normalise to); allowed: sqrt_s_gev > {threshold_gev} GeV"
    )]
    BelowThreshold {
        channel: &'static str,
        sqrt_s_gev: f64,
        threshold_gev: f64,
    },
}

/// How σ_vis is computed: radiation on or off, the scale, the precision, Z exchange.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// ISR (and FSR for bare tracks) through structure functions.
    pub radiation: bool,
    pub scale: Scale,
    /// Target relative precision of σ_vis (the panels are halved until it is met).
    pub precision: f64,
    /// Z exchange in the Born process (Bhabha and μμ).
    pub z_exchange: bool,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            radiation: true,
            scale: Scale::MomentumTransfer,
            precision: 1e-4,
            z_exchange: false,
        }
    }
}

/// A visible cross-section with its numerical error.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SigmaVis {
    pub sigma_nb: f64,
    /// Estimated absolute numerical error (difference of the last two panel refinements).
    pub error_nb: f64,
    /// Whether the error estimate met the requested precision.
    pub converged: bool,
    /// Hard-process evaluations (pairs of (z₁, z₂) nodes).
    pub evaluations: usize,
    /// The structure-function scale used, GeV² (0 without radiation).
    pub q2_gev2: f64,
    /// The ISR exponent β at that scale (0 without radiation).
    pub beta: f64,
}

/// Points of the hard-angle rule after its substitution.
const ANGLE_POINTS: usize = 8;
/// Knots per unit of ln|t| in the table of the t-channel VP factor.
const VP_KNOTS_PER_E: f64 = 12.0;

enum Hard {
    Ee(Bhabha),
    Gg(Diphoton),
    Mumu(FermionPair),
}

/// A visible cross-section calculator for one channel, acceptance and VP choice.
pub struct Visible<'a> {
    channel: Channel,
    hard: Hard,
    acceptance: Acceptance,
    vp: Option<&'a dyn Polarisation>,
    settings: Settings,
    angle_rule: GaussLegendre,
}

/// What the hard-angle integral needs at one s.
struct Point<'v> {
    s: f64,
    vp_t: Option<VpTable<'v>>,
    fsr: Option<StructureFunction>,
}

/// 1/(1 − Π(t)) tabulated in ln|t| (spacelike Π is smooth: a spline is accurate), with
/// direct evaluation outside the table.
struct VpTable<'v> {
    vp: &'v dyn Polarisation,
    spline: CubicSpline,
    range: (f64, f64),
}

impl<'v> VpTable<'v> {
    fn new(vp: &'v dyn Polarisation, t_abs_min: f64, t_abs_max: f64) -> Self {
        let (x0, x1) = (t_abs_min.ln(), t_abs_max.ln());
        let n = (((x1 - x0) * VP_KNOTS_PER_E).ceil() as usize).max(8);
        let xs: Vec<f64> = (0..=n)
            .map(|i| x0 + (x1 - x0) * i as f64 / n as f64)
            .collect();
        let ys = xs.iter().map(|&x| vp.t_channel_factor(-x.exp())).collect();
        let spline = CubicSpline::new(xs, ys).expect("increasing finite knots");
        VpTable {
            vp,
            spline,
            range: (x0, x1),
        }
    }

    fn factor(&self, t: f64) -> f64 {
        let x = (-t).ln();
        if x >= self.range.0 && x <= self.range.1 {
            self.spline.eval(x)
        } else {
            self.vp.t_channel_factor(t)
        }
    }
}

impl<'a> Visible<'a> {
    /// # Errors
    /// Asymmetric windows for γγ; radiation on without an energy cut.
    pub fn new(
        channel: Channel,
        acceptance: Acceptance,
        vp: Option<&'a dyn Polarisation>,
        settings: Settings,
    ) -> Result<Self, VisibleError> {
        if channel == Channel::Diphoton && !acceptance.is_symmetric() {
            return Err(VisibleError::AsymmetricPhotons);
        }
        if settings.radiation && acceptance.e_min_frac() <= 0.0 {
            return Err(VisibleError::NoEnergyCut);
        }
        ParamError::check_open("precision", settings.precision, 1e-9, 0.1)?;
        let z = settings
            .z_exchange
            .then(|| ZExchange::standard(WidthScheme::Running));
        let hard = match (channel, z) {
            (Channel::Bhabha, None) => Hard::Ee(Bhabha::new(CosRange::FULL)),
            (Channel::Bhabha, Some(z)) => Hard::Ee(Bhabha::new(CosRange::FULL).with_z(z)),
            (Channel::MuonPair, None) => Hard::Mumu(FermionPair::muon()),
            (Channel::MuonPair, Some(z)) => Hard::Mumu(FermionPair::muon().with_z(z)),
            (Channel::Diphoton, _) => Hard::Gg(Diphoton::new(CosRange::FULL)),
        };
        Ok(Visible {
            channel,
            hard,
            acceptance,
            vp,
            settings,
            angle_rule: GaussLegendre::new(ANGLE_POINTS),
        })
    }

    pub fn channel(&self) -> Channel {
        self.channel
    }

    pub fn acceptance(&self) -> &Acceptance {
        &self.acceptance
    }

    pub fn settings(&self) -> &Settings {
        &self.settings
    }

    /// The same calculator with another acceptance, VP or settings (for budget variations).
    ///
    /// # Errors
    /// As [`Visible::new`].
    pub fn varied(
        &self,
        acceptance: Acceptance,
        vp: Option<&'a dyn Polarisation>,
        settings: Settings,
    ) -> Result<Self, VisibleError> {
        Visible::new(self.channel, acceptance, vp, settings)
    }

    /// σ_vis in nb at s (GeV²); 0 at or below the channel's threshold.
    ///
    /// # Errors
    /// A structure-function scale below e·m² (energies far too low for the leading log).
    pub fn sigma_vis(&self, s: f64) -> Result<SigmaVis, VisibleError> {
        if s <= self.channel.threshold_gev().powi(2) {
            // Radiation only lowers ŝ: nothing is produced at or below threshold (and the
            // |t̄| scale, a mean over a vanishing σ, is not defined there).
            return Ok(SigmaVis {
                sigma_nb: 0.0,
                error_nb: 0.0,
                converged: true,
                evaluations: 0,
                q2_gev2: 0.0,
                beta: 0.0,
            });
        }
        let born_point = Point {
            s,
            vp_t: None,
            fsr: None,
        };
        let q2 = match self.settings.scale {
            Scale::S => s,
            Scale::MomentumTransfer => self.mean_abs_t(&born_point),
        };
        let vp_t = match (self.vp, &self.hard) {
            (Some(vp), Hard::Ee(_)) => {
                let (lo, hi) = self.cos_window();
                // |t̂| = ŝ(1 − c)/2 with ŝ down to (e_min)²s at worst, c up to the window edge.
                let floor = self.acceptance.e_min_frac().max(1e-3).powi(2);
                Some(VpTable::new(
                    vp,
                    floor * s * 0.5 * (1.0 - hi),
                    s * 0.5 * (1.0 - lo),
                ))
            }
            _ => None,
        };
        if !self.settings.radiation {
            let point = Point { s, vp_t, fsr: None };
            return Ok(SigmaVis {
                sigma_nb: self.hard_integral(&point, 1.0, 1.0),
                error_nb: 0.0,
                converged: true,
                evaluations: 1,
                q2_gev2: 0.0,
                beta: 0.0,
            });
        }
        let isr = StructureFunction::new(q2, M_E_GEV)?;
        let fsr = match (self.acceptance.final_state(), self.channel.final_mass_gev()) {
            (FinalState::BareTrack, Some(m)) => Some(StructureFunction::new(q2, m)?),
            _ => None,
        };
        let point = Point { s, vp_t, fsr };
        // Absolute tolerances scaled by the Born σ_vis (σ_vis is within ~20% of it): the
        // outer panels share half the target, each inner integral gets a tenth of it.
        let scale = self.hard_integral(&born_point, 1.0, 1.0);
        let target = self.settings.precision * scale;
        let edges = self.t_edges(&isr);
        let outer_tol = Tolerance {
            rel: 0.0,
            abs: target / (edges.len() - 1) as f64,
        };
        let inner_tol = Tolerance {
            rel: 0.0,
            abs: 0.5 * target,
        };
        let evaluations = AtomicUsize::new(0);
        let beam = |t: f64, f: &dyn Fn(f64) -> f64| {
            let z = isr.z_of_t(t);
            if z > 0.0 {
                isr.dt_weight(t) * f(z)
            } else {
                0.0
            }
        };
        let panels: Vec<Integral> = edges
            .par_windows(2)
            .map(|w| {
                integrate(
                    |t1| {
                        beam(t1, &|z1| {
                            let inner = integrate(
                                |t2| beam(t2, &|z2| self.hard_integral(&point, z1, z2)),
                                0.0,
                                1.0,
                                &edges,
                                inner_tol,
                            );
                            evaluations.fetch_add(inner.evaluations, Ordering::Relaxed);
                            inner.value
                        })
                    },
                    w[0],
                    w[1],
                    &[],
                    outer_tol,
                )
            })
            .collect();
        let sigma_nb = panels.iter().map(|p| p.value).sum::<f64>();
        let error_nb = panels.iter().map(|p| p.error).sum::<f64>();
        Ok(SigmaVis {
            sigma_nb,
            error_nb,
            converged: panels.iter().all(Integral::converged)
                && error_nb <= self.settings.precision * sigma_nb.abs(),
            evaluations: evaluations.into_inner(),
            q2_gev2: q2,
            beta: isr.beta(),
        })
    }

    /// The Born-level acceptance in c (no radiation), as the widest range of any interval.
    fn cos_window(&self) -> (f64, f64) {
        let iv = self.acceptance.intervals(1.0, 1.0);
        let parts = iv.as_slice();
        (parts[0].0, parts[parts.len() - 1].1)
    }

    /// |t̄| = exp⟨ln(s(1 − c)/2)⟩ weighted by the Born dσ/dc over the Born acceptance.
    fn mean_abs_t(&self, born: &Point) -> f64 {
        let s = born.s;
        let one = Complex64::new(1.0, 0.0);
        let (mut num, mut den) = (0.0, 0.0);
        for &(a, b) in self.acceptance.intervals(1.0, 1.0).as_slice() {
            num += self.angle_integral(a, b, |c| {
                self.dsigma(s, c, one, 1.0) * (0.5 * s * (1.0 - c)).ln()
            });
            den += self.angle_integral(a, b, |c| self.dsigma(s, c, one, 1.0));
        }
        (num / den).exp()
    }

    /// Panel edges in a beam's t = (1 − z)^(β/2), ascending: fixed z where the cuts start
    /// to bite (the energy cut, moderate and soft radiation), so adaptive subdivision starts
    /// from sensible pieces.
    fn t_edges(&self, sf: &StructureFunction) -> Vec<f64> {
        let e = self.acceptance.e_min_frac();
        let mut z_edges = vec![0.0, 0.9, 0.99, 0.999, 1.0];
        z_edges.extend(
            [e, 2.0 * e - 1.0]
                .into_iter()
                .filter(|&z| z > 0.0 && z < 1.0),
        );
        let mut t_edges: Vec<f64> = z_edges.iter().map(|&z| sf.t_of_z(z)).collect();
        t_edges.sort_by(f64::total_cmp);
        t_edges.dedup_by(|a, b| (*a - *b).abs() < 1e-12);
        t_edges
    }

    /// dσ̂/dc in nb at ŝ with the s- and t-channel photon factors.
    fn dsigma(&self, s_hat: f64, c: f64, photon_s: Complex64, photon_t: f64) -> f64 {
        match &self.hard {
            Hard::Ee(b) => b.dsigma_dcos_dressed_nb(s_hat, c, photon_s, photon_t),
            Hard::Gg(g) => g.dsigma_dcos_nb(s_hat, c),
            Hard::Mumu(m) => m.dsigma_dcos_nb(s_hat, c) * photon_s.norm_sqr(),
        }
    }

    /// ∫ₐᵇ f(c) dc with the fixed angle rule after the channel's flattening substitution.
    fn angle_integral<F: Fn(f64) -> f64>(&self, a: f64, b: f64, f: F) -> f64 {
        match self.channel {
            // u = ln(1 − c), dc = −(1 − c) du: the 1/(1 − c)² t-channel peak becomes a
            // smooth exponential in u.
            Channel::Bhabha => self.angle_rule.integrate(
                |u| {
                    let a = u.exp();
                    f(1.0 - a) * a
                },
                (1.0 - b).ln(),
                (1.0 - a).ln(),
            ),
            // c = tanh η, dc = (1 − c²) dη: the 1/(1 − c²) peaks become flat.
            Channel::Diphoton => self.angle_rule.integrate(
                |eta| {
                    let c = eta.tanh();
                    f(c) * (1.0 - c * c)
                },
                a.atanh(),
                b.atanh(),
            ),
            Channel::MuonPair => self.angle_rule.integrate(f, a, b),
        }
    }

    /// ∫ over the accepted hard angles of dσ̂/dc · W_FSR at beam fractions (z₁, z₂).
    fn hard_integral(&self, p: &Point, z1: f64, z2: f64) -> f64 {
        let s_hat = z1 * z2 * p.s;
        let photon_s = match self.vp {
            Some(vp) if self.channel != Channel::Diphoton => vp.s_channel_factor(s_hat),
            _ => Complex64::new(1.0, 0.0),
        };
        let e_min = self.acceptance.e_min_frac();
        let mut total = 0.0;
        for &(a, b) in self.acceptance.intervals(z1, z2).as_slice() {
            total += match (&self.hard, &p.vp_t, &p.fsr) {
                (Hard::Ee(h), None, None) => h.sigma_in_cos_nb(s_hat, a, b),
                (Hard::Gg(h), _, None) => h.sigma_in_cos_nb(s_hat, a, b),
                (Hard::Mumu(h), _, None) => h.sigma_in_cos_nb(s_hat, a, b) * photon_s.norm_sqr(),
                (_, vp_t, fsr) => self.angle_integral(a, b, |c| {
                    let photon_t = vp_t
                        .as_ref()
                        .map_or(1.0, |v| v.factor(-0.5 * s_hat * (1.0 - c)));
                    let w = fsr.map_or(1.0, |d| {
                        let f1 = 0.5 * ((z1 + z2) + (z1 - z2) * c);
                        let f2 = 0.5 * ((z1 + z2) - (z1 - z2) * c);
                        d.keep_at_least(e_min / f1) * d.keep_at_least(e_min / f2)
                    });
                    self.dsigma(s_hat, c, photon_s, photon_t) * w
                }),
            };
        }
        total
    }
}
