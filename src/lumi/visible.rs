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
//! Numerics. The beams' fractions are integrated as τ = z₁z₂ = ŝ/s and the split between
//! them at fixed τ. This order puts every narrow structure of the s-channel photon factor
//! 1/(1 − Π(ŝ)) (J/ψ, Υ: widths ~10⁻⁵ of s) on the one variable τ, where it is a function of
//! τ alone: the hard-angle integral at each node is split into four coefficients,
//! dσ = A + B·Re P + C·Im P + D·|P|² with P = 1/(1 − Π(ŝ)) (dσ is quadratic in the s-channel
//! amplitude), their smooth τ dependence is sampled at the nodes of fixed Gauss–Legendre rules
//! and interpolated, and P(τs) is integrated against that interpolant by adaptive quadrature
//! split at the resonances and thresholds of Π. Without VP the coefficients are not needed.
//!
//! - τ: ε = 1 − τ is mapped to v = ε^β, which absorbs the ε^(β−1) of two soft beams;
//!   pieces break at fixed ε (10⁻³ … 0.64) and where the acceptance changes its structure
//!   (which window, energy or acollinearity bound is active: [`Acceptance::structure`] on a
//!   τ grid, bisected to 10⁻¹³), with nodes clustered quadratically at those kinks (the
//!   acollinearity cut opens like a square root).
//! - the split at fixed τ: each half (z₁ ≥ z₂ and its mirror) runs over the loss x = 1 − z
//!   of the harder beam from 0 to 1 − √τ, mapped to t = x^(β/2) (the soft substitution),
//!   broken at fixed fractions of its range and at the acceptance kinks found at that τ.
//! - both directions use the same rule size; successive sizes 6, 10, 16, … are compared until
//!   two agree to the requested precision; their difference (plus the adaptive P integral's
//!   estimate) is the error estimate.
//!
//! The hard-angle integral is closed form without VP and FSR weights, else a fixed 8-point
//! rule after the substitution that flattens dσ̂/dc (u = ln(1 − c) for Bhabha, c = tanh η
//! for γγ).

use super::acceptance::{Acceptance, EMPTY, FinalState};
use super::pieces::{Piece, UnitRule, changes, pieces};
use super::structure_function::StructureFunction;
use crate::constants::{M_E_GEV, M_MU_GEV};
use crate::error::{ParamError, shown};
use crate::numeric::{CubicSpline, GaussLegendre, Tolerance, integrate};
use crate::process::{
    Angular, Bhabha, CosRange, Diphoton, Feature, FermionPair, WidthScheme, ZExchange,
};
use crate::vp::Polarisation;
use num_complex::Complex64;
use rayon::prelude::*;
use std::sync::OnceLock;

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
    #[error(
        "sqrt_s_gev = {} is too low for the leading-log structure functions: their scale (|t| or s, as the card's scale says) is Q² = {} GeV² here; allowed: {allowed} (a higher energy or wider angles)",
        shown(*sqrt_s_gev),
        shown(*q2_gev2)
    )]
    ScaleTooLow {
        sqrt_s_gev: f64,
        q2_gev2: f64,
        allowed: String,
    },
    #[error(
        "uncertainty.sqrt_s_gev = {} is not allowed at sqrt_s_gev = {sqrt_s_gev}; allowed: ≤ 1% of sqrt_s ({} GeV): an uncertainty of the beam energy, not a range",
        shown(*unc_gev),
        shown(*max_gev)
    )]
    EnergyUncertaintyTooLarge {
        unc_gev: f64,
        sqrt_s_gev: f64,
        max_gev: f64,
    },
}

impl VisibleError {
    /// The energy that cannot be evaluated, when the error is about the energy itself (so
    /// that a caller can name the flag or the file line that gave it).
    pub fn energy_gev(&self) -> Option<f64> {
        match self {
            VisibleError::BelowThreshold { sqrt_s_gev, .. }
            | VisibleError::ScaleTooLow { sqrt_s_gev, .. } => Some(*sqrt_s_gev),
            _ => None,
        }
    }
}

