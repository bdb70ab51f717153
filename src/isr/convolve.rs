//! The ISR convolution σ_obs(s) = ∫₀^{x_max} F(x, s) σ_d(s(1 − x)) dx over any cross-section.
//!
//! The range is cut into panels at the features of σ_d (peaks at x_R = 1 − M²/s, edges at
//! thresholds and cusps). The first panel, which holds the soft singularity, is integrated
//! in t = x^β, where C·β x^(β−1) dx = C dt exactly and the hard part picks up the Jacobian
//! x^(1−β)/β, which vanishes at 0. Every other panel is integrated in v = ln(1 − x) =
//! ln(s′/s), in which the 1/s′ growth of σ_d is flat; a panel end at an edge or at the
//! threshold is mapped by a square (√ behaviour → smooth). A panel end at a peak (a pole
//! pair at v_R ± iγ, γ = Γ/M in v) is mapped by v = v_R + γ sinh ξ, ξ ≥ 0: the Breit–Wigner
//! becomes 1/(γ cosh ξ), whose poles ±iπ/2 lie off the panel's end ξ = 0, and a smooth
//! background becomes γ cosh ξ, an entire function; one panel of up to [`MAX_XI`] in ξ
//! grades from the width out to the next break (l/γ up to ~10⁵). (The map
//! v = v_R + γ tan θ makes the Breit–Wigner flat, but turns the background into sec²θ,
//! with a double pole within γ/l of the panel's end: no fixed rule integrates that, and
//! every narrow peak sent the integral to the adaptive path.) A peak just beyond x_max is
//! taken the same way, from its distance outward.
//!
//! The peaks are those the cross-section reports. For a VP-dressed line shape the narrow
//! resonances peak at the pole of 1/(1 − Π) (the PDG mass), ≈ 24 widths above the bare M²
//! inside Π for the J/ψ, which [`crate::vp::Vp`] reports (see [`crate::vp::Vp::dressed_poles`]).
//!
//! Each panel is integrated with a fixed Gauss–Kronrod pair sized to its kind
//! ([`HEAD_GAUSS`], [`LOG_GAUSS`], [`PEAK_GAUSS`]); the Kronrod rule gives the value, its
//! difference with the Gauss rule on the same nodes the error estimate. If it misses the requested
//! accuracy, the whole integral is redone by the adaptive Gauss–Kronrod integrator with
//! breakpoints at the features and around every peak, which reports its own error.

use super::{Cuts, IsrError, Order, Radiator, Scheme};
use crate::numeric::fast::{Fused, Rounding, Separate};
use crate::numeric::{Integral, KronrodPair, Status, Tolerance, fast, integrate};
use crate::process::{CrossSection, Feature};
use num_complex::Complex64;
use std::sync::OnceLock;

/// Each panel kind's fixed rule is a Gauss–Kronrod pair ([`KronrodPair`]): the value from
/// the (2n+1)-point Kronrod rule (exact to degree 3n + 1), the error estimate from its
/// difference with the n-point Gauss rule on the same nodes, so the estimate costs no
/// evaluations of its own. |Kronrod − Gauss| is about the Gauss rule's error, so n is what
/// the estimate needs; the value is then better than the estimate says.
///
/// The head panel: its integrand in t = x^β is analytic in a Bernstein ellipse of ρ ≈ 1.6
/// at x₀ = 1/2 (s′ = 0, x = 1, sits at t = 1, just beyond t_max = 2^−β), so the 20-point
/// Gauss rule's error is ~ρ⁻⁴⁰ ≈ 1e-8 of the head at worst and ~1e-10 typically; the
/// 41-point Kronrod value's ~ρ⁻⁶² ≈ 2e-13.
const HEAD_GAUSS: usize = 20;
/// The same for a panel in v = ln(1 − x) between two breaks (at most `MAX_LOG_PANEL` long,
/// its neighbours' singularities at least its own length away or mapped by a square):
/// ρ ≳ 2.5, so the 16-point estimate is ~ρ⁻³² ≲ 1e-12 and the value better still.
const LOG_GAUSS: usize = 16;
/// The same for a peak panel (see `MAX_XI`: ρ ≈ 1.66): the 18-point estimate is
/// ~ρ⁻³⁶ ≈ 1e-8 of the panel, the 37-point value ~ρ⁻⁵⁶ ≈ 5e-13.
///
/// The Gauss orders were chosen on grids of 10⁴ points (μμ, √s 2–12 GeV, no and full VP,
/// x_max 0.1, 0.5 and open), then with separate Gauss rules of 24 (head 28) points for the
/// value: against 24 everywhere they took 23–26% fewer evaluations of σ_d, agreed with it
/// to 1.2e-9 (the adaptive points' own 1e-8 included), and sent 0.3–1.4% of the full-VP
/// points to the adaptive path instead of 0.2–1.0%. The Kronrod pairs keep those
/// estimates and take 11–15% fewer evaluations again.
const PEAK_GAUSS: usize = 18;
/// The same for a panel graded from the soft singularity at x = 0 (v = −v_a sinh ξ, see
/// `graded_from_zero`): x^(β−1) branches at the panel's own scale, and with √s on a peak
/// the peak's poles sit there too; an 18-point estimate missed 1e-8 with √s on a 93 keV
/// peak.
const SOFT_GAUSS: usize = 24;
/// The same for a panel in v far from the soft singularity (its ρ at least [`PLAIN_RHO`],
/// see `Panel::soft_rho`) whose interval's neighbouring breaks are at least its length away
/// (`clear`: ρ ≥ 5.8 for them): the 8-point estimate is ~ρ⁻¹⁶ ≲ 7e-12. On the 10⁴-point
/// full-VP grids: 9% fewer evaluations (open range), the same points adaptive, agreement
/// with [`LOG_GAUSS`] everywhere to 7e-11. (Without `clear`, 22% fewer, but a panel next to
/// a peak just beyond its root end missed its estimate and went adaptive.)
const PLAIN_GAUSS: usize = 8;
/// The soft-singularity ρ from which a panel in v takes [`PLAIN_GAUSS`] (at 4, 2.5 times as
/// many points went adaptive on the grids; 5–8 all gave the same).
const PLAIN_RHO: f64 = 5.0;
/// The most breaks (features inside the range) the fixed path of [`Isr::observe`] takes;
/// more go adaptive. (The breaks live on the stack: a larger array costs every point.)
const MAX_BREAKS: usize = 40;
/// The same for [`Isr::visit_nodes`], whose callers (a scan's response matrix: a knot per
/// point) have more and pay once per row.
const MAX_VISIT_BREAKS: usize = 160;
/// Longest peak panel in ξ (v = v_R ± γ sinh ξ). The Breit–Wigner's poles ±iπ/2 sit over
/// the panel's end ξ = 0: on [0, 13] their Bernstein ellipse has ρ ≈ 1.66, so a 24-point
/// Gauss rule's error is ~ρ⁻⁴⁸ ≈ 3e-11 of the peak's weight (see [`PEAK_GAUSS`]). A
/// structure just beyond the far end (the next break at twice the distance: ln 2 in ξ)
/// gives ρ ≈ 1.6. Measured (μμ, full VP, 2–12 GeV, with [32, 24] rules): the agreement with
/// an independent evaluation is the same for 6 to 24; at 12 the panels' estimates are
/// ~1e-15 of σ_obs. 13 rather than 12 keeps the J/ψ and Υ(1S) panels from √s up to
/// x_max = 0.5 in one piece each (l/γ up to ~2·10⁵): on the 10⁴-point grids it took 2–3%
/// fewer evaluations with the same agreement and one more adaptive point in 10⁴.
const MAX_XI: f64 = 13.0;
/// The head panel never reaches beyond this x (the rest is better in v = ln(1 − x)).
const HEAD_X_MAX: f64 = 0.5;
/// A peak below √s within this many widths (above: [`ABOVE_WIDTHS`]) is "at √s": the head panel stops at [`HEAD_PEAK_FRACTION`] of the distance |x_R + iw| to
/// its poles, and the panels beyond are graded from x = 0 on that scale (the soft
/// singularity and the poles are both near there); a peak further out is also a break.
const NEAR_ZERO_WIDTHS: f64 = 8.0;
/// A peak above √s within this many of its widths limits the head (see
/// [`HEAD_PEAK_FRACTION`]); farther, its poles sit at angle βπ off the head's axis in
/// t = x^β, where the fixed rules meet their target without it (measured: the Υ(2S) 1250
/// widths above √s = 10 GeV; a 40 MeV wide peak 16 widths above √s went adaptive).
const ABOVE_WIDTHS: f64 = 64.0;
/// A peak beyond x_max nearer than this in v (and than x_max's own |v|) stops the head
/// panel half-way, as a threshold there does (see `head_end`). Measured on 10⁴-point μμ
/// full-VP grids: the J/ψ 0.067 beyond the end of a near part (x_max ≈ 0.1, see
/// `Isr::observe_many`) sent it adaptive; the ψ(2S) 0.59 beyond x_max = 0.5 at √s = 7 GeV
/// does not trouble the head, and stopping there doubled that point's cost.
const HEAD_BEYOND_PEAK: f64 = 0.2;
/// The head panel's end as a fraction of the distance of the poles x_R ± iw of a peak at √s.
/// In t = x^β (β ≲ 0.1) the poles then sit at t_max·4^β·e^{±iβθ}, ≈ 0.1 t_max off the
/// panel's end: Bernstein ρ ≈ 2, the 20-point rule's error ~ρ⁻⁴⁰ ≈ 1e-12.
const HEAD_PEAK_FRACTION: f64 = 0.25;
/// Multiples of the width around a peak where the adaptive fallback starts subdividing.
const PEAK_STEPS: [f64; 9] = [-64.0, -16.0, -4.0, -1.0, 0.0, 1.0, 4.0, 16.0, 64.0];

