//! σ_obs at many energies at once, sharing the work the energies have in common.
//!
//! Where the lower end of s′ is the same for every energy of a run (the threshold or a
//! minimum-mass cut sets it, not an x_max or photon-energy cut), split s′ at s_c below the
//! run: σ_obs(s) = near(s) + far(s), near from s′ ∈ [s_c, s] and
//!
//!   far(s) = ∫_{s_low}^{s_c} F(1 − s′/s, s) σ_d(s′) ds′/s.
//!
//! For s above s_c, F(1 − s′/s, s) is analytic in s (its singularities sit at s = s′ ≤ s_c),
//! so far(s) is analytic on the run and its Chebyshev interpolant from [`NODES`] values
//! converges geometrically: with the run's s ∈ [s_a, s_a(1 + [`RUN_SPAN`])] and
//! s_c ≈ s_a/(1 + [`SPLIT_GAP`]) the nearest singularity gives a Bernstein ρ ≈ 3.6 on the run,
//! ρ⁻²⁰ ≈ 7e-12 (Trefethen, *Approximation Theory and Approximation Practice*, 2013,
//! Thm. 8.2). The far part, the expensive one over every resonance and threshold below s_c,
//! is then paid [`NODES`] times per run instead of once per energy; the near part is an
//! ISR integral up to x ≈ 0.05–0.15 per energy.
//!
//! The error of a point is the near part's estimate, the largest of the far values' own
//! estimates, and the interpolant's: the size of its last two Chebyshev coefficients
//! (they decay as ρ⁻ʲ; the truncation is of the order of the first one left out: common
//! practice, e.g. Trefethen 2013, ch. 8). A point whose total misses the accuracy target,
//! and every point of a run too short to pay for its nodes, is integrated on its own.

use super::{Isr, IsrError, Observed};
use crate::numeric::Status;
use crate::process::{CrossSection, Feature};
use rayon::prelude::*;

/// Chebyshev nodes of the far part per run.
const NODES: usize = 20;
/// A run covers s ∈ [s_a, s_a(1 + RUN_SPAN)].
const RUN_SPAN: f64 = 0.1;
/// The split s_c starts at s_a/(1 + SPLIT_GAP) (the near part reaches x ≈ 0.05–0.15).
const SPLIT_GAP: f64 = 0.05;
/// A run of fewer energies than this is integrated point by point (the far nodes would
/// cost more than they save).
const MIN_RUN: usize = 2 * NODES;
/// The split keeps this relative distance in s from any threshold or cusp (a √ edge at a
/// panel's end is integrated, but slowly); it moves down in such steps until clear.
const EDGE_CLEARANCE: f64 = 0.01;
/// ... and this many widths from any peak.
const PEAK_CLEARANCE_WIDTHS: f64 = 64.0;

impl Isr {
    /// σ_obs at every s of `s_gev2` (any order), each as [`Isr::observe`] would give it
    /// within the accuracy target: runs of nearby energies share the part of the integral
    /// far below them (see the module notes). `evaluations` of a point in a run counts its
    /// own and its share of the run's.
    pub fn observe_many<C: CrossSection + ?Sized>(
        &self,
        sigma: &C,
        s_gev2: &[f64],
    ) -> Vec<Result<Observed, IsrError>> {
        let mut order: Vec<usize> = (0..s_gev2.len()).collect();
        order.sort_by(|&i, &j| s_gev2[i].total_cmp(&s_gev2[j]));
        let runs = self.runs(sigma, s_gev2, &order);
        let mut out: Vec<Option<Result<Observed, IsrError>>> = vec![None; s_gev2.len()];
        let done: Vec<Vec<(usize, Result<Observed, IsrError>)>> = runs
            .par_iter()
            .map(|run| match run.split {
                Some(s_c) => self.observe_run(sigma, s_gev2, &run.points, s_c),
                None => run
                    .points
                    .par_iter()
                    .map(|&i| (i, self.observe(sigma, s_gev2[i])))
                    .collect(),
            })
            .collect();
        for (i, r) in done.into_iter().flatten() {
            out[i] = Some(r);
        }
        out.into_iter()
            .zip(s_gev2)
            .map(|(r, &s)| r.unwrap_or_else(|| self.observe(sigma, s)))
            .collect()
    }