/// How σ_vis is computed: radiation on or off, the scale, the precision, Z exchange.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Settings {
    /// ISR (and FSR for bare tracks) through structure functions.
    pub radiation: bool,
    pub scale: Scale,
    /// Target relative precision of σ_vis (the rule sizes grow until it is met).
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
    /// Estimated absolute numerical error (difference of the last two rule sizes).
    pub error_nb: f64,
    /// Whether the error estimate met the requested precision.
    pub converged: bool,
    /// Hard-process evaluations (hard-angle integrals at one (z₁, z₂)).
    pub evaluations: usize,
    /// The structure-function scale used, GeV² (0 without radiation).
    pub q2_gev2: f64,
    /// The ISR exponent β at that scale (0 without radiation).
    pub beta: f64,
    /// Gauss–Legendre points per piece of the result (0 without radiation): budget
    /// variations are evaluated with the same rule ([`Visible::sigma_vis_with_rule`]).
    pub rule_points: usize,
}

/// Points of the hard-angle rule after its substitution.
const ANGLE_POINTS: usize = 8;
/// Knots per unit of ln|t| in the table of the t-channel VP factor.
const VP_KNOTS_PER_E: f64 = 12.0;
/// Rule sizes tried in turn (points per piece in τ and in the split); each is compared with
/// the one before.
const RULE_POINTS: [usize; 7] = [6, 10, 16, 24, 32, 48, 64];
/// Fixed breakpoints in ε = 1 − τ (where the soft two-beam region gives way to hard radiation).
const EPS_BREAKS: [f64; 5] = [1e-3, 1e-2, 0.04, 0.16, 0.64];
/// Fixed breakpoints of a half split, as fractions of its range in x: geometric, so that the
/// other beam's soft singularity (at about twice the range) stays well outside each piece.
const SPLIT_BREAKS: [f64; 4] = [1.0 / 1024.0, 1.0 / 64.0, 1.0 / 8.0, 0.5];
/// Grid cells per half split on which acceptance kinks are searched (then bisected).
const SPLIT_GRID: usize = 24;
/// Points of the τ grid (uniform in ln(τ/(1 − τ))) on which the acceptance's structure
/// changes are searched, and its ends.
const TAU_GRID: usize = 160;
const TAU_FLOOR: f64 = 1e-7;
const TAU_CEIL: f64 = 1.0 - 1e-9;
/// Breakpoints around a resonance of Π for the adaptive integral over ŝ, in units of its
/// width parameter MΓ.
const PEAK_LADDER: [f64; 6] = [0.0, 1.0, 4.0, 16.0, 64.0, 256.0];

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
    /// The acceptance's structure in τ (independent of s, VP and the structure functions).
    geometry: OnceLock<Geometry>,
}

/// What the hard-angle integral needs at one s.
struct Point<'v> {
    s: f64,
    vp_t: Option<VpTable<'v>>,
    fsr: Option<StructureFunction>,
    /// Whether the s-channel photon factor is split off ([`Visible::coefficients`]).
    split: bool,
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

/// The two halves of the split at fixed τ: the electron's beam the harder one (A) or the
/// positron's (B). Each runs over the loss x = 1 − z of its harder beam, 0 ≤ x ≤ 1 − √τ.
#[derive(Clone, Copy)]
enum Half {
    A,
    B,
}

impl Half {
    /// (z₁, z₂) at loss `x` of the harder beam and loss `w` of the other.
    fn fractions(self, x: f64, w: f64) -> (f64, f64) {
        match self {
            Half::A => (1.0 - x, 1.0 - w),
            Half::B => (1.0 - w, 1.0 - x),
        }
    }
}

/// The range 1 − √τ of a half split at ε = 1 − τ (without rounding at small ε).
fn split_range(eps: f64) -> f64 {
    eps / (1.0 + (1.0 - eps).sqrt())
}

