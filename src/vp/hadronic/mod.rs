//! The hadronic photon self-energy Π_had(q²) by the dispersion relation over an R model.
//!
//! Re Π_had(q²) = Δα_had(q²) = −(αq²/3π) P∫_{s_th}^∞ ds R(s)/[s(s − q²)] (Cabibbo & Gatto,
//! Phys. Rev. 124 (1961) 1577; physics.md §2), Im Π_had(s + i0) = −(α/3)R(s).
//!
//! The model's Breit–Wigner resonances (ω, φ, J/ψ, ψ(2S), Υ(1S–3S)) are done analytically
//! ([`pi_breit_wigner`], exact partial fractions). The rest (the smooth R) is tabulated once
//! per model: a fixed quadrature rule ([`rule`]) samples R once, and piecewise Chebyshev
//! interpolants in ln|q²| ([`chebyshev`]) are built from it for spacelike and timelike q²
//! (|q²| ≤ 10¹⁰ GeV²; beyond, the rule is used directly; below 10⁻⁶ GeV² the Taylor series
//! to q⁴). [`smooth_re_direct`] is the independent adaptive integral the table is checked
//! against. At a threshold or a resonance mass every term is finite (a Breit–Wigner at its
//! peak is −i(α/3)R_peak plus a finite real part; R is continuous at every threshold), so Π
//! is defined for every real q², with no special case.
//!
//! The table's error bound: each Chebyshev piece meets 10⁻⁹ × its largest |value| by its
//! coefficient tail, and the fixed rule agrees with the adaptive integral to ≲10⁻⁸
//! relative; `tests/vp_hadronic.rs` checks table against direct on seeded random points and
//! next to every structure at 10⁻⁶ relative (the bound).

pub mod chebyshev;
pub mod rule;

use crate::constants::ALPHA;
use crate::numeric::{Integral, Tolerance, integrate, principal_value};
use crate::process::{Feature, RRatio};
use crate::rmodel::{RModel, Region, Resonance};
use chebyshev::Chebyshev;
use num_complex::Complex64;
use rule::Rule;
use std::f64::consts::PI;
use std::sync::OnceLock;

/// |q²| range of the tables, GeV².
const Q2_TABLE_MIN: f64 = 1e-6;
const Q2_TABLE_MAX: f64 = 1e10;
/// The timelike table's pieces at an edge of R start this wide in ln q² (the widths the
/// bisection settles on there: 1e-3 to 7e-3) and grow by this ratio away from it (a piece
/// [h, 3h] from a branch point sees it at z = 2 of its half-width: ρ = 2 + √3).
const GRADED_FIRST: f64 = 1e-3;
const GRADED_RATIO: f64 = 3.0;

/// Π of one constant-width Breit–Wigner R_V(s) = K·s/|s − P|², P = M² + iMΓ, at q² + i0.
///
/// ∫₀^∞ ds R_V(s)/(s(s − q²)) by partial fractions (poles q², P, P̄):
/// Π_V = (αq²/3π)·K·[ln(−q² − i0)/|q² − P|² + Im(ln(−P)/(P − q²))/(MΓ)], principal logs.
/// Its imaginary part is exactly −(α/3)R_V(q²); as Γ → 0 it tends to the δ-function form
/// −3q²Γ_ee⁰/(αM(M² − q²)) (physics.md §2). Finite at q² = M².
pub fn pi_breit_wigner(res: &Resonance, q2: f64) -> Complex64 {
    BreitWigner::new(res).pi(q2, log_q2(q2))
}

/// (ln|q²|, −π for q² > 0), shared by all Breit–Wigners at one q².
fn log_q2(q2: f64) -> Complex64 {
    Complex64::new(q2.abs().ln(), if q2 > 0.0 { -PI } else { 0.0 })
}

/// A Breit–Wigner with its q²-independent pieces precomputed.
#[derive(Debug, Clone)]
struct BreitWigner {
    k: f64,
    p: Complex64,
    ln_minus_p: Complex64,
    m_gamma: f64,
    region: Region,
    rel_unc: f64,
}