    /// The energies (indices in increasing s) cut into runs, each with its split s_c where
    /// sharing pays.
    fn runs<C: CrossSection + ?Sized>(&self, sigma: &C, s: &[f64], order: &[usize]) -> Vec<Run> {
        let th = sigma.threshold_s_gev2().max(0.0);
        // The lower end of s′ at s where no x_max or photon cut binds; None otherwise.
        let fixed_low = |s: f64| -> Option<f64> {
            let x = self.cuts().x_limit(s, th).ok()?;
            let open = self.cuts().x_limit_without_upper(s, th);
            (x > 0.0 && x >= open - 1e-12).then_some(s * (1.0 - open))
        };
        let mut runs = Vec::new();
        let mut k = 0;
        while k < order.len() {
            let s_a = s[order[k]];
            let end = s_a * (1.0 + RUN_SPAN);
            let mut n = order[k..].iter().take_while(|&&i| s[i] <= end).count();
            let low = fixed_low(s_a);
            let split = low.and_then(|low| {
                // The run's points must share the lower end.
                n = order[k..k + n]
                    .iter()
                    .take_while(|&&i| {
                        fixed_low(s[i]).is_some_and(|l| (l - low).abs() <= 1e-9 * low)
                    })
                    .count();
                clear_split(sigma.features(), s_a / (1.0 + SPLIT_GAP), low)
            });
            let n = n.max(1);
            runs.push(Run {
                points: order[k..k + n].to_vec(),
                split: split.filter(|_| n >= MIN_RUN),
            });
            k += n;
        }
        runs
    }

    /// One run with its split at `s_c`: the far part at the Chebyshev nodes, then each point.
    fn observe_run<C: CrossSection + ?Sized>(
        &self,
        sigma: &C,
        s: &[f64],
        points: &[usize],
        s_c: f64,
    ) -> Vec<(usize, Result<Observed, IsrError>)> {
        let (lo, hi) = (s[points[0]], s[points[points.len() - 1]]);
        let (mid, half) = (0.5 * (hi + lo), 0.5 * (hi - lo));
        let far_at = |s_k: f64| self.observe_range(sigma, s_k, 1.0 - s_c / s_k, 1.0);
        let far: Vec<Result<Observed, IsrError>> = (0..NODES)
            .into_par_iter()
            .map(|k| far_at(mid + half * chebyshev_node(k)))
            .collect();
        let pointwise = || {
            points
                .par_iter()
                .map(|&i| (i, self.observe(sigma, s[i])))
                .collect()
        };
        let Ok(far) = far.into_iter().collect::<Result<Vec<Observed>, IsrError>>() else {
            return pointwise();
        };
        if far.iter().any(|o| o.status != Status::Converged) {
            return pointwise();
        }
        let values: Vec<f64> = far.iter().map(|o| o.sigma_nb).collect();
        let series = Chebyshev::fit(&values);
        let far_error = far.iter().map(|o| o.error_nb).fold(0.0, f64::max) + series.tail();
        let far_evaluations: usize = far.iter().map(|o| o.evaluations).sum();
        let share = far_evaluations.div_ceil(points.len());
        points
            .par_iter()
            .map(|&i| {
                let s_i = s[i];
                let near = match self.observe_range(sigma, s_i, 0.0, 1.0 - s_c / s_i) {
                    Ok(near) => near,
                    Err(e) => return (i, Err(e)),
                };
                let u = if half > 0.0 { (s_i - mid) / half } else { 0.0 };
                let value = near.sigma_nb + series.eval(u);
                let error = near.error_nb + far_error;
                let r = if near.status == Status::Converged
                    && value.is_finite()
                    && error <= self.rel_tol * value.abs()
                {
                    Ok(Observed {
                        sigma_nb: value,
                        error_nb: error,
                        evaluations: near.evaluations + share,
                        ..near
                    })
                } else {
                    self.observe(sigma, s_i)
                };
                (i, r)
            })
            .collect()
    }
}

/// Consecutive energies (indices) and, where they share the far part, the split s_c.
struct Run {
    points: Vec<usize>,
    split: Option<f64>,
}