/// The other beam's loss w = 1 − τ/(1 − x) at ε = 1 − τ, from the losses directly.
fn other_loss(eps: f64, x: f64) -> f64 {
    (eps - x) / (1.0 - x)
}

/// The points of a half split's kink search: its range cut into [`SPLIT_GRID`] cells, the
/// last point short of z₁ = z₂ (where the two windows' bounds may tie).
fn split_grid(range: f64) -> Vec<f64> {
    let n = SPLIT_GRID as f64;
    (0..=SPLIT_GRID)
        .map(|j| {
            range
                * if j == SPLIT_GRID {
                    1.0 - 0.5 / n
                } else {
                    j as f64 / n
                }
        })
        .collect()
}

/// Where the acceptance's structure changes as a function of τ = z₁z₂: the lowest accepted τ
/// and the kinks above it. Depends on the acceptance only.
struct Geometry {
    tau_lo: f64,
    kinks: Vec<f64>,
}

impl Geometry {
    fn new(acc: &Acceptance) -> Self {
        // The structure at τ: the codes at both ends of each half (z = 1, where a kink
        // entering the range meets a beam's soft singularity, and z₁ = z₂), or EMPTY when
        // nothing on a fine grid along the halves is accepted. Kinks that meet inside the
        // range only bend Ψ(τ) mildly; the rule comparison sees them.
        let key = |tau: f64| -> [u32; 5] {
            let eps = 1.0 - tau;
            let range = split_range(eps);
            let code = |half: Half, x: f64| {
                let (z1, z2) = half.fractions(x, other_loss(eps, x));
                acc.structure(z1, z2)
            };
            // Short of z₁ = z₂, where the two windows' bounds may tie.
            let mid = range * (1.0 - 1e-3);
            let n = 4 * SPLIT_GRID;
            let any = [Half::A, Half::B].into_iter().any(|half| {
                (0..n)
                    .map(|j| range * j as f64 / n as f64)
                    .chain([mid])
                    .any(|x| code(half, x) != EMPTY)
            });
            if !any {
                return [EMPTY; 5];
            }
            [
                0,
                code(Half::A, 0.0),
                code(Half::A, mid),
                code(Half::B, 0.0),
                code(Half::B, mid),
            ]
        };
        let (q0, q1) = (
            (TAU_FLOOR / (1.0 - TAU_FLOOR)).ln(),
            (TAU_CEIL / (1.0 - TAU_CEIL)).ln(),
        );
        let grid: Vec<f64> = (0..TAU_GRID)
            .map(|i| {
                let q = q0 + (q1 - q0) * i as f64 / (TAU_GRID - 1) as f64;
                1.0 / (1.0 + (-q).exp())
            })
            .collect();
        let found = changes(&grid, key, 1e-13);
        // Nothing is accepted below the first change from an empty key (with windows inside
        // (0°, 180°) a large enough boost always takes both particles out). The key sees the
        // acceptance once it is wider than the grid: the exact edge is the zero of the
        // widest margin along the split, a little lower.
        let tau_lo = match found.first() {
            Some(&first) if key(grid[0]) == [EMPTY; 5] => {
                let mut below = first;
                while below > TAU_FLOOR && widest(acc, below) > 0.0 {
                    below = (below - 0.01 * first).max(TAU_FLOOR);
                }
                let (mut lo, mut hi) = (below, first);
                while hi - lo > 1e-13 {
                    let m = 0.5 * (lo + hi);
                    if widest(acc, m) > 0.0 {
                        hi = m;
                    } else {
                        lo = m;
                    }
                }
                hi
            }
            Some(_) => TAU_FLOOR,
            None => TAU_CEIL,
        };
        let kinks = found.into_iter().filter(|&t| t > tau_lo).collect();
        Geometry { tau_lo, kinks }
    }
}