impl BreitWigner {
    fn new(r: &Resonance) -> Self {
        let p = Complex64::new(r.mass_gev * r.mass_gev, r.mass_gev * r.width_gev);
        BreitWigner {
            k: r.strength(),
            p,
            ln_minus_p: (-p).ln(),
            m_gamma: r.mass_gev * r.width_gev,
            region: r.region,
            rel_unc: r.gamma_ee_rel_unc,
        }
    }

    fn pi(&self, q2: f64, ln_q2: Complex64) -> Complex64 {
        if q2 == 0.0 {
            return Complex64::new(0.0, 0.0);
        }
        let d = self.p - q2;
        let z = self.ln_minus_p / d;
        ALPHA * q2 / (3.0 * PI) * self.k * (ln_q2 / d.norm_sqr() + z.im / self.m_gamma)
    }
}

/// Re Π of the model's smooth R (all but the Breit–Wigners) by adaptive Gauss–Kronrod:
/// the direct dispersion integral, principal value by pole subtraction for timelike q².
/// Relative tolerance 1e-11; the tail above S = max(10⁴, 4|q²|) GeV² through u = S/s.
pub fn smooth_re_direct(model: &RModel, q2: f64) -> Integral {
    let s_th = model.s_threshold();
    let mut points = Vec::new();
    for f in model.features() {
        match *f {
            Feature::Edge { s_gev2 } => points.push(s_gev2),
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => {
                for k in [-10.0, -3.0, -1.0, 0.0, 1.0, 3.0, 10.0] {
                    points.push(s_gev2 + k * m_gamma_gev2);
                }
            }
        }
    }
    if let Some(t) = model.table() {
        points.extend(t.sqrt_s_gev().iter().map(|e| e * e));
    }
    let tol = Tolerance {
        rel: 1e-11,
        abs: 1e-16,
    };
    let big_s = 1e4f64.max(4.0 * q2.abs());
    let g = |s: f64| model.r_smooth(s) / s;
    let finite = if q2 > s_th && q2 < big_s {
        principal_value(g, s_th, big_s, q2, &points, tol)
    } else {
        integrate(|s| g(s) / (s - q2), s_th, big_s, &points, tol)
    };
    let tail = integrate(
        |u| {
            if u == 0.0 {
                0.0
            } else {
                model.r_smooth(big_s / u) / (big_s - q2 * u)
            }
        },
        0.0,
        1.0,
        &[],
        tol,
    );
    let c = -ALPHA * q2 / (3.0 * PI);
    Integral {
        value: c * (finite.value + tail.value),
        error: c.abs() * (finite.error + tail.error),
        evaluations: finite.evaluations + tail.evaluations,
        status: if finite.converged() {
            tail.status
        } else {
            finite.status
        },
    }
}

/// One region's share of Δα_had at a q², or its 1σ uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RegionValue {
    pub region: Region,
    pub value: f64,
}

/// One smooth region of the model on the dispersion rule's nodes.
#[derive(Debug, Clone)]
struct RegionPart {
    region: Region,
    /// Its index in `RModel::smooth_region_parts`.
    index: usize,
    /// Its share of R/s.
    share: Vec<f64>,
    /// The 1σ uncertainty of that share.
    unc: Vec<f64>,
}

/// The hadronic vacuum polarisation of one R model, tabulated.
#[derive(Debug, Clone)]
pub struct HadronicVp {
    model: RModel,
    rule: Rule,
    /// R_smooth(sᵢ)/sᵢ on the rule's nodes.
    g: Vec<f64>,
    /// Per smooth region, sampled when a breakdown is first asked for (~1 ms that Π alone
    /// does not need).
    parts: OnceLock<Vec<RegionPart>>,
    spacelike: Chebyshev,
    timelike: Chebyshev,
    /// Taylor coefficients of Re Π_smooth at q² = 0 (q² and q⁴ terms).
    c1: f64,
    c2: f64,
    bw: Vec<BreitWigner>,
    features: Vec<Feature>,
}