/// A Gauss–Kronrod pair on [0, 1]: nodes u, the Kronrod weights, ln u (the head map needs
/// ln t = ln t_max + ln u, so the logarithm is paid once per process, not per node), and
/// the Gauss weight over the Kronrod weight at each node (0 where Kronrod added the node):
/// the node weights a panel fills carry the Kronrod weight, and this turns them into the
/// Gauss rule's.
struct Rule {
    nodes: Vec<f64>,
    weights: Vec<f64>,
    ln_nodes: Vec<f64>,
    gauss_ratio: Vec<f64>,
}

/// The fixed rule of each panel kind.
struct Rules {
    head: Rule,
    log: Rule,
    peak: Rule,
    soft: Rule,
    plain: Rule,
}

impl Rules {
    /// The rule for `panel`. A sinh-graded panel centred on v = 0 is graded from
    /// the soft singularity ([`graded_from_zero`]), not from a peak; when it starts at least
    /// half its length (in ξ) from it, ρ ≳ 3.7 there and the plain pair does.
    #[inline]
    fn rule(&self, panel: &Panel) -> &Rule {
        match panel {
            Panel::Head { .. } => &self.head,
            Panel::Log { clear: true, .. } if panel.soft_rho() >= PLAIN_RHO => &self.plain,
            Panel::Log { .. } => &self.log,
            Panel::Peak {
                centre,
                xi_lo,
                xi_hi,
                ..
            } if *centre == 0.0 && *xi_lo < 0.5 * (xi_hi - xi_lo) => &self.soft,
            Panel::Peak { centre, .. } if *centre == 0.0 => &self.log,
            Panel::Peak { .. } => &self.peak,
        }
    }
}

fn rules() -> &'static Rules {
    static RULES: OnceLock<Rules> = OnceLock::new();
    RULES.get_or_init(|| {
        let unit = |n: usize| {
            let p = KronrodPair::new(n);
            let nodes: Vec<f64> = p.nodes().iter().map(|x| 0.5 * (x + 1.0)).collect();
            let weights = p.kronrod_weights().iter().map(|w| 0.5 * w).collect();
            let ln_nodes = nodes.iter().map(|u| u.ln()).collect();
            let gauss_ratio = p
                .gauss_weights()
                .iter()
                .zip(p.kronrod_weights())
                .map(|(g, k)| g / k)
                .collect();
            Rule {
                nodes,
                weights,
                ln_nodes,
                gauss_ratio,
            }
        };
        Rules {
            head: unit(HEAD_GAUSS),
            log: unit(LOG_GAUSS),
            peak: unit(PEAK_GAUSS),
            soft: unit(SOFT_GAUSS),
            plain: unit(PLAIN_GAUSS),
        }
    })
}

/// The ISR link: a radiator scheme, cuts and an accuracy target.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Isr {
    scheme: Scheme,
    cuts: Cuts,
    pub(super) rel_tol: f64,
}

/// The observed cross-section at one s and how it was obtained.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Observed {
    /// σ_obs in nb.
    pub sigma_nb: f64,
    /// Estimated absolute error of `sigma_nb` (nb).
    pub error_nb: f64,
    /// The upper limit of x actually used (cuts and threshold).
    pub x_max: f64,
    /// Evaluations of σ_d (for a point of [`Isr::observe_many`]: its own and its share of
    /// its run's).
    pub evaluations: usize,
    /// Panels of the fixed path; 0 where the adaptive path ran (or nothing passed). For a
    /// point of [`Isr::observe_many`], those of its own integral, or, where σ_obs was
    /// interpolated, the most any of the run's integrals took.
    pub panels: usize,
    /// Whether σ_obs, or its part from s′ far below, was interpolated across a run of
    /// energies ([`Isr::observe_many`]) rather than integrated at this energy.
    pub interpolated: bool,
    pub status: Status,
}

/// How a panel end behaves.
#[derive(Debug, Clone, Copy, PartialEq)]
enum End {
    Plain,
    /// √ behaviour (a threshold or a cusp).
    Root,
    /// A Breit–Wigner peak of half-width `gamma` in v, centred `offset` ≥ 0 beyond the end
    /// (outside the panel; 0 when the peak is the break itself).
    Peak {
        gamma: f64,
        offset: f64,
    },
}

/// A panel of the fixed path.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Panel {
    /// x ∈ [0, x₀] integrated in t = x^β ∈ [0, t_max].
    Head { t_max: f64, ln_t_max: f64 },
    /// v = ln(1 − x) ∈ [lo, hi] with the behaviour at each end (Plain or Root); `clear`:
    /// the breaks beyond its interval's ends are at least the interval's length away.
    Log {
        lo: f64,
        hi: f64,
        at_lo: End,
        at_hi: End,
        clear: bool,
    },
    /// v = centre + dir·γ sinh ξ, ξ ∈ [xi_lo, xi_hi] (dir = ±1: away from the peak).
    Peak {
        centre: f64,
        dir: f64,
        gamma: f64,
        xi_lo: f64,
        xi_hi: f64,
    },
}