/// The largest [`Acceptance::width`] along both halves of the split at τ: a grid, then a
/// golden-section search around its best point.
fn widest(acc: &Acceptance, tau: f64) -> f64 {
    let eps = 1.0 - tau;
    let range = split_range(eps);
    let n = 4 * SPLIT_GRID;
    let mut best = f64::NEG_INFINITY;
    for half in [Half::A, Half::B] {
        let w = |x: f64| {
            let (z1, z2) = half.fractions(x, other_loss(eps, x));
            acc.width(z1, z2)
        };
        let step = range / n as f64;
        let j = (0..=n)
            .max_by(|&i, &k| w(i as f64 * step).total_cmp(&w(k as f64 * step)))
            .unwrap_or(0);
        let (mut a, mut b) = (
            (j as f64 - 1.0).max(0.0) * step,
            ((j + 1) as f64 * step).min(range),
        );
        let g = 0.5 * (5f64.sqrt() - 1.0);
        for _ in 0..60 {
            let (c, d) = (b - g * (b - a), a + g * (b - a));
            if w(c) > w(d) {
                b = d;
            } else {
                a = c;
            }
        }
        best = best.max(w(0.5 * (a + b))).max(w(j as f64 * step));
    }
    best
}

/// One radiated σ_vis evaluation at s: the hard process, the beams' structure function and
/// the pieces in v = ε^β.
struct Radiative<'v, 'a> {
    visible: &'v Visible<'a>,
    point: Point<'v>,
    isr: StructureFunction,
    /// The s-channel photon factor's model, when it is split off.
    s_channel: Option<&'a dyn Polarisation>,
    pieces: Vec<Piece>,
    /// Absolute tolerance of each piece's adaptive integral over P(ŝ).
    piece_tol: f64,
}

/// One rule size's σ_vis.
struct Level {
    sigma_nb: f64,
    /// The adaptive integrals' error estimate (the rule's own error is not in it).
    error_nb: f64,
    converged: bool,
    evaluations: usize,
}

impl Radiative<'_, '_> {
    /// ψ(ε) = ε^(1−β)·Ψ(τ), Ψ(τ) = ∫dz₁dz₂ δ(z₁z₂ − τ) D(z₁)D(z₂)·(hard coefficients):
    /// smooth in ε, with the two beams' soft singularities (Ψ ∝ ε^(β−1)) factored out.
    fn psi(&self, eps: f64, rule: &UnitRule) -> ([f64; 4], usize) {
        let beta = self.isr.beta();
        let range = split_range(eps);
        let acc = &self.visible.acceptance;
        let mut total = [0.0; 4];
        let mut evaluations = 0;
        for half in [Half::A, Half::B] {
            let code = |x: f64| {
                let (z1, z2) = half.fractions(x, other_loss(eps, x));
                acc.structure(z1, z2)
            };
            let mut breaks = vec![(0.0, false), (range, false)];
            breaks.extend(SPLIT_BREAKS.iter().map(|f| (f * range, false)));
            breaks.extend(
                changes(&split_grid(range), code, 1e-12 * range)
                    .into_iter()
                    .map(|x| (x, true)),
            );
            // Integrate in t = x^(β/2): D(1 − x)dx = dt_weight(t)dt.
            let in_t = breaks
                .into_iter()
                .map(|(x, k)| (x.powf(0.5 * beta), k))
                .collect();
            for piece in pieces(in_t, 0.0) {
                for (&u, &w) in rule.nodes.iter().zip(&rule.weights) {
                    let (t, dt) = piece.map(u);
                    let x = t.powf(2.0 / beta);
                    let other = other_loss(eps, x);
                    if other <= 0.0 {
                        continue;
                    }
                    let (z1, z2) = half.fractions(x, other);
                    // dz₁dz₂ δ(z₁z₂ − τ) = dx/(1 − x) along the half.
                    let weight = w * dt * self.isr.dt_weight(t) * self.isr.density_at_loss(other)
                        / (1.0 - x);
                    let c = self.visible.coefficients(&self.point, z1, z2);
                    evaluations += 1;
                    for k in 0..4 {
                        total[k] += weight * c[k];
                    }
                }
            }
        }
        let norm = eps.powf(1.0 - beta);
        (total.map(|v| v * norm), evaluations)
    }