impl HadronicVp {
    /// Tabulate the hadronic Π of `model` (≈ 3 ms for the default model on two cores;
    /// benches/vp.rs).
    pub fn new(model: RModel) -> Self {
        let SmoothRule { rule, g } = SmoothRule::new(&model);
        let (edges, knots, peaks) = smooth_breaks(&model);
        let c = -ALPHA / (3.0 * PI);
        let c1 = c * rule
            .s
            .iter()
            .zip(&rule.w)
            .zip(&g)
            .map(|((s, w), g)| w * g / s)
            .sum::<f64>();
        let c2 = c * rule
            .s
            .iter()
            .zip(&rule.w)
            .zip(&g)
            .map(|((s, w), g)| w * g / (s * s))
            .sum::<f64>();
        let re_rule = |q2: f64| smooth_rule(&rule, &g, &model, q2);
        // A user table's rows are kinks of R, each a weak (x ln x) singularity of Re Π: there
        // the goal is 1e-7 relative, far below any table's uncertainty, to keep the build short.
        let rel = if model.table().is_some() { 1e-7 } else { 1e-9 };
        let tol = |p: &chebyshev::PieceStats| rel * p.largest + 1e-14;
        let (lo, hi) = (Q2_TABLE_MIN.ln(), Q2_TABLE_MAX.ln());
        let mut space_breaks: Vec<f64> =
            (0..16).map(|k| lo + (hi - lo) * k as f64 / 16.0).collect();
        space_breaks.push(hi);
        let spacelike = Chebyshev::build(&|x: f64| [re_rule(-x.exp())], &space_breaks, &tol);
        let mut time_breaks = vec![lo, hi];
        for &e in edges.iter().chain(&knots) {
            time_breaks.push(e.ln());
        }
        for &(m2, mg) in &peaks {
            for k in [-8.0, -2.0, -0.5, 0.0, 0.5, 2.0, 8.0] {
                time_breaks.push((m2 + k * mg).ln());
            }
        }
        time_breaks.retain(|&x| x >= lo && x <= hi);
        time_breaks.sort_by(f64::total_cmp);
        time_breaks.dedup();
        let towards: Vec<(f64, f64)> = edges
            .iter()
            .map(|e| (e.ln(), GRADED_FIRST / GRADED_RATIO))
            .collect();
        let time_breaks =
            chebyshev::graded_towards(&time_breaks, &towards, &time_breaks, GRADED_RATIO);
        let timelike = Chebyshev::build(&|x: f64| [re_rule(x.exp())], &time_breaks, &tol);
        let bw = model.resonances().iter().map(BreitWigner::new).collect();
        let features = model.features().to_vec();
        HadronicVp {
            model,
            rule,
            g,
            parts: OnceLock::new(),
            spacelike,
            timelike,
            c1,
            c2,
            bw,
            features,
        }
    }

    /// The model this was built from.
    pub fn model(&self) -> &RModel {
        &self.model
    }

    /// Structures of Π_had in s for integrators (thresholds and resonance peaks).
    pub fn features(&self) -> &[Feature] {
        &self.features
    }

    /// Number of Chebyshev pieces (spacelike, timelike) and rule nodes: the table's size.
    pub fn table_size(&self) -> (usize, usize, usize) {
        (
            self.spacelike.pieces(),
            self.timelike.pieces(),
            self.rule.s.len(),
        )
    }

    /// Where the timelike table's pieces meet, as the first s > 0 evaluated on the upper
    /// piece (Re Π jumps there by up to the pieces' tolerance; a table of a function of Π
    /// must not straddle it). The piece is chosen by ln s, so the break is adjusted until
    /// ln agrees.
    pub(crate) fn timelike_breaks(&self) -> Vec<f64> {
        self.timelike
            .edges()
            .iter()
            .map(|&x| {
                let mut s = x.exp();
                while s.ln() >= x {
                    s = s.next_down();
                }
                while s.ln() < x {
                    s = s.next_up();
                }
                s
            })
            .collect()
    }

    /// Re Π of the smooth R from the table (the rule beyond it).
    fn smooth_re(&self, q2: f64) -> f64 {
        let a = q2.abs();
        if a < Q2_TABLE_MIN {
            q2 * (self.c1 + self.c2 * q2)
        } else if a > Q2_TABLE_MAX {
            smooth_rule(&self.rule, &self.g, &self.model, q2)
        } else if q2 < 0.0 {
            self.spacelike.eval(a.ln())[0]
        } else {
            self.timelike.eval(a.ln())[0]
        }
    }