impl Panel {
    /// For a panel in v, the Bernstein ρ of the soft singularity (x = 0, v = 0) in the rule's
    /// variable: its preimages z under the panel's map, ρ = |z ± √(z² − 1)| (the larger), the
    /// smallest over the preimages. A root map pulls it in (v = lo + l u² puts v = 0 at
    /// u = √(−lo/l)). 0 for the other panels.
    fn soft_rho(&self) -> f64 {
        let Panel::Log {
            lo,
            hi,
            at_lo,
            at_hi,
            ..
        } = *self
        else {
            return 0.0;
        };
        let l = hi - lo;
        match (at_lo, at_hi) {
            (End::Root, End::Root) => {
                // v = lo + l u²(3 − 2u) = 0: with u = (1 + z)/2 the cubic
                // z³ − 3z + 2(2c − 1) = 0, c = −lo/l > 1, by Cardano (one real root, two
                // complex).
                let q = 2.0 * (2.0 * (-lo / l) - 1.0);
                let d = (0.25 * q * q - 1.0).max(0.0).sqrt();
                let (a, b) = ((-0.5 * q + d).cbrt(), (-0.5 * q - d).cbrt());
                let pair = Complex64::new(-0.5 * (a + b), 0.5 * 3f64.sqrt() * (a - b));
                bernstein_rho(Complex64::new(a + b, 0.0)).min(bernstein_rho(pair))
            }
            (End::Root, _) => bernstein_rho(Complex64::new(2.0 * (-lo / l).sqrt() - 1.0, 0.0)),
            (_, End::Root) => bernstein_rho(Complex64::new(1.0, -2.0 * (-hi / l).sqrt())),
            _ => bernstein_rho(Complex64::new(-2.0 * lo / l - 1.0, 0.0)),
        }
    }
}

/// The distance in v from a peak panel's end to the peak's poles (offset ± iγ): of order
/// 1 and below, so √(a² + b²) without hypot's scaling.
fn pole_distance(gamma: f64, offset: f64) -> f64 {
    (offset * offset + gamma * gamma).sqrt()
}

/// The Bernstein ρ of a point z of the complex plane for a rule on [−1, 1]: the ellipse with
/// foci ±1 through z has ρ = |z ± √(z² − 1)| (the larger).
fn bernstein_rho(z: Complex64) -> f64 {
    let w = (z * z - 1.0).sqrt();
    (z + w).norm().max((z - w).norm())
}

/// The radiator side of the integrand at one s: for a rule node, the weight that multiplies
/// σ_d and the s′ where σ_d is taken. Shared by the value ([`Integrand`]) and the node
/// listing ([`Isr::visit_nodes`]).
#[derive(Debug, Clone, Copy)]
struct Kernel {
    s: f64,
    rad: Radiator,
    inv_beta: f64,
}

impl Kernel {
    fn new(scheme: Scheme, s: f64) -> Self {
        let rad = Radiator::new(scheme, s);
        Kernel {
            s,
            rad,
            inv_beta: 1.0 / rad.beta(),
        }
    }

    /// In t = x^β: (C + H(x)·x/(βt), s(1 − x)), given t and ln t. (x below 1e-304
    /// contributes nothing and keeps the branch-free exp in its domain.)
    #[inline(always)]
    fn head<R: Rounding>(&self, t: f64, ln_t: f64) -> (f64, f64) {
        let ln_x = (ln_t * self.inv_beta).max(-700.0);
        let x = fast::exp::<R>(ln_x);
        let hard = self.rad.hard_with_logs(x, ln_x, fast::ln_one_minus::<R>(x));
        let weight = self.rad.soft_coefficient() + hard * x / t * self.inv_beta;
        (weight, self.s * (1.0 - x))
    }

    /// In v = ln(1 − x) < 0: (F(x)·(1 − x), s e^v).
    #[inline(always)]
    fn log<R: Rounding>(&self, v: f64) -> (f64, f64) {
        // x = 1 − e^v = −expm1(v), which keeps its digits as x → 0.
        let (y, y_minus_1) = fast::exp_and_exp_m1::<R>(v);
        let x = -y_minus_1;
        let ln_x = fast::ln::<R>(x);
        let b = self.rad.beta();
        let f = self.rad.soft_coefficient() * b * fast::exp::<R>((b - 1.0) * ln_x)
            + self.rad.hard_with_logs(x, ln_x, v);
        (f * y, self.s * y)
    }

    /// The nodes of `rule` on `panel` as (rule weight × radiator weight × Jacobian, s′),
    /// into `out`; returns their number. One straight-line loop per panel map, so that the
    /// compiler vectorises the radiator side; σ_d is then taken node by node.
    ///
    /// On x86-64 CPUs with AVX2 and FMA the loops run from a copy compiled for them, with
    /// the series' steps fused ([`Fused`]): 4 lanes instead of the baseline's 2 and one
    /// instruction a step, 1.7–2.2× faster per point. Elsewhere the portable copy rounds
    /// each step twice ([`Separate`]), which moves results in their last bits. (The fused
    /// steps compiled for the baseline call a correctly rounded library fma: the same bits
    /// as the AVX2 copy, which the tests check.)
    #[inline]
    fn fill(&self, panel: &Panel, rule: &Rule, out: &mut Nodes) -> usize {
        #[cfg(target_arch = "x86_64")]
        if crate::numeric::fast::avx2_fma() {
            // SAFETY: the CPU has AVX2 and FMA, checked on the line above.
            return unsafe { self.fill_avx2(panel, rule, out) };
        }
        self.fill_portable::<Separate>(panel, rule, out)
    }

    /// [`Kernel::fill_portable`] compiled for AVX2 + FMA, fused.
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2,fma")]
    fn fill_avx2(&self, panel: &Panel, rule: &Rule, out: &mut Nodes) -> usize {
        self.fill_portable::<Fused>(panel, rule, out)
    }

    #[inline(always)]
    fn fill_portable<R: Rounding>(&self, panel: &Panel, rule: &Rule, out: &mut Nodes) -> usize {
        match *panel {
            Panel::Head { t_max, ln_t_max } => self.fill_with(rule, out, |u, ln_u| {
                let (w, s_prime) = self.head::<R>(t_max * u, ln_t_max + ln_u);
                (w * t_max, s_prime)
            }),
            Panel::Log {
                lo,
                hi,
                at_lo,
                at_hi,
                ..
            } => {
                let l = hi - lo;
                match (at_lo, at_hi) {
                    (End::Root, End::Root) => self.fill_log::<R>(rule, out, |u| {
                        (lo + l * u * u * (3.0 - 2.0 * u), 6.0 * l * u * (1.0 - u))
                    }),
                    (End::Root, _) => {
                        self.fill_log::<R>(rule, out, |u| (lo + l * u * u, 2.0 * l * u))
                    }
                    (_, End::Root) => self.fill_log::<R>(rule, out, |u| {
                        (hi - l * (1.0 - u) * (1.0 - u), 2.0 * l * (1.0 - u))
                    }),
                    _ => self.fill_log::<R>(rule, out, |u| (lo + l * u, l)),
                }
            }
            Panel::Peak {
                centre,
                dir,
                gamma,
                xi_lo,
                xi_hi,
            } => {
                let w = xi_hi - xi_lo;
                self.fill_log::<R>(rule, out, |u| {
                    let e = fast::exp::<R>(xi_lo + w * u);
                    let (sinh, cosh) = (0.5 * (e - 1.0 / e), 0.5 * (e + 1.0 / e));
                    (centre + dir * gamma * sinh, w * gamma * cosh)
                })
            }
        }
    }

    /// [`Kernel::fill`] for a panel in v given its map u ↦ (v, dv/du).
    #[inline(always)]
    fn fill_log<R: Rounding>(
        &self,
        rule: &Rule,
        out: &mut Nodes,
        map: impl Fn(f64) -> (f64, f64),
    ) -> usize {
        self.fill_with(rule, out, |u, _| {
            let (v, jac) = map(u);
            let (w, s_prime) = self.log::<R>(v);
            (w * jac, s_prime)
        })
    }