    /// The photon factors' weights (1, Re P, Im P, |P|²) at τ.
    fn photon_weights(&self, tau: f64) -> [f64; 4] {
        match self.s_channel {
            Some(vp) => {
                let p = vp.s_channel_factor(tau * self.point.s);
                [1.0, p.re, p.im, p.norm_sqr()]
            }
            None => [1.0, 0.0, 0.0, 0.0],
        }
    }

    /// σ_vis with `n` points per piece.
    fn level(&self, n: usize) -> Level {
        let rule = UnitRule::new(n);
        let beta = self.isr.beta();
        let nodes: Vec<(usize, usize)> = (0..self.pieces.len())
            .flat_map(|p| (0..n).map(move |j| (p, j)))
            .collect();
        let psis: Vec<([f64; 4], usize)> = nodes
            .par_iter()
            .map(|&(p, j)| {
                let (v, _) = self.pieces[p].map(rule.nodes[j]);
                self.psi(v.powf(1.0 / beta), &rule)
            })
            .collect();
        let mut out = Level {
            sigma_nb: 0.0,
            error_nb: 0.0,
            converged: true,
            evaluations: psis.iter().map(|p| p.1).sum(),
        };
        for (p, piece) in self.pieces.iter().enumerate() {
            // h(u) = ψ(v(u))·(dv/du)/β, so that the piece contributes ∫₀¹ Σₖ Pₖ hₖ du.
            let h: Vec<[f64; 4]> = (0..n)
                .map(|j| {
                    let (_, dv) = piece.map(rule.nodes[j]);
                    psis[p * n + j].0.map(|x| x * dv / beta)
                })
                .collect();
            let Some(vp) = self.s_channel else {
                out.sigma_nb += h
                    .iter()
                    .zip(&rule.weights)
                    .map(|(h, w)| w * h[0])
                    .sum::<f64>();
                continue;
            };
            let tau_of = |u: f64| 1.0 - piece.map(u).0.powf(1.0 / beta);
            let (eps_a, eps_b) = (piece.a.powf(1.0 / beta), piece.b.powf(1.0 / beta));
            let s = self.point.s;
            let mut marks = Vec::new();
            for f in vp.features() {
                let taus: Vec<f64> = match *f {
                    Feature::Edge { s_gev2 } => vec![s_gev2 / s],
                    Feature::Peak {
                        s_gev2,
                        m_gamma_gev2,
                    } => PEAK_LADDER
                        .iter()
                        .flat_map(|k| [s_gev2 + k * m_gamma_gev2, s_gev2 - k * m_gamma_gev2])
                        .map(|x| x / s)
                        .collect(),
                };
                for tau in taus {
                    let eps = 1.0 - tau;
                    if eps > eps_a && eps < eps_b {
                        marks.push(piece.unmap(eps.powf(beta)));
                    }
                }
            }
            let r = integrate(
                |u| {
                    let w = self.photon_weights(tau_of(u));
                    let hu = rule.interpolate(&h, u);
                    (0..4).map(|k| w[k] * hu[k]).sum::<f64>()
                },
                0.0,
                1.0,
                &marks,
                Tolerance {
                    rel: 0.0,
                    abs: self.piece_tol,
                },
            );
            out.sigma_nb += r.value;
            out.error_nb += r.error;
            out.converged &= r.converged();
        }
        out
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
            geometry: OnceLock::new(),
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
        let v = Visible::new(self.channel, acceptance, vp, settings)?;
        // The same acceptance has the same structure in τ: no need to search it again.
        if let Some(g) = self
            .geometry
            .get()
            .filter(|_| acceptance == self.acceptance)
        {
            let _ = v.geometry.set(Geometry {
                tau_lo: g.tau_lo,
                kinks: g.kinks.clone(),
            });
        }
        Ok(v)
    }