    /// Π_had(q² + i0), tabulated smooth part plus analytic Breit–Wigners.
    pub fn pi(&self, q2: f64) -> Complex64 {
        let ln_q2 = log_q2(q2);
        let mut pi = Complex64::new(self.smooth_re(q2), 0.0);
        if q2 > self.model.s_threshold() {
            pi.im = -ALPHA / 3.0 * self.model.r_smooth(q2);
        }
        for b in &self.bw {
            pi += b.pi(q2, ln_q2);
        }
        pi
    }

    /// Π_had(q² + i0) with the smooth part by the adaptive direct integral (slow; for checks).
    pub fn pi_direct(&self, q2: f64) -> Complex64 {
        let ln_q2 = log_q2(q2);
        let mut pi = Complex64::new(smooth_re_direct(&self.model, q2).value, 0.0);
        if q2 > self.model.s_threshold() {
            pi.im = -ALPHA / 3.0 * self.model.r_smooth(q2);
        }
        for b in &self.bw {
            pi += b.pi(q2, ln_q2);
        }
        pi
    }

    /// Re Π of the smooth R by the fixed rule (no table): a few µs, for checks.
    pub fn smooth_re_rule(&self, q2: f64) -> f64 {
        smooth_rule(&self.rule, &self.g, &self.model, q2)
    }

    /// Δα_had(q²) = Re Π_had(q²).
    pub fn delta_alpha(&self, q2: f64) -> f64 {
        self.pi(q2).re
    }

    /// R/s of each smooth region and its 1σ uncertainty on the rule's nodes.
    fn parts(&self) -> &[RegionPart] {
        self.parts.get_or_init(|| {
            let (model, s) = (&self.model, &self.rule.s);
            [
                Region::PiPi,
                Region::Inclusive,
                Region::Pqcd,
                Region::TableSyst,
            ]
            .into_iter()
            .enumerate()
            .filter(|(_, region)| model.regions().contains(region))
            .map(|(index, region)| RegionPart {
                region,
                index,
                share: s
                    .iter()
                    .map(|&s| model.smooth_region_parts(s)[index].1 / s)
                    .collect(),
                unc: s.iter().map(|&s| model.r_unc(region, s) / s).collect(),
            })
            .collect()
        })
    }

    /// Δα_had(q²) split by region of the R model (the values sum to [`Self::delta_alpha`]
    /// up to the table's interpolation error).
    pub fn breakdown(&self, q2: f64) -> Vec<RegionValue> {
        let mut out: Vec<RegionValue> = self
            .parts()
            .iter()
            .map(|p| RegionValue {
                region: p.region,
                value: self.rule_re(&p.share, q2, |s| {
                    self.model.smooth_region_parts(s)[p.index].1
                }),
            })
            .collect();
        let ln_q2 = log_q2(q2);
        for region in [Region::OmegaPhi, Region::Narrow] {
            let value = self
                .bw
                .iter()
                .filter(|b| b.region == region)
                .map(|b| b.pi(q2, ln_q2).re)
                .sum();
            out.push(RegionValue { region, value });
        }
        out
    }

    /// The 1σ uncertainty of Δα_had(q²) per region (correlated within a region, independent
    /// between regions), and their sum in quadrature.
    pub fn uncertainty(&self, q2: f64) -> (Vec<RegionValue>, f64) {
        let mut out: Vec<RegionValue> = self
            .parts()
            .iter()
            .map(|p| RegionValue {
                region: p.region,
                value: self
                    .rule_re(&p.unc, q2, |s| self.model.r_unc(p.region, s))
                    .abs(),
            })
            .collect();
        let ln_q2 = log_q2(q2);
        for region in [Region::OmegaPhi, Region::Narrow] {
            let value = self
                .bw
                .iter()
                .filter(|b| b.region == region)
                .map(|b| (b.rel_unc * b.pi(q2, ln_q2).re).abs())
                .sum();
            out.push(RegionValue { region, value });
        }
        if let Some(t) = self.model.table() {
            out.push(RegionValue {
                region: Region::TableStat,
                value: table_stat_unc(t, q2),
            });
        }
        let total = out.iter().map(|r| r.value * r.value).sum::<f64>().sqrt();
        (out, total)
    }