    #[inline(always)]
    fn fill_with(
        &self,
        rule: &Rule,
        out: &mut Nodes,
        node: impl Fn(f64, f64) -> (f64, f64),
    ) -> usize {
        let n = rule.nodes.len();
        let nodes = rule.nodes.iter().zip(&rule.ln_nodes).zip(&rule.weights);
        let slots = out.weight[..n].iter_mut().zip(&mut out.s_prime[..n]);
        for (((&u, &ln_u), &rule_w), (w_out, s_out)) in nodes.zip(slots) {
            let (w, s_prime) = node(u, ln_u);
            *w_out = rule_w * w;
            *s_out = s_prime;
        }
        n
    }
}

/// The most points of any fixed rule.
const MAX_ORDER: usize = 49;
const _: () = {
    let all = [HEAD_GAUSS, LOG_GAUSS, PEAK_GAUSS, SOFT_GAUSS, PLAIN_GAUSS];
    let mut i = 0;
    while i < all.len() {
        assert!(2 * all[i] < MAX_ORDER);
        i += 1;
    }
};

/// One panel's nodes (see [`Kernel::fill`]) and σ_d there.
struct Nodes {
    weight: [f64; MAX_ORDER],
    s_prime: [f64; MAX_ORDER],
    sigma_nb: [f64; MAX_ORDER],
}

impl Nodes {
    fn new() -> Self {
        Nodes {
            weight: [0.0; MAX_ORDER],
            s_prime: [0.0; MAX_ORDER],
            sigma_nb: [0.0; MAX_ORDER],
        }
    }
}

/// The integrands in the two panel variables at one s.
struct Integrand<'a, C: ?Sized> {
    sigma: &'a C,
    kernel: Kernel,
}

impl<C: CrossSection + ?Sized> Integrand<'_, C> {
    /// In t = x^β: [C + H(x)·x/(βt)]·σ_d(s(1 − x)), given t and ln t.
    #[inline]
    fn head(&self, t: f64, ln_t: f64) -> f64 {
        let (w, s_prime) = self.kernel.head::<Separate>(t, ln_t);
        w * self.sigma.sigma_nb(s_prime)
    }

    /// In v = ln(1 − x): F(x)·(1 − x)·σ_d(s e^v).
    #[inline]
    fn log(&self, v: f64) -> f64 {
        let (w, s_prime) = self.kernel.log::<Separate>(v);
        w * self.sigma.sigma_nb(s_prime)
    }

    /// Σ w·f on one panel by the Kronrod and by the Gauss rule of a pair.
    #[inline]
    fn sums(&self, panel: &Panel, rule: &Rule, nodes: &mut Nodes) -> (f64, f64) {
        let n = self.kernel.fill(panel, rule, nodes);
        self.sigma
            .sigma_nb_many(&nodes.s_prime[..n], &mut nodes.sigma_nb[..n]);
        let (mut kronrod, mut gauss) = (0.0, 0.0);
        let terms = nodes.weight[..n].iter().zip(&nodes.sigma_nb[..n]);
        for ((w, sigma), ratio) in terms.zip(&rule.gauss_ratio) {
            let term = w * sigma;
            kronrod += term;
            gauss += ratio * term;
        }
        (kronrod, gauss)
    }
}

/// What [`Isr::setup`] finds at one s (no event passes where x_max ≤ 0).
struct Setup<'a> {
    kernel: Kernel,
    /// The cut's x_max, and the upper end actually integrated.
    x_max: f64,
    x_int: f64,
    /// The fixed path's breaks; None when it does not apply.
    panels: Option<Panels<'a>>,
}

/// The sorted breaks strictly inside (0, x_max) and the `last` one at x_max. The breaks
/// live in the caller's array on the stack (borrowed, not moved: an array of them moved
/// through `Setup` and its `Result` was five copies of a kilobyte a point).
struct Panels<'a> {
    breaks: &'a [Break],
    /// The head's limit in x set by peaks at or above √s ([`NEAR_ZERO_WIDTHS`]), and
    /// whether it must apply (a peak within the head's reach that is not a break).
    at_sqrt_s: Option<(f64, bool)>,
    /// Where the range starts: None from x = 0 (the head panel first), else a break inside
    /// (0, x_max), plain or graded towards a peak just before it (the far piece of
    /// [`Isr::observe_range`]).
    start: Option<Break>,
    last: Break,
}

impl Panels<'_> {
    /// The panels in order (the head in t = x^β first), handed to `emit`.
    fn for_each(&self, kernel: &Kernel, mut emit: impl FnMut(Panel)) {
        let breaks = self.breaks;
        let mut a = match self.start {
            Some(start) => start,
            None => {
                let singular_end = match self.last.end {
                    End::Plain => false,
                    End::Root => true,
                    End::Peak { gamma, offset } => {
                        pole_distance(gamma, offset) < (-self.last.v).min(HEAD_BEYOND_PEAK)
                    }
                };
                let mut x0 = head_end(breaks, self.last.x, singular_end);
                if let Some((x_limit, forced)) = self.at_sqrt_s
                    && (forced || x_limit < HEAD_PEAK_FRACTION * x0)
                {
                    x0 = x0.min(x_limit);
                }
                let ln_t_max = kernel.rad.beta() * x0.ln();
                emit(Panel::Head {
                    t_max: ln_t_max.exp(),
                    ln_t_max,
                });
                Break::new(x0, End::Plain)
            }
        };
        let at = |i: usize| match i.cmp(&breaks.len()) {
            std::cmp::Ordering::Less => Some(breaks[i]),
            std::cmp::Ordering::Equal => Some(self.last),
            std::cmp::Ordering::Greater => None,
        };
        let mut before_a = None;
        for i in 0..=breaks.len() {
            let b = at(i).unwrap_or(self.last);
            if b.x > a.x {
                let start = graded_from_zero(a, b.x, &mut emit);
                // A root start with a panel of its own is now the break before.
                if start.x != a.x {
                    before_a = Some(a);
                }
                log_panels(start, b, [before_a, at(i + 1)], &mut emit);
                a = start;
            }
            before_a = Some(a);
            a = b;
        }
    }
}

/// The start of an interval [a, b] more than twice as long as its distance from the soft
/// singularity at x = 0: a plain start becomes an end graded from x = 0 on the scale a
/// (v = −v_a sinh ξ: each piece as far from the singularity as it is long); a root start
/// first gets a panel [a, 2a] of its own. A peak start is graded from the peak already.
fn graded_from_zero(a: Break, b_x: f64, emit: &mut impl FnMut(Panel)) -> Break {
    if b_x <= 2.0 * a.x {
        return a;
    }
    // Graded from x = 0 (v = 0) on the scale of the start's own distance −v.
    let from_zero = |b: Break| Break {
        end: End::Peak {
            gamma: -b.v,
            offset: -b.v,
        },
        ..b
    };
    match a.end {
        End::Plain => from_zero(a),
        End::Root => {
            let doubled = Break::new(2.0 * a.x, End::Plain);
            log_panels(a, doubled, [None, None], emit);
            from_zero(doubled)
        }
        End::Peak { .. } => a,
    }
}

/// A point where σ_d changes character, in x, with v = ln(1 − x) (taken once: the panel
/// layout asks for it at every interval it bounds or neighbours).
#[derive(Debug, Clone, Copy)]
struct Break {
    x: f64,
    v: f64,
    end: End,
}

impl Break {
    /// A placeholder for the arrays breaks are collected into (never read).
    const UNSET: Break = Break {
        x: 0.0,
        v: 0.0,
        end: End::Plain,
    };

    fn new(x: f64, end: End) -> Self {
        Break {
            x,
            v: (-x).ln_1p(),
            end,
        }
    }
}

impl Isr {
    /// The default link: Kuraev–Fadin O(β²), no cut beyond the threshold, 1e-8 relative.
    pub fn new(scheme: Scheme, cuts: Cuts) -> Self {
        Isr {
            scheme,
            cuts,
            rel_tol: 1e-8,
        }
    }