    /// σ_vis in nb at s (GeV²); 0 at or below the channel's threshold. The rule sizes grow
    /// until two successive ones agree to the requested precision.
    ///
    /// # Errors
    /// A structure-function scale below e·m² (energies far too low for the leading log).
    pub fn sigma_vis(&self, s: f64) -> Result<SigmaVis, VisibleError> {
        self.evaluate(s, None)
    }

    /// σ_vis at s with one fixed rule size (`rule_points` of a [`SigmaVis`]), no comparison:
    /// for budget variations, which then share the nominal's rule and so its numerical error
    /// (rather than adding the difference of two rule sizes' errors to each shift).
    ///
    /// # Errors
    /// As [`Visible::sigma_vis`].
    pub fn sigma_vis_with_rule(
        &self,
        s: f64,
        rule_points: usize,
    ) -> Result<SigmaVis, VisibleError> {
        self.evaluate(s, Some(rule_points))
    }

    fn evaluate(&self, s: f64, fixed: Option<usize>) -> Result<SigmaVis, VisibleError> {
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
                rule_points: 0,
            });
        }
        let born_point = Point {
            s,
            vp_t: None,
            fsr: None,
            split: false,
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
        let s_channel = match self.channel {
            Channel::Diphoton => None,
            _ => self.vp,
        };
        if !self.settings.radiation {
            let point = Point {
                s,
                vp_t,
                fsr: None,
                split: s_channel.is_some(),
            };
            let c = self.coefficients(&point, 1.0, 1.0);
            let w = match s_channel {
                Some(vp) => {
                    let p = vp.s_channel_factor(s);
                    [1.0, p.re, p.im, p.norm_sqr()]
                }
                None => [1.0, 0.0, 0.0, 0.0],
            };
            return Ok(SigmaVis {
                sigma_nb: (0..4).map(|k| w[k] * c[k]).sum(),
                error_nb: 0.0,
                converged: true,
                evaluations: 1,
                q2_gev2: 0.0,
                beta: 0.0,
                rule_points: 0,
            });
        }
        let scale_error = |e: ParamError| VisibleError::ScaleTooLow {
            sqrt_s_gev: s.sqrt(),
            q2_gev2: q2,
            allowed: e.allowed,
        };
        let isr = StructureFunction::new(q2, M_E_GEV).map_err(scale_error)?;
        let fsr = match (self.acceptance.final_state(), self.channel.final_mass_gev()) {
            (FinalState::BareTrack, Some(m)) => {
                Some(StructureFunction::new(q2, m).map_err(scale_error)?)
            }
            _ => None,
        };
        let point = Point {
            s,
            vp_t,
            fsr,
            split: s_channel.is_some(),
        };
        // Absolute tolerance scaled by the Born σ_vis (σ_vis is within ~20% of it).
        let born = self.coefficients(&born_point, 1.0, 1.0)[0];
        let target = self.settings.precision * born;
        let geometry = self
            .geometry
            .get_or_init(|| Geometry::new(&self.acceptance));
        // The lowest τ: the acceptance's, or the hard process's threshold.
        let tau_th = self.channel.threshold_gev().powi(2) / s;
        let tau_lo = geometry.tau_lo.max(tau_th);
        let eps_hi = 1.0 - tau_lo;
        let beta = isr.beta();
        let mut breaks = vec![(0.0, false), (eps_hi, true)];
        breaks.extend(
            EPS_BREAKS
                .iter()
                .filter(|&&e| e < eps_hi)
                .map(|&e| (e, false)),
        );
        breaks.extend(
            geometry
                .kinks
                .iter()
                .filter(|&&t| t > tau_lo)
                .map(|&t| (1.0 - t, true)),
        );
        let in_v = breaks.into_iter().map(|(e, k)| (e.powf(beta), k)).collect();
        let pieces = pieces(in_v, 0.0);
        let rad = Radiative {
            visible: self,
            point,
            isr,
            s_channel,
            piece_tol: 0.01 * target / pieces.len() as f64,
            pieces,
        };
        let done = |level: Level, error_nb: f64, rule_points: usize, evaluations: usize| SigmaVis {
            sigma_nb: level.sigma_nb,
            error_nb,
            converged: level.converged
                && error_nb <= self.settings.precision * level.sigma_nb.abs(),
            evaluations,
            q2_gev2: q2,
            beta,
            rule_points,
        };
        if let Some(n) = fixed.filter(|&n| n > 0) {
            let level = rad.level(n);
            let (e, evals) = (level.error_nb, level.evaluations);
            return Ok(done(level, e, n, evals));
        }
        let mut evaluations = 0;
        let mut previous: Option<f64> = None;
        for (k, &n) in RULE_POINTS.iter().enumerate() {
            let level = rad.level(n);
            evaluations += level.evaluations;
            if let Some(prev) = previous {
                let error = (level.sigma_nb - prev).abs() + level.error_nb;
                if error <= target || k + 1 == RULE_POINTS.len() {
                    return Ok(done(level, error, n, evaluations));
                }
            }
            previous = Some(level.sigma_nb);
        }
        unreachable!("the last rule size returns")
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
            let [n, d] = self.angle_integral(a, b, |c| {
                let w = self.dsigma(s, c, one, 1.0);
                [w * (0.5 * s * (1.0 - c)).ln(), w]
            });
            num += n;
            den += d;
        }
        (num / den).exp()
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
    fn angle_integral<const K: usize, F: Fn(f64) -> [f64; K]>(
        &self,
        a: f64,
        b: f64,
        f: F,
    ) -> [f64; K] {
        // Bhabha: u = ln(1 − c), dc = −(1 − c) du: the 1/(1 − c)² t-channel peak becomes a
        // smooth exponential in u. γγ: c = tanh η, dc = (1 − c²) dη: the 1/(1 − c²) peaks
        // become flat.
        let (lo, hi) = match self.channel {
            Channel::Bhabha => ((1.0 - b).ln(), (1.0 - a).ln()),
            Channel::Diphoton => (a.atanh(), b.atanh()),
            Channel::MuonPair => (a, b),
        };
        let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
        let mut sum = [0.0; K];
        for (x, w) in self
            .angle_rule
            .nodes()
            .iter()
            .zip(self.angle_rule.weights())
        {
            let y = mid + half * x;
            let (c, jac) = match self.channel {
                Channel::Bhabha => {
                    let e = y.exp();
                    (1.0 - e, e)
                }
                Channel::Diphoton => {
                    let c = y.tanh();
                    (c, 1.0 - c * c)
                }
                Channel::MuonPair => (y, 1.0),
            };
            let v = f(c);
            for k in 0..K {
                sum[k] += w * jac * v[k];
            }
        }
        sum.map(|v| v * half)
    }

    /// The hard-angle integral over the accepted c at beam fractions (z₁, z₂) of dσ̂/dc·W_FSR,
    /// as the coefficients (A, B, C, D) of dσ = A + B·Re P + C·Im P + D·|P|² in the s-channel
    /// photon factor P when `p.split`, else as (σ, 0, 0, 0) with P = 1.
    fn coefficients(&self, p: &Point, z1: f64, z2: f64) -> [f64; 4] {
        let s_hat = z1 * z2 * p.s;
        let e_min = self.acceptance.e_min_frac();
        let one = Complex64::new(1.0, 0.0);
        let mut total = [0.0; 4];
        for &(a, b) in self.acceptance.intervals(z1, z2).as_slice() {
            let add = match (&self.hard, &p.vp_t, &p.fsr, p.split) {
                (Hard::Ee(h), None, None, false) => [h.sigma_in_cos_nb(s_hat, a, b), 0.0, 0.0, 0.0],
                (Hard::Gg(h), _, None, _) => [h.sigma_in_cos_nb(s_hat, a, b), 0.0, 0.0, 0.0],
                (Hard::Mumu(h), _, None, split) => {
                    let v = h.sigma_in_cos_nb(s_hat, a, b);
                    if split {
                        [0.0, 0.0, 0.0, v]
                    } else {
                        [v, 0.0, 0.0, 0.0]
                    }
                }
                (hard, vp_t, fsr, split) => self.angle_integral(a, b, |c| {
                    let w = fsr.map_or(1.0, |d| {
                        let f1 = 0.5 * ((z1 + z2) + (z1 - z2) * c);
                        let f2 = 0.5 * ((z1 + z2) - (z1 - z2) * c);
                        d.keep_at_least(e_min / f1) * d.keep_at_least(e_min / f2)
                    });
                    match (hard, split) {
                        (Hard::Ee(h), true) => {
                            let photon_t = vp_t
                                .as_ref()
                                .map_or(1.0, |v| v.factor(-0.5 * s_hat * (1.0 - c)));
                            // dσ is quadratic in P: four values give its coefficients.
                            let at = |p: Complex64| h.dsigma_dcos_dressed_nb(s_hat, c, p, photon_t);
                            let d0 = at(Complex64::new(0.0, 0.0));
                            let (dp, dm) = (at(one), at(-one));
                            let di = at(Complex64::new(0.0, 1.0));
                            let even = 0.5 * (dp + dm);
                            [
                                w * d0,
                                w * 0.5 * (dp - dm),
                                w * (di - even),
                                w * (even - d0),
                            ]
                        }
                        (Hard::Mumu(_), true) => {
                            [0.0, 0.0, 0.0, w * self.dsigma(s_hat, c, one, 1.0)]
                        }
                        _ => [w * self.dsigma(s_hat, c, one, 1.0), 0.0, 0.0, 0.0],
                    }
                }),
            };
            for k in 0..4 {
                total[k] += add[k];
            }
        }
        total
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::lumi::PolarRange;

    /// Accepted anywhere along z₁z₂ = τ (a dense scan of the split, independent of the
    /// structure codes).
    fn accepted_at(acc: &Acceptance, tau: f64) -> bool {
        let y_max = -0.5 * tau.ln();
        (-20_000..=20_000).any(|i| {
            let y = y_max * i as f64 / 20_000.0;
            let (z1, z2) = (tau.sqrt() * y.exp(), tau.sqrt() * (-y).exp());
            z1 <= 1.0 && z2 <= 1.0 && !acc.intervals(z1, z2).as_slice().is_empty()
        })
    }

    #[test]
    fn geometry_finds_the_known_structure_changes() {
        // 40°–140°, acollinearity ≤ 10°, E ≥ 0.5 E_beam. In closed form: the acollinearity
        // cut bites where βγ = |sinh y| = tan 5°, which enters the range |y| ≤ −ln(τ)/2 at
        // τ = (√(1 + T²) − T)²; at z₁ = z₂ = √τ the energy cut empties the acceptance below
        // τ = e_min² (the search looks just short of z₁ = z₂, hence 1e-6).
        let w = PolarRange::new(40.0, 140.0).unwrap();
        let acc = Acceptance::new(w, w, 10.0, 0.5, FinalState::Calorimetric).unwrap();
        let g = Geometry::new(&acc);
        let t = 5f64.to_radians().tan();
        let acol = ((1.0 + t * t).sqrt() - t).powi(2);
        for (what, want, tol) in [("acollinearity", acol, 1e-10), ("energy", 0.25, 1e-6)] {
            assert!(
                g.kinks.iter().any(|k| (k - want).abs() < tol),
                "{what}: {want} not among {:?}",
                g.kinks
            );
        }
        // The lowest accepted τ, against the dense scan (with e_min = 0.3 the accepted region
        // reaches below e_min² at large |y|).
        for emin in [0.5, 0.3] {
            let acc = Acceptance::new(w, w, 60.0, emin, FinalState::Calorimetric).unwrap();
            let lo = Geometry::new(&acc).tau_lo;
            assert!(
                !accepted_at(&acc, lo * (1.0 - 1e-6)),
                "e_min {emin}: τ_lo {lo}"
            );
            assert!(
                accepted_at(&acc, lo * (1.0 + 1e-4)),
                "e_min {emin}: τ_lo {lo}"
            );
        }
    }
}