    /// −(αq²/3π) P∫ f(s)/(s(s − q²)) ds on the rule, fᵢ/sᵢ given, f(q²) from `f_at`.
    fn rule_re(&self, g: &[f64], q2: f64, f_at: impl Fn(f64) -> f64) -> f64 {
        let g_q = if q2 > self.rule.s_th {
            f_at(q2) / q2
        } else {
            0.0
        };
        -ALPHA * q2 / (3.0 * PI) * self.rule.principal_value(g, q2, g_q)
    }
}

/// The fixed dispersion rule of a model's smooth R and R/s at its nodes: Re Π of the smooth
/// part at any q² in a few µs, without the tables (the model's own construction uses it to
/// undress its Breit–Wigners; [`HadronicVp`] builds its tables on it).
pub struct SmoothRule {
    rule: Rule,
    g: Vec<f64>,
}

impl SmoothRule {
    pub fn new(model: &RModel) -> Self {
        let (edges, knots, peaks) = smooth_breaks(model);
        let rule = Rule::new(
            model.s_threshold(),
            &edges,
            &knots,
            &model.power_thresholds(),
            &peaks,
        );
        let g = rule.s.iter().map(|&s| model.r_smooth(s) / s).collect();
        SmoothRule { rule, g }
    }

    /// Re Π of `model`'s smooth R at q² (`model` is the one the rule was built for).
    pub fn re(&self, model: &RModel, q2: f64) -> f64 {
        smooth_rule(&self.rule, &self.g, model, q2)
    }
}

/// Where a model's smooth R changes character: its edges (thresholds, switches), a user
/// table's rows (kinks) and where its parts jump (plain bounds), and the smooth peaks (ρ, ω
/// in F_π), as (M², MΓ).
fn smooth_breaks(model: &RModel) -> (Vec<f64>, Vec<f64>, [(f64, f64); 2]) {
    let edges = model
        .features()
        .iter()
        .filter_map(|f| match *f {
            Feature::Edge { s_gev2 } => Some(s_gev2),
            Feature::Peak { .. } => None,
        })
        .collect();
    let mut knots: Vec<f64> = model.table().map_or(Vec::new(), |t| {
        t.sqrt_s_gev().iter().map(|e| e * e).collect()
    });
    // Where the parts of R jump (their shares enter the breakdown and the budget).
    knots.extend(model.part_switches());
    (edges, knots, model.smooth_peaks())
}

/// Re Π of the smooth R by the fixed rule.
fn smooth_rule(rule: &Rule, g: &[f64], model: &RModel, q2: f64) -> f64 {
    let g_q = if q2 > rule.s_th {
        model.r_smooth(q2) / q2
    } else {
        0.0
    };
    -ALPHA * q2 / (3.0 * PI) * rule.principal_value(g, q2, g_q)
}

/// Point-to-point (statistical) part of a user table's uncertainty: each row's R moves
/// alone, with the trapezoid weight of its interval in s; the kernel's pole is capped at
/// half the local spacing (an estimate, not an exact propagation, for timelike q² inside
/// the table).
fn table_stat_unc(t: &crate::rmodel::RTable, q2: f64) -> f64 {
    let e = t.sqrt_s_gev();
    let n = e.len();
    let mut sum = 0.0;
    for i in 0..n {
        let s = e[i] * e[i];
        let lo = if i > 0 { e[i - 1] * e[i - 1] } else { s };
        let hi = if i + 1 < n { e[i + 1] * e[i + 1] } else { s };
        let width = 0.5 * (hi - lo);
        let d = (s - q2).abs().max(0.5 * width);
        let k = ALPHA * q2.abs() / (3.0 * PI) / (s * d);
        let x = k * width * t.r_stat()[i];
        sum += x * x;
    }
    sum.sqrt()
}
