//! Invented scans for tests and demos: a known dressed line shape is pushed through the
//! forward chain and turned into counts with seeded Poisson noise.
//!
//! Everything here is an invented scenario, not a measurement.

use super::data::{LuminosityInput, ScanPoint};
use super::forward::ForwardChain;
use crate::process::CrossSection;

/// A small seeded generator: splitmix64 (Steele, Lea, Flood, "Fast splittable
/// pseudorandom number generators", OOPSLA 2014), enough for test noise.
#[derive(Debug, Clone)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        SplitMix64 { state: seed }
    }

    pub fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in the open interval (0, 1).
    pub fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// A Poisson variate with mean `mean` ≥ 0.
    ///
    /// Knuth's product of uniforms below mean 30; above, the transformed rejection with
    /// squeeze "PTRS" of W. Hörmann, Insurance Math. Econom. 12 (1993) 39.
    pub fn poisson(&mut self, mean: f64) -> u64 {
        if mean <= 0.0 {
            return 0;
        }
        if mean < 30.0 {
            let limit = (-mean).exp();
            let mut k = 0;
            let mut p = self.uniform();
            while p > limit {
                k += 1;
                p *= self.uniform();
            }
            return k;
        }
        let slam = mean.sqrt();
        let loglam = mean.ln();
        let b = 0.931 + 2.53 * slam;
        let a = -0.059 + 0.02483 * b;
        let inv_alpha = 1.1239 + 1.1328 / (b - 3.4);
        let vr = 0.9277 - 3.6224 / (b - 2.0);
        loop {
            let u = self.uniform() - 0.5;
            let v = self.uniform();
            let us = 0.5 - u.abs();
            let k = ((2.0 * a / us + b) * u + mean + 0.43).floor();
            if us >= 0.07 && v <= vr {
                return k as u64;
            }
            if k < 0.0 || (us < 0.013 && v > us) {
                continue;
            }
            let lhs = (v * inv_alpha / (a / (us * us) + b)).ln();
            let rhs = -mean + k * loglam - ln_factorial(k);
            if lhs <= rhs {
                return k as u64;
            }
        }
    }
}

/// ln k!: a direct sum below 20, else the Stirling series of ln Γ(k + 1) to 1/(1260 z⁵)
/// (truncation error < 1/(1680 z⁷) ≈ 3e-13 at z = 21; Abramowitz & Stegun 6.1.41).
fn ln_factorial(k: f64) -> f64 {
    if k < 20.0 {
        return (1..=k as u64).map(|i| (i as f64).ln()).sum();
    }
    let k1 = k + 1.0;
    (k1 - 0.5) * k1.ln() - k1 + 0.5 * (2.0 * std::f64::consts::PI).ln() + 1.0 / (12.0 * k1)
        - 1.0 / (360.0 * k1.powi(3))
        + 1.0 / (1260.0 * k1.powi(5))
}

/// One point of an invented scan: where, how much luminosity, which efficiency and
/// background, and the energy spread.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlannedPoint {
    pub sqrt_s_gev: f64,
    pub luminosity_nb_inv: f64,
    pub efficiency: f64,
    /// Expected background events (added to the signal mean, reported as `n_bkg`).
    pub n_bkg: f64,
    pub energy_spread_mev: f64,
}

/// `x` rounded to `digits` significant digits. Poisson means are rounded so that a change
/// of the chain far below any statistical meaning (a different integration rule at the 1e-9
/// level) leaves the seeded draws, and so shipped invented data, unchanged.
pub fn round_significant(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let scale = 10f64.powi(digits - 1 - x.abs().log10().floor() as i32);
    (x * scale).round() / scale
}

/// The expected observed cross-sections of `dressed` at the planned points, nb.
pub fn expected_sigma_obs_nb(
    chain: &ForwardChain,
    dressed: &dyn CrossSection,
    points: &[PlannedPoint],
) -> Vec<f64> {
    points
        .iter()
        .map(|p| chain.observed_nb(dressed, p.sqrt_s_gev, p.energy_spread_mev))
        .collect()
}