    /// Set the relative accuracy target.
    ///
    /// # Errors
    /// A target outside [1e-14, 1e-2].
    pub fn with_rel_tol(mut self, rel_tol: f64) -> Result<Self, crate::ParamError> {
        if !(1e-14..=1e-2).contains(&rel_tol) {
            return Err(crate::ParamError::new(
                "isr_rel_tol",
                rel_tol,
                "1e-14 ≤ isr_rel_tol ≤ 1e-2",
            ));
        }
        self.rel_tol = rel_tol;
        Ok(self)
    }

    pub fn scheme(&self) -> Scheme {
        self.scheme
    }

    pub fn cuts(&self) -> &Cuts {
        &self.cuts
    }

    /// The same link with another radiator (for scheme comparisons).
    pub fn with_scheme(mut self, scheme: Scheme) -> Self {
        self.scheme = scheme;
        self
    }

    /// σ_obs(s) = ∫₀^{x_max} F(x, s) σ_d(s(1 − x)) dx for the dressed (or bare) line
    /// shape `sigma`: the function the scan unfolding calls with its current model.
    ///
    /// At or below the threshold σ_obs = 0. Allocation-free unless the fixed rules miss
    /// the target and the adaptive fallback runs.
    ///
    /// # Errors
    /// A minimum-mass cut at or above √s.
    pub fn observe<C: CrossSection + ?Sized>(
        &self,
        sigma: &C,
        s_gev2: f64,
    ) -> Result<Observed, IsrError> {
        self.observe_range(sigma, s_gev2, 0.0, 1.0)
    }

    /// The part of [`Isr::observe`] from x ∈ [x_lo, x_hi] (0 ≤ x_lo < x_hi ≤ 1, within
    /// the cuts), for the pieces [`Isr::observe_many`] splits it into. A peak just outside
    /// an end inside the range grades the panel there; an edge there is not looked for (the
    /// caller keeps its split clear of edges). `x_max` reports the cuts' limit.
    pub(super) fn observe_range<C: CrossSection + ?Sized>(
        &self,
        sigma: &C,
        s_gev2: f64,
        x_lo: f64,
        x_hi: f64,
    ) -> Result<Observed, IsrError> {
        let zero = |x_max| Observed {
            sigma_nb: 0.0,
            error_nb: 0.0,
            x_max,
            evaluations: 0,
            panels: 0,
            interpolated: false,
            status: Status::Converged,
        };
        let mut breaks = [Break::UNSET; MAX_BREAKS];
        let setup = self.setup(
            sigma.features(),
            sigma.threshold_s_gev2(),
            s_gev2,
            x_lo,
            x_hi,
            &mut breaks,
        )?;
        if setup.x_int <= x_lo {
            return Ok(zero(setup.x_max));
        }
        let integrand = Integrand {
            sigma,
            kernel: setup.kernel,
        };
        if let Some(panels) = &setup.panels
            && let Some(fixed) = self.fixed(&integrand, panels)
        {
            return Ok(Observed {
                x_max: setup.x_max,
                ..fixed
            });
        }
        Ok(Observed {
            x_max: setup.x_max,
            ..self.adaptive(&integrand, sigma.features(), x_lo, setup.x_int)
        })
    }

    /// The nodes of the fixed path at s for every line shape with these `features` and
    /// threshold: `visit(s′, w)` for each node of one rule, so that Σ w·σ_d(s′) is, with
    /// [`Order::High`], the value [`Isr::observe`] takes from its fixed path for any such σ_d,
    /// with [`Order::Low`] the value its error estimate compares with. A linear map of line
    /// shapes (the scan's response matrix) is then one pass over the nodes.
    ///
    /// Returns false, having visited nothing, where the fixed path does not apply (more
    /// breaks than it takes, a peak at √s); true, visiting nothing, where no event passes.
    ///
    /// # Errors
    /// As [`Isr::observe`].
    pub fn visit_nodes(
        &self,
        features: &[Feature],
        threshold_s_gev2: f64,
        s_gev2: f64,
        order: Order,
        mut visit: impl FnMut(f64, f64),
    ) -> Result<bool, IsrError> {
        let mut breaks = [Break::UNSET; MAX_VISIT_BREAKS];
        let setup = self.setup(features, threshold_s_gev2, s_gev2, 0.0, 1.0, &mut breaks)?;
        if setup.x_max <= 0.0 {
            return Ok(true);
        }
        let Some(panels) = &setup.panels else {
            return Ok(false);
        };
        let mut nodes = Nodes::new();
        panels.for_each(&setup.kernel, |p| {
            let rule = rules().rule(&p);
            let n = setup.kernel.fill(&p, rule, &mut nodes);
            let filled = nodes.weight[..n].iter().zip(&nodes.s_prime[..n]);
            for ((&w, &s_prime), &ratio) in filled.zip(&rule.gauss_ratio) {
                match order {
                    Order::High => visit(s_prime, w),
                    Order::Low if ratio != 0.0 => visit(s_prime, ratio * w),
                    Order::Low => {}
                }
            }
        });
        Ok(true)
    }

    /// The range, kernel and (when the fixed path applies) breaks at s, for x from `x_lo`
    /// to the cuts' limit or `x_hi`, whichever is lower; the breaks go into `breaks` (at
    /// most N: more send the point to the adaptive path).
    fn setup<'a, const N: usize>(
        &self,
        features: &[Feature],
        s_th: f64,
        s_gev2: f64,
        x_lo: f64,
        x_hi: f64,
        breaks: &'a mut [Break; N],
    ) -> Result<Setup<'a>, IsrError> {
        if !(s_gev2 > 0.0 && s_gev2.is_finite()) {
            return Err(IsrError::BadEnergy { s_gev2 });
        }
        let s_th = s_th.max(0.0);
        let x_max = self.cuts.x_limit(s_gev2, s_th)?;
        let kernel = Kernel::new(self.scheme, s_gev2);
        if x_max <= 0.0 {
            return Ok(Setup {
                kernel,
                x_max,
                x_int: 0.0,
                panels: None,
            });
        }
        // x = 1 exactly (s′ = 0) is a point the log variable cannot reach; the sliver
        // x > 1 − 1e-15 holds less than 1e-13 of any integrand that is finite at s′ → 0.
        let x_int = x_max.min(x_hi).min(1.0 - 1e-15);
        // The upper end behaves like a threshold only when the threshold set it.
        let threshold_end = x_int >= 1.0 - s_th / s_gev2 - 1e-12;
        let found = collect_breaks(features, s_gev2, x_lo, x_int, breaks);
        let breaks: &'a [Break; N] = breaks;
        let panels = found.map(|found| Panels {
            breaks: &breaks[..found.n],
            at_sqrt_s: found.at_sqrt_s,
            start: (x_lo > 0.0).then(|| Break::new(x_lo, found.before.unwrap_or(End::Plain))),
            last: Break::new(
                x_int,
                match (threshold_end, found.beyond) {
                    (true, _) => End::Root,
                    (false, Some(peak)) => peak,
                    (false, None) => End::Plain,
                },
            ),
        });
        Ok(Setup {
            kernel,
            x_max,
            x_int,
            panels,
        })
    }

    /// The fixed-rule path over `panels`; None when its error estimate misses the target.
    fn fixed<C: CrossSection + ?Sized>(
        &self,
        f: &Integrand<C>,
        panels: &Panels,
    ) -> Option<Observed> {
        let r = rules();
        let (mut value, mut error, mut evaluations, mut n) = (0.0, 0.0, 0, 0);
        let mut nodes = Nodes::new();
        panels.for_each(&f.kernel, |p| {
            let rule = r.rule(&p);
            let (hi, lo) = f.sums(&p, rule, &mut nodes);
            value += hi;
            error += (hi - lo).abs();
            evaluations += rule.nodes.len();
            n += 1;
        });
        (value.is_finite() && error <= self.rel_tol * value.abs()).then_some(Observed {
            sigma_nb: value,
            error_nb: error,
            x_max: panels.last.x,
            evaluations,
            panels: n,
            interpolated: false,
            status: Status::Converged,
        })
    }

    /// The adaptive fallback: GK21 in t on the head and in v on the rest, split at every
    /// feature and at multiples of each peak's width.
    fn adaptive<C: CrossSection + ?Sized>(
        &self,
        f: &Integrand<C>,
        features: &[Feature],
        x_lo: f64,
        x_max: f64,
    ) -> Observed {
        let s = f.kernel.s;
        let mut xs: Vec<f64> = Vec::new();
        for feat in features {
            match *feat {
                Feature::Edge { s_gev2 } => xs.push(1.0 - s_gev2 / s),
                Feature::Peak {
                    s_gev2,
                    m_gamma_gev2,
                } => xs.extend(
                    PEAK_STEPS
                        .iter()
                        .map(|k| 1.0 - (s_gev2 + k * m_gamma_gev2) / s),
                ),
            }
        }
        xs.retain(|&x| x > x_lo && x < x_max);
        // Without the head (x_lo > 0) the whole range is in v.
        let x0 = if x_lo > 0.0 {
            x_lo
        } else {
            xs.iter()
                .copied()
                .fold(x_max.min(HEAD_X_MAX), f64::min)
                .min(x_max)
        };
        let beta = f.kernel.rad.beta();
        let t_breaks: Vec<f64> = xs
            .iter()
            .filter(|&&x| x < x0)
            .map(|x| x.powf(beta))
            .collect();
        let v_breaks: Vec<f64> = xs.iter().map(|&x| (-x).ln_1p()).collect();
        let tol = Tolerance::relative(self.rel_tol);
        let head = if x_lo > 0.0 {
            Integral::ZERO
        } else {
            integrate(|t| f.head(t, t.ln()), 0.0, x0.powf(beta), &t_breaks, tol)
        };
        let tail = if x0 < x_max {
            integrate(
                |v| f.log(v),
                (-x_max).ln_1p(),
                (-x0).ln_1p(),
                &v_breaks,
                tol,
            )
        } else {
            Integral::ZERO
        };
        let status = match (head.status, tail.status) {
            (Status::Converged, st) => st,
            (st, _) => st,
        };
        Observed {
            sigma_nb: head.value + tail.value,
            error_nb: head.error + tail.error,
            x_max,
            evaluations: head.evaluations + tail.evaluations,
            panels: 0,
            interpolated: false,
            status,
        }
    }
}