/// The first of s_c, s_c(1 − c), s_c(1 − c)², … (c = [`EDGE_CLEARANCE`], at most 8 steps)
/// clear of every feature and above the lower end `low` by the same gap; None if none is.
fn clear_split(features: &[Feature], s_c: f64, low: f64) -> Option<f64> {
    (0..8)
        .map(|k| s_c * (1.0 - EDGE_CLEARANCE).powi(k))
        .take_while(|&c| c > low * (1.0 + SPLIT_GAP))
        .find(|&c| {
            features.iter().all(|f| match *f {
                Feature::Edge { s_gev2 } => (s_gev2 - c).abs() >= EDGE_CLEARANCE * c,
                Feature::Peak {
                    s_gev2,
                    m_gamma_gev2,
                } => (s_gev2 - c).abs() >= PEAK_CLEARANCE_WIDTHS * m_gamma_gev2,
            })
        })
}

/// The k-th Chebyshev point of the first kind on [−1, 1] (of [`NODES`]).
fn chebyshev_node(k: usize) -> f64 {
    (std::f64::consts::PI * (k as f64 + 0.5) / NODES as f64).cos()
}

/// A Chebyshev series Σ c_j T_j(u) on [−1, 1].
struct Chebyshev {
    c: [f64; NODES],
}

impl Chebyshev {
    /// The interpolant through `values` at the [`chebyshev_node`]s (discrete cosine
    /// transform of the first kind).
    fn fit(values: &[f64]) -> Self {
        let n = NODES as f64;
        let mut c = [0.0; NODES];
        for (j, cj) in c.iter_mut().enumerate() {
            let sum: f64 = values
                .iter()
                .enumerate()
                .map(|(k, f)| f * (std::f64::consts::PI * j as f64 * (k as f64 + 0.5) / n).cos())
                .sum();
            *cj = if j == 0 { sum / n } else { 2.0 * sum / n };
        }
        Chebyshev { c }
    }

    /// The size of the last two coefficients: the interpolant's error estimate.
    fn tail(&self) -> f64 {
        self.c[NODES - 1].abs() + self.c[NODES - 2].abs()
    }

    /// Σ c_j T_j(u) by Clenshaw's recurrence.
    fn eval(&self, u: f64) -> f64 {
        let (mut b1, mut b2) = (0.0, 0.0);
        for &cj in self.c[1..].iter().rev() {
            (b1, b2) = (2.0 * u * b1 - b2 + cj, b1);
        }
        u * b1 - b2 + self.c[0]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The interpolant reproduces a polynomial of degree < NODES to rounding and an
    /// analytic function within Trefethen's bound (2013, Thm. 8.2): 1/(2 − u) is analytic
    /// inside the Bernstein ellipse of ρ = 2 + √3; on the one of ρ = 3.5 (semi-axis 1.893)
    /// it is at most M = 1/(2 − 1.893), and |f − p| ≤ 4Mρ⁻ⁿ/(ρ − 1), n = 20.
    #[test]
    fn chebyshev_interpolant_converges_as_theory_says() {
        let nodes: Vec<f64> = (0..NODES).map(chebyshev_node).collect();
        let poly = |u: f64| 3.0 - u + 0.5 * u.powi(7) - 2.0 * u.powi(19);
        let p = Chebyshev::fit(&nodes.iter().map(|&u| poly(u)).collect::<Vec<_>>());
        let f = |u: f64| 1.0 / (2.0 - u);
        let g = Chebyshev::fit(&nodes.iter().map(|&u| f(u)).collect::<Vec<_>>());
        let rho: f64 = 3.5;
        let m = 1.0 / (2.0 - 0.5 * (rho + 1.0 / rho));
        let bound = 4.0 * m * rho.powi(-(NODES as i32)) / (rho - 1.0);
        for k in 0..=200 {
            let u = -1.0 + 0.01 * k as f64;
            assert!((p.eval(u) - poly(u)).abs() < 1e-13, "u = {u}");
            assert!((g.eval(u) - f(u)).abs() < bound, "u = {u}");
        }
        assert!(g.tail() < 1e-10 && g.tail() > 1e-14, "tail {}", g.tail());
    }
}