/// Counts for an invented scan: nᵢ ~ Poisson(εᵢ Lᵢ σ_obs,ᵢ + bᵢ) with a fixed `seed`.
/// A draw at or below the background is redrawn (the reader refuses such rows), which
/// biases only scans with a handful of events per point.
pub fn generate_scan(
    chain: &ForwardChain,
    dressed: &dyn CrossSection,
    points: &[PlannedPoint],
    seed: u64,
) -> Vec<ScanPoint> {
    let mut rng = SplitMix64::new(seed);
    let sigma = expected_sigma_obs_nb(chain, dressed, points);
    points
        .iter()
        .zip(sigma)
        .map(|(p, s)| {
            let mean = round_significant(p.efficiency * p.luminosity_nb_inv * s + p.n_bkg, 6);
            let mut n = rng.poisson(mean) as f64;
            while n <= p.n_bkg {
                n = rng.poisson(mean) as f64;
            }
            ScanPoint {
                sqrt_s_gev: p.sqrt_s_gev,
                n_events: n,
                n_bkg: p.n_bkg,
                efficiency: p.efficiency,
                luminosity: LuminosityInput::Given {
                    luminosity_nb_inv: p.luminosity_nb_inv,
                },
                energy_spread_mev: (p.energy_spread_mev > 0.0).then_some(p.energy_spread_mev),
            }
        })
        .collect()
}

/// The scan as CSV text in the format [`super::parse_scan`] reads: the luminosity
/// columns follow the first point's [`LuminosityInput`] (all points must share its kind).
pub fn scan_to_csv(points: &[ScanPoint], comment: &str) -> String {
    let mut s = String::new();
    for line in comment.lines() {
        s.push_str(&format!("# {line}\n"));
    }
    let bhabha = matches!(
        points.first().map(|p| p.luminosity),
        Some(LuminosityInput::Bhabha { .. })
    );
    s.push_str(if bhabha {
        "sqrt_s_gev,n_events,n_bkg,efficiency,n_bhabha,n_bhabha_bkg,bhabha_efficiency,energy_spread_mev\n"
    } else {
        "sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv,energy_spread_mev\n"
    });
    for p in points {
        let lumi = match p.luminosity {
            LuminosityInput::Given { luminosity_nb_inv } => format!("{luminosity_nb_inv}"),
            LuminosityInput::Bhabha {
                n_events,
                n_bkg,
                efficiency,
            } => format!("{n_events},{n_bkg},{efficiency}"),
        };
        s.push_str(&format!(
            "{},{},{},{},{lumi},{}\n",
            p.sqrt_s_gev,
            p.n_events,
            p.n_bkg,
            p.efficiency,
            p.energy_spread_mev.unwrap_or(0.0)
        ));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn poisson_mean_and_variance() {
        // For each mean μ, 20000 draws: the sample mean has standard error √(μ/20000);
        // accept 5 of them. The variance of a Poisson variate is μ (closed form); the
        // sample variance's relative standard error is ≈ √(2/20000) = 1%, accept 5%.
        let mut rng = SplitMix64::new(42);
        for mu in [0.7, 12.0, 45.0, 1.0e4] {
            let draws: Vec<f64> = (0..20000).map(|_| rng.poisson(mu) as f64).collect();
            let m = draws.iter().sum::<f64>() / 20000.0;
            let v = draws.iter().map(|d| (d - m).powi(2)).sum::<f64>() / 19999.0;
            assert!(
                (m - mu).abs() < 5.0 * (mu / 20000.0).sqrt(),
                "μ={mu}: mean {m}"
            );
            assert!((v / mu - 1.0).abs() < 0.05, "μ={mu}: variance {v}");
        }
    }

    #[test]
    fn rounds_to_significant_digits() {
        // Decimal rounding by hand.
        assert_eq!(round_significant(123_456.789, 4), 123_500.0);
        assert_eq!(round_significant(0.001_234_56, 3), 0.001_23);
        assert_eq!(round_significant(-98.76, 2), -99.0);
        assert_eq!(round_significant(0.0, 4), 0.0);
    }

    #[test]
    fn stirling_matches_the_table() {
        // ln 10! = ln 3628800 and ln 30! = ln 265252859812191058636308480000000 (exact
        // factorials; the f64 of 30! is good to 1e-16 relative, its log to ~1e-14).
        assert!((ln_factorial(10.0) - 3_628_800f64.ln()).abs() < 1e-12);
        assert!(
            (ln_factorial(30.0) - 265_252_859_812_191_058_636_308_480_000_000f64.ln()).abs()
                < 1e-11
        );
    }
}