/// What [`collect_breaks`] found besides the breaks it wrote.
struct Found {
    /// Breaks written.
    n: usize,
    /// The end a peak just beyond x_max makes there.
    beyond: Option<End>,
    /// The end a peak just before a range's start x_lo > 0 makes there.
    before: Option<End>,
    /// As [`Panels::at_sqrt_s`].
    at_sqrt_s: Option<(f64, bool)>,
}

/// The features strictly inside (0, x_max) as sorted breaks, the peak nearest beyond
/// x_max (as the end it makes there), and a peak at √s (see [`Panels::at_sqrt_s`]); None
/// if there are too many for the fixed path, or two peaks at or above √s compete for the
/// first log panel.
fn collect_breaks<const N: usize>(
    features: &[Feature],
    s: f64,
    x_lo: f64,
    x_max: f64,
    out: &mut [Break; N],
) -> Option<Found> {
    let mut n = 0;
    let mut at_sqrt_s: Option<(f64, bool)> = None;
    // The peaks beyond x_max and before x_lo with the nearest pole, by its distance
    // √(offset² + γ²) in v.
    let mut beyond: Option<(f64, End)> = None;
    let mut before: Option<(f64, End)> = None;
    let nearest = |slot: &mut Option<(f64, End)>, gamma: f64, offset: f64| {
        let distance = pole_distance(gamma, offset);
        if slot.is_none_or(|(d, _)| distance < d) {
            *slot = Some((distance, End::Peak { gamma, offset }));
        }
    };
    let (s_end, s_start) = (s * (1.0 - x_max), s * (1.0 - x_lo));
    for feat in features {
        let (s_f, end, width_x) = match *feat {
            Feature::Edge { s_gev2 } => (s_gev2, End::Root, 0.0),
            Feature::Peak {
                s_gev2,
                m_gamma_gev2,
            } => (
                s_gev2,
                End::Peak {
                    gamma: m_gamma_gev2 / s_gev2,
                    offset: 0.0,
                },
                m_gamma_gev2 / s,
            ),
        };
        let x = 1.0 - s_f / s;
        // A peak at √s (below within NEAR_ZERO_WIDTHS, above within ABOVE_WIDTHS of its
        // widths) limits the head panel to a fraction of its poles' distance (a peak above
        // only where its poles are nearer than the head's end: farther, t = x^β puts them
        // well off the head); a peak inside the head is left to it.
        let reach = if x > 0.0 {
            NEAR_ZERO_WIDTHS
        } else {
            ABOVE_WIDTHS
        };
        if width_x > 0.0 && x.abs() < reach * width_x {
            let limit = HEAD_PEAK_FRACTION * (x * x + width_x * width_x).sqrt();
            let forced = x > 0.0;
            at_sqrt_s = Some(at_sqrt_s.map_or((limit, forced), |(l, f): (f64, bool)| {
                (l.min(limit), f || forced)
            }));
            if x <= limit {
                continue;
            }
        }
        if x <= x_lo {
            if let End::Peak { gamma, .. } = end
                && x_lo > 0.0
            {
                nearest(
                    &mut before,
                    gamma,
                    ((s_f - s_start) / s_start).max(0.0).ln_1p(),
                );
            }
            continue;
        }
        if x >= x_max * (1.0 - 1e-12) {
            if let End::Peak { gamma, .. } = end
                && s_f > 0.0
            {
                nearest(&mut beyond, gamma, ((s_end - s_f) / s_f).max(0.0).ln_1p());
            }
            continue;
        }
        if n == N {
            return None;
        }
        out[n] = Break::new(x, end);
        n += 1;
    }
    out[..n].sort_unstable_by(|a, b| a.x.total_cmp(&b.x));
    Some(Found {
        n,
        beyond: beyond.map(|(_, end)| end),
        before: before.map(|(_, end)| end),
        at_sqrt_s,
    })
}

/// Where the head panel (in t = x^β) ends: half-way to the first break (or to an x_max
/// with a threshold there or a peak beyond: t = x^β squeezes everything beyond x_max
/// against t_max, x = 2x_max to 1.05 t_max), at most [`HEAD_X_MAX`].
fn head_end(breaks: &[Break], x_max: f64, singular_end: bool) -> f64 {
    let first = breaks.first().map_or(f64::INFINITY, |b| 0.5 * b.x);
    let end = if singular_end { 0.5 * x_max } else { x_max };
    first.min(HEAD_X_MAX).min(end)
}

/// An edge beyond a panel's end blocks the cheaper rules (`Panel::Log::clear`) within this
/// fraction of the interval's length (a peak within the whole length): its √ is milder than
/// a pole. (0 gave 4% fewer evaluations on the grids with the same results; 0.25 keeps a
/// margin for close pairs of thresholds.)
const EDGE_CLEAR: f64 = 0.25;
/// Longest panel in v = ln(1 − x) one fixed rule is trusted with (a factor e⁴ in s′).
const MAX_LOG_PANEL: f64 = 4.0;
/// The most pieces one break-to-break interval is cut into.
const MAX_PIECES: usize = 8;

/// Panels in v for x ∈ [a, b], handed to `emit`. An interval with a peak at one end is
/// graded from the peak ([`peak_panels`]); with a peak at both ends, or a peak and a root,
/// it is cut in the middle so that each map handles one kind of end. The rest is cut into
/// pieces no longer than [`MAX_LOG_PANEL`].
fn log_panels(a: Break, b: Break, beyond: [Option<Break>; 2], emit: &mut impl FnMut(Panel)) {
    // v = ln(1 − x) decreases with x: the lower v end is b.
    let (lo, hi) = (b.v, a.v);
    // The distance in v from the interval to a break beyond it (to a peak's pole; distances
    // of order 1 and below: √(a² + b²) without hypot's scaling).
    let gap = |n: &Break| {
        let gap = (lo - n.v).max(n.v - hi).max(0.0);
        match n.end {
            End::Peak { gamma, offset } => (gap * gap + gamma * gamma + offset * offset).sqrt(),
            _ => gap,
        }
    };
    // Whether the breaks beyond both ends are at least the interval's length away: only then
    // may its plain pieces take the cheaper rules (`Rules::pair`).
    let clear = beyond.iter().flatten().all(|n| match n.end {
        End::Peak { .. } => gap(n) >= hi - lo,
        _ => gap(n) >= EDGE_CLEAR * (hi - lo),
    });
    let [gap_hi, gap_lo] = beyond.map(|n| n.as_ref().map_or(f64::INFINITY, gap));
    // An end graded from a pole (a peak at or beyond it, the soft singularity) that lies at
    // least the interval's length away gains nothing from grading: plain rules see ρ ≥ 5.8
    // there. (A far peak beyond x_max used to cost a graded panel of its own.)
    let near = |end: End| match end {
        End::Peak { gamma, offset } if pole_distance(gamma, offset) >= hi - lo => End::Plain,
        other => other,
    };
    let (at_lo, at_hi) = (near(b.end), near(a.end));
    let mid = 0.5 * (lo + hi);
    match (at_lo, at_hi) {
        (End::Peak { gamma, offset }, End::Plain) => {
            peak_panels(lo, hi, gamma, offset, gap_hi, emit)
        }
        (End::Plain, End::Peak { gamma, offset }) => {
            peak_panels(hi, lo, gamma, offset, gap_lo, emit)
        }
        (
            End::Peak { gamma, offset },
            End::Peak {
                gamma: g,
                offset: o,
            },
        ) => {
            peak_panels(lo, mid, gamma, offset, f64::INFINITY, emit);
            peak_panels(hi, mid, g, o, f64::INFINITY, emit);
        }
        (End::Peak { gamma, offset }, _) => {
            peak_panels(lo, mid, gamma, offset, f64::INFINITY, emit);
            plain_panels(mid, hi, End::Plain, at_hi, clear, emit);
        }
        (_, End::Peak { gamma, offset }) => {
            plain_panels(lo, mid, at_lo, End::Plain, clear, emit);
            peak_panels(hi, mid, gamma, offset, f64::INFINITY, emit);
        }
        _ => plain_panels(lo, hi, at_lo, at_hi, clear, emit),
    }
}

/// [lo, hi] in pieces no longer than [`MAX_LOG_PANEL`] (at most [`MAX_PIECES`]).
fn plain_panels(
    lo: f64,
    hi: f64,
    at_lo: End,
    at_hi: End,
    clear: bool,
    emit: &mut impl FnMut(Panel),
) {
    let pieces = (((hi - lo) / MAX_LOG_PANEL).ceil() as usize).clamp(1, MAX_PIECES);
    let step = (hi - lo) / pieces as f64;
    for k in 0..pieces {
        let p_lo = lo + k as f64 * step;
        let p_hi = if k + 1 == pieces { hi } else { p_lo + step };
        emit(Panel::Log {
            lo: p_lo,
            hi: p_hi,
            at_lo: if k == 0 { at_lo } else { End::Plain },
            at_hi: if k + 1 == pieces { at_hi } else { End::Plain },
            clear,
        });
    }
}

/// The interval from `near` (a peak end) to `far` in v, graded from the peak of half-width
/// `gamma`: v = centre ± γ sinh ξ with the centre `offset` beyond `near`, cut into pieces of
/// at most [`MAX_XI`] in ξ. A structure `gap` beyond `far` sits δ = asinh((d + gap)/γ) − ξ_far
/// beyond the last piece's end in ξ (d = the far end's distance from the centre): the
/// sinh map squeezes it against that end. Below [`FAR_GAP_XI`] the last piece is cut to
/// [`FAR_PIECE`]·δ long (ρ ≥ 2 for it there; the rest sees it (FAR_PIECE + 1)·δ beyond).
fn peak_panels(
    near: f64,
    far: f64,
    gamma: f64,
    offset: f64,
    gap: f64,
    emit: &mut impl FnMut(Panel),
) {
    let dir = if far > near { 1.0 } else { -1.0 };
    let centre = near - dir * offset;
    let reach = offset + (far - near).abs();
    let xi_0 = (offset / gamma).asinh();
    let xi_1 = (reach / gamma).asinh();
    let delta = ((reach + gap) / gamma).asinh() - xi_1;
    let mut emit_piece = |xi_lo: f64, xi_hi: f64| {
        emit(Panel::Peak {
            centre,
            dir,
            gamma,
            xi_lo,
            xi_hi,
        })
    };
    let split = if delta < FAR_GAP_XI && FAR_PIECE * delta < 0.5 * (xi_1 - xi_0) {
        xi_1 - FAR_PIECE * delta
    } else {
        xi_1
    };
    let pieces = ((split - xi_0) / MAX_XI).ceil().max(1.0);
    let step = (split - xi_0) / pieces;
    for k in 0..pieces as usize {
        let xi_lo = xi_0 + k as f64 * step;
        emit_piece(
            xi_lo,
            if k + 1 == pieces as usize {
                split
            } else {
                xi_lo + step
            },
        );
    }
    if split < xi_1 {
        emit_piece(split, xi_1);
    }
}

/// A structure beyond a peak panel's far end closer than this in ξ (ln 2: the next break
/// at twice the far end's distance from the peak, the case [`MAX_XI`] was sized for) gets
/// a short last piece.
const FAR_GAP_XI: f64 = std::f64::consts::LN_2;
/// The short last piece's length in units of its distance δ from the structure beyond
/// (z = 1 + 2/FAR_PIECE = 1.25 for the structure: Bernstein ρ = 2, ρ⁻³⁶ ≈ 1.5e-11 for the
/// 18-point estimate).
const FAR_PIECE: f64 = 8.0;

/// The radiated link: σ_obs(s) of the wrapped (dressed) cross-section.
pub struct Radiated<C> {
    inner: C,
    isr: Isr,
}

impl<C: CrossSection> Radiated<C> {
    pub fn new(inner: C, isr: Isr) -> Self {
        Radiated { inner, isr }
    }

    /// The wrapped line shape σ_d.
    pub fn inner(&self) -> &C {
        &self.inner
    }

    pub fn isr(&self) -> &Isr {
        &self.isr
    }

    /// The full record at s (value, error, x_max used, status).
    ///
    /// # Errors
    /// As [`Isr::observe`].
    pub fn observe(&self, s_gev2: f64) -> Result<Observed, IsrError> {
        self.isr.observe(&self.inner, s_gev2)
    }
}

impl<C: CrossSection> CrossSection for Radiated<C> {
    /// σ_obs in nb; 0 where no event passes the cuts (a minimum mass above √s).
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        self.observe(s_gev2).map_or(0.0, |o| o.sigma_nb)
    }
    fn threshold_s_gev2(&self) -> f64 {
        self.inner.threshold_s_gev2()
    }
    fn features(&self) -> &[Feature] {
        self.inner.features()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::process::FermionPair;

    /// A Breit–Wigner of mass `m` and width `g` over the μμ continuum (nb).
    struct PeakOverContinuum {
        m: f64,
        g: f64,
        features: Vec<Feature>,
    }

    impl PeakOverContinuum {
        fn new(m: f64, g: f64) -> Self {
            let mu = FermionPair::muon();
            let mut features = mu.features().to_vec();
            features.push(Feature::Edge {
                s_gev2: mu.threshold_s_gev2(),
            });
            features.push(Feature::Peak {
                s_gev2: m * m,
                m_gamma_gev2: m * g,
            });
            PeakOverContinuum { m, g, features }
        }
    }

    impl CrossSection for PeakOverContinuum {
        fn sigma_nb(&self, s: f64) -> f64 {
            let mg = self.m * self.g;
            FermionPair::muon().sigma_nb(s)
                * (1.0 + 50.0 * mg * mg / ((s - self.m * self.m).powi(2) + mg * mg))
        }
        fn threshold_s_gev2(&self) -> f64 {
            FermionPair::muon().threshold_s_gev2()
        }
        fn features(&self) -> &[Feature] {
            &self.features
        }
    }

    /// The soft singularity's ρ through the square-cubic map against the roots found by
    /// Newton's method from a grid of complex starts (an independent route to the same
    /// preimages), and through the plain map against the closed form.
    #[test]
    fn soft_rho_finds_the_nearest_preimage() {
        for (lo, hi) in [(-1.2, -0.2), (-2.0, -1.0), (-5.0, -4.0), (-0.35, -0.05)] {
            let panel = Panel::Log {
                lo,
                hi,
                at_lo: End::Root,
                at_hi: End::Root,
                clear: true,
            };
            // v(z) = lo + l (1 + z)²(2 − z)/4 = 0.
            let l = hi - lo;
            let f = |z: Complex64| lo + l * (1.0 + z) * (1.0 + z) * (2.0 - z) / 4.0;
            let df = |z: Complex64| l * (1.0 + z) * (3.0 - 3.0 * z) / 4.0;
            let mut best = f64::INFINITY;
            for re in [-3.0, -1.0, 0.5, 2.0, 3.0] {
                for im in [-2.0, -0.5, 0.5, 2.0] {
                    let mut z = Complex64::new(re, im);
                    for _ in 0..100 {
                        z -= f(z) / df(z);
                    }
                    if f(z).norm() < 1e-12 {
                        best = best.min(bernstein_rho(z));
                    }
                }
            }
            let got = panel.soft_rho();
            assert!(
                (got / best - 1.0).abs() < 1e-10,
                "[{lo}, {hi}]: {got} vs {best}"
            );
        }
        let plain = Panel::Log {
            lo: -3.0,
            hi: -1.0,
            at_lo: End::Plain,
            at_hi: End::Plain,
            clear: true,
        };
        // v = 0 at z = 2: ρ = 2 + √3.
        assert!((plain.soft_rho() - (2.0 + 3f64.sqrt())).abs() < 1e-12);
    }

    /// The AVX2 copy of the node loops must give the bits of the portable copy with fused
    /// steps (there a correctly rounded library fma), and the portable copy with separate
    /// steps (CPUs without FMA) the same to a few ulp (the claims in [`Kernel::fill`]):
    /// every panel kind and map of a full-VP line shape, all rules.
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn node_loops_give_the_same_bits_with_and_without_avx2() {
        if !crate::numeric::fast::avx2_fma() {
            return;
        }
        let dressed = crate::vp::Dressed::new(FermionPair::muon(), crate::vp::Vp::full());
        let isr = Isr::new(Scheme::KuraevFadin2, Cuts::NONE);
        let (mut kinds, mut nodes) = (std::collections::HashSet::new(), 0);
        for sqrt_s in [2.0, 3.0969, 3.2, 4.0, 7.0, 10.0, 10.58] {
            let s: f64 = sqrt_s * sqrt_s;
            let mut breaks = [Break::UNSET; MAX_BREAKS];
            let setup = isr
                .setup(
                    dressed.features(),
                    dressed.threshold_s_gev2(),
                    s,
                    0.0,
                    1.0,
                    &mut breaks,
                )
                .unwrap();
            let panels = setup.panels.as_ref().unwrap();
            let (mut a, mut b, mut c) = (Nodes::new(), Nodes::new(), Nodes::new());
            panels.for_each(&setup.kernel, |p| {
                kinds.insert(std::mem::discriminant(&p));
                let rule = rules().rule(&p);
                let n = setup.kernel.fill_portable::<Fused>(&p, rule, &mut a);
                // SAFETY: AVX2 and FMA were detected above.
                assert_eq!(n, unsafe { setup.kernel.fill_avx2(&p, rule, &mut b) });
                assert_eq!(n, setup.kernel.fill_portable::<Separate>(&p, rule, &mut c));
                for i in 0..n {
                    assert_eq!(a.weight[i].to_bits(), b.weight[i].to_bits(), "{p:?}");
                    assert_eq!(a.s_prime[i].to_bits(), b.s_prime[i].to_bits(), "{p:?}");
                    // 64 ulp: a few series of ~12 steps, each rounded once more.
                    let close = |x: f64, y: f64| (x - y).abs() <= 64.0 * f64::EPSILON * x.abs();
                    assert!(close(a.weight[i], c.weight[i]), "{p:?} node {i}");
                    assert!(close(a.s_prime[i], c.s_prime[i]), "{p:?} node {i}");
                }
                nodes += n;
            });
        }
        assert_eq!(kinds.len(), 3, "head, log and peak panels all visited");
        assert!(nodes > 1000, "{nodes} nodes compared");
    }

    #[test]
    fn fixed_path_agrees_with_the_adaptive_one_with_sqrt_s_on_a_peak() {
        // √s within a few widths of a peak (a scan across a resonance): the fixed path
        // limits its head panel to a fraction of the width and grades from the peak. The
        // adaptive GK21 path (its own error control, asked for 1e-11) is the reference;
        // 1e-9 is 10× the fixed path's 1e-8 target with margin for the reference.
        for (m, g) in [(5.2, 0.04), (3.0969, 9.3e-5)] {
            let sigma = PeakOverContinuum::new(m, g);
            let isr = Isr::new(Scheme::KuraevFadin2, Cuts::NONE.with_x_max(0.3).unwrap());
            for k in [-7.9, -3.0, -1.0, -0.2, 0.0, 0.1, 0.5, 2.0, 7.5] {
                let sqrt_s: f64 = m + k * g;
                let s = sqrt_s * sqrt_s;
                let fixed = isr.observe(&sigma, s).unwrap();
                let mut breaks = [Break::UNSET; MAX_BREAKS];
                let setup = isr
                    .setup(
                        sigma.features(),
                        sigma.threshold_s_gev2(),
                        s,
                        0.0,
                        1.0,
                        &mut breaks,
                    )
                    .unwrap();
                let reference = Isr {
                    rel_tol: 1e-11,
                    ..isr
                }
                .adaptive(
                    &Integrand {
                        sigma: &sigma,
                        kernel: setup.kernel,
                    },
                    sigma.features(),
                    0.0,
                    setup.x_int,
                );
                let rel = (fixed.sigma_nb / reference.sigma_nb - 1.0).abs();
                let f = Integrand {
                    sigma: &sigma,
                    kernel: setup.kernel,
                };
                let taken = setup.panels.as_ref().and_then(|p| isr.fixed(&f, p));
                assert_eq!(taken, Some(fixed), "fixed path not taken at √s = {sqrt_s}");
                assert!(
                    rel < 1e-9,
                    "M={m} k={k}: fixed {} ({} evaluations) vs adaptive {}: {rel:e}",
                    fixed.sigma_nb,
                    fixed.evaluations,
                    reference.sigma_nb
                );
            }
        }
    }
}
