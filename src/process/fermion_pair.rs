//! e⁺e⁻ → f f̄ through a photon, optionally with Z exchange, with the final mass exact.
//!
//! dσ/dcosθ = (πα² N_c/2s) β [C_V (2 − β² sin²θ) + C_AA β² (1 + cos²θ) + 2β C_A cosθ]
//! with β = √(1 − 4m²/s) and, for χ the Z propagator ([`ZExchange::chi`]),
//! C_V = Q_e²Q_f² + 2Q_eQ_f v_e v_f Re χ + (v_e² + a_e²) v_f² |χ|²,
//! C_AA = (v_e² + a_e²) a_f² |χ|², C_A = 2Q_eQ_f a_e a_f Re χ + 4 v_e a_e v_f a_f |χ|².
//! For γ only this is (πα²/2s) N_c Q_f² β [1 + cos²θ + (1 − β²) sin²θ]; for m → 0 it is the
//! massless γ+Z form of the PDG review "Electroweak model and constraints on new physics".
//! The mass terms multiply the vector and axial final couplings by β(3 − β²)/2 and β³ in σ.
//!
//! The optional Coulomb (Sommerfeld–Sakharov) factor F_C = (πα/β)/(1 − e^(−πα/β))
//! (A. D. Sakharov, Zh. Eksp. Teor. Fiz. 18 (1948) 631) multiplies σ near threshold.

use super::{Angular, CosRange, CrossSection, Feature, ZExchange};
use crate::constants::{ALPHA, GEV2_TO_NB, M_MU_GEV, M_TAU_GEV};
use std::f64::consts::PI;

/// Electron charge and weak isospin.
const Q_E: f64 = -1.0;
const T3_E: f64 = -0.5;

/// A fermion–antifermion final state.
#[derive(Debug, Clone, PartialEq)]
pub struct FermionPair {
    name: &'static str,
    mass_gev: f64,
    charge: f64,
    colours: f64,
    t3: f64,
    z: Option<ZExchange>,
    coulomb: bool,
    range: CosRange,
    features: Vec<Feature>,
}

/// The coefficient functions of the angular distribution at one s.
struct Coefficients {
    beta: f64,
    c_v: f64,
    c_aa: f64,
    c_a: f64,
}

impl FermionPair {
    /// A generic fermion of mass (GeV), charge (units of e), colours and weak isospin T₃.
    pub fn new(name: &'static str, mass_gev: f64, charge: f64, colours: u32, t3: f64) -> Self {
        FermionPair {
            name,
            mass_gev,
            charge,
            colours: colours as f64,
            t3,
            z: None,
            coulomb: false,
            range: CosRange::FULL,
            features: Vec::new(),
        }
    }

    /// μ⁺μ⁻ (CODATA 2022 mass).
    pub fn muon() -> Self {
        Self::new("mumu", M_MU_GEV, -1.0, 1, -0.5)
    }

    /// τ⁺τ⁻ (PDG 2026 mass).
    pub fn tau() -> Self {
        Self::new("tautau", M_TAU_GEV, -1.0, 1, -0.5)
    }

    /// Add Z exchange.
    pub fn with_z(mut self, z: ZExchange) -> Self {
        let (m, g) = z.mass_width_gev();
        self.features = vec![Feature::Peak {
            s_gev2: m * m,
            m_gamma_gev2: m * g,
        }];
        self.z = Some(z);
        self
    }

    /// Multiply by the Coulomb (Sommerfeld–Sakharov) threshold factor.
    pub fn with_coulomb(mut self, on: bool) -> Self {
        self.coulomb = on;
        self
    }

    /// Integrate over this cosθ range of the fermion (default: full solid angle).
    pub fn with_range(mut self, range: CosRange) -> Self {
        self.range = range;
        self
    }

    /// The short process name (`mumu`, `tautau`, …).
    pub fn name(&self) -> &'static str {
        self.name
    }

    /// The final-state mass in GeV.
    pub fn mass_gev(&self) -> f64 {
        self.mass_gev
    }

    /// The Z exchange, if on.
    pub fn z(&self) -> Option<&ZExchange> {
        self.z.as_ref()
    }

    /// Whether the Coulomb factor is on.
    pub fn coulomb(&self) -> bool {
        self.coulomb
    }

    fn coefficients(&self, s: f64) -> Option<Coefficients> {
        let b2 = 1.0 - 4.0 * self.mass_gev * self.mass_gev / s;
        if b2.is_nan() || b2 <= 0.0 {
            return None;
        }
        let beta = b2.sqrt();
        let qq = Q_E * self.charge;
        let (mut c_v, mut c_aa, mut c_a) = (qq * qq, 0.0, 0.0);
        if let Some(z) = &self.z {
            let chi = z.chi(s);
            let (v_e, a_e) = (z.vector(T3_E, Q_E), T3_E);
            let (v_f, a_f) = (z.vector(self.t3, self.charge), self.t3);
            let n2 = chi.norm_sqr();
            c_v += 2.0 * qq * v_e * v_f * chi.re + (v_e * v_e + a_e * a_e) * v_f * v_f * n2;
            c_aa = (v_e * v_e + a_e * a_e) * a_f * a_f * n2;
            c_a = 2.0 * qq * a_e * a_f * chi.re + 4.0 * v_e * a_e * v_f * a_f * n2;
        }
        Some(Coefficients {
            beta,
            c_v,
            c_aa,
            c_a,
        })
    }

    /// (πα² N_c/2s) in nb, times the Coulomb factor when on.
    fn prefactor_nb(&self, s: f64, beta: f64) -> f64 {
        let mut p = PI * ALPHA * ALPHA * self.colours / (2.0 * s) * GEV2_TO_NB;
        if self.coulomb {
            p *= coulomb_factor(beta);
        }
        p
    }

    /// ∫ dσ/dcosθ over cosθ ∈ [lo, hi], divided by the prefactor. The bracket is a quadratic
    /// in cosθ, so its integral is (hi − lo) times its mean over the interval: written that
    /// way it has no difference of nearly equal antiderivative values (which lost ~ε/(hi − lo)
    /// relatively on narrow bins).
    fn bracket_integral(k: &Coefficients, lo: f64, hi: f64) -> f64 {
        let (b, b2) = (k.beta, k.beta * k.beta);
        let mean_c2 = (hi * hi + hi * lo + lo * lo) / 3.0;
        let mean = k.c_v * ((2.0 - b2) + b2 * mean_c2)
            + k.c_aa * b2 * (1.0 + mean_c2)
            + b * k.c_a * (hi + lo);
        (hi - lo) * b * mean
    }

    /// σ in nb over cosθ ∈ [lo, hi].
    pub fn sigma_in_cos_nb(&self, s_gev2: f64, lo: f64, hi: f64) -> f64 {
        match self.coefficients(s_gev2) {
            Some(k) => self.prefactor_nb(s_gev2, k.beta) * Self::bracket_integral(&k, lo, hi),
            None => 0.0,
        }
    }

    /// Forward–backward asymmetry (σ_F − σ_B)/(σ_F + σ_B) over the full solid angle;
    /// 0 below threshold.
    pub fn afb(&self, s_gev2: f64) -> f64 {
        match self.coefficients(s_gev2) {
            Some(k) => {
                let f = Self::bracket_integral(&k, 0.0, 1.0);
                let b = Self::bracket_integral(&k, -1.0, 0.0);
                (f - b) / (f + b)
            }
            None => 0.0,
        }
    }
}

impl CrossSection for FermionPair {
    fn sigma_nb(&self, s_gev2: f64) -> f64 {
        if !self.range.is_full() {
            return self.sigma_in_cos_nb(s_gev2, self.range.lo(), self.range.hi());
        }
        if self.photon_only_full_angle() {
            return self.photon_only_nb(s_gev2);
        }
        match self.coefficients(s_gev2) {
            Some(k) => {
                let b2 = k.beta * k.beta;
                self.prefactor_nb(s_gev2, k.beta)
                    * k.beta
                    * (4.0 / 3.0)
                    * (k.c_v * (3.0 - b2) + 2.0 * k.c_aa * b2)
            }
            None => 0.0,
        }
    }

    /// The photon-only full-angle formula over the batch in one branch-free loop.
    fn sigma_nb_many(&self, s_gev2: &[f64], out: &mut [f64]) {
        if self.photon_only_full_angle() {
            for (o, &s) in out.iter_mut().zip(s_gev2) {
                *o = self.photon_only_nb(s);
            }
        } else {
            for (o, &s) in out.iter_mut().zip(s_gev2) {
                *o = self.sigma_nb(s);
            }
        }
    }

    fn threshold_s_gev2(&self) -> f64 {
        4.0 * self.mass_gev * self.mass_gev
    }

    fn features(&self) -> &[Feature] {
        &self.features
    }
}

impl FermionPair {
    /// Whether σ is the photon-only closed form over the full solid angle (the ISR
    /// convolution's inner loop).
    #[inline]
    fn photon_only_full_angle(&self) -> bool {
        self.range.is_full() && self.z.is_none() && !self.coulomb
    }

    /// That closed form, `bracket_integral` over [−1, 1] (the asymmetric term integrates
    /// to 0) with c_v = (Q_e Q_f)², c_aa = 0; 0 at and below threshold (a select, not a
    /// branch, so that a loop over it vectorises).
    #[inline(always)]
    fn photon_only_nb(&self, s_gev2: f64) -> f64 {
        // 4m²/s by its own division: 1 − 4m²·(1/s) would lose digits near threshold.
        let b2 = 1.0 - 4.0 * self.mass_gev * self.mass_gev / s_gev2;
        let qq = Q_E * self.charge;
        let constant = PI * ALPHA * ALPHA * self.colours * GEV2_TO_NB * (2.0 / 3.0) * qq * qq;
        let value = constant / s_gev2 * b2.max(0.0).sqrt() * (3.0 - b2);
        if b2 > 0.0 { value } else { 0.0 }
    }
}

impl Angular for FermionPair {
    fn dsigma_dcos_nb(&self, s_gev2: f64, c: f64) -> f64 {
        match self.coefficients(s_gev2) {
            Some(k) => {
                let b2 = k.beta * k.beta;
                self.prefactor_nb(s_gev2, k.beta)
                    * k.beta
                    * (k.c_v * (2.0 - b2 * (1.0 - c * c))
                        + k.c_aa * b2 * (1.0 + c * c)
                        + 2.0 * k.beta * k.c_a * c)
            }
            None => 0.0,
        }
    }
}

/// The Sommerfeld–Sakharov factor (πα/β)/(1 − e^(−πα/β)); → 1 + πα/(2β) far from threshold.
pub fn coulomb_factor(beta: f64) -> f64 {
    let x = PI * ALPHA / beta;
    if x < 1e-8 {
        1.0 + 0.5 * x
    } else {
        x / (-(-x).exp_m1())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::constants::sigma_point_nb;
    use crate::process::WidthScheme;

    /// The batch form must give `sigma_nb`'s bits on every path (photon only, with Z,
    /// in a cos θ range, at and below threshold, and through a VP-dressed link), since the
    /// ISR fixed path and its node listing may use either.
    #[test]
    fn the_batch_form_gives_the_same_bits() {
        let range = CosRange::new(-0.8, 0.8).unwrap();
        let shapes: [Box<dyn CrossSection + Send>; 5] = [
            Box::new(FermionPair::muon()),
            Box::new(FermionPair::tau()),
            Box::new(FermionPair::muon().with_z(ZExchange::standard(WidthScheme::Running))),
            Box::new(FermionPair::muon().with_range(range)),
            Box::new(crate::vp::Dressed::new(
                FermionPair::muon(),
                crate::vp::Vp::leptonic(),
            )),
        ];
        let s: Vec<f64> = (0..200)
            .map(|i| 0.04 + 0.37 * f64::from(i))
            .chain([0.0, 1e-9, 4.0 * 0.105_658_375_5_f64.powi(2), 12.6])
            .collect();
        for shape in &shapes {
            let mut many = vec![f64::NAN; s.len()];
            shape.sigma_nb_many(&s, &mut many);
            for (&si, m) in s.iter().zip(&many) {
                assert_eq!(m.to_bits(), shape.sigma_nb(si).to_bits(), "s = {si}");
            }
        }
    }

    #[test]
    fn massless_limit_is_point_cross_section() {
        // σ(μμ) → σ_pt = 4πα²/3s for s ≫ m_μ² (textbook, e.g. Peskin & Schroeder eq. 5.13);
        // the mass correction β(3 − β²)/2 − 1 = −3ε²/8 + O(ε³), ε = 4m²/s: 7.5e-8 at √s = 10 GeV.
        let s = 100.0;
        let rel = FermionPair::muon().sigma_nb(s) / sigma_point_nb(s) - 1.0;
        assert!(rel.abs() < 1e-7, "rel {rel}");
    }

    #[test]
    fn threshold_factor_beta_3_minus_beta2_over_2() {
        // σ/σ_pt = β(3 − β²)/2 for a massive QED pair (physics notes §1, any QED text).
        let tau = FermionPair::tau();
        for sqrt_s in [3.56, 3.6, 4.0, 5.0, 10.0] {
            let s: f64 = sqrt_s * sqrt_s;
            let beta = (1.0 - 4.0 * M_TAU_GEV * M_TAU_GEV / s).sqrt();
            let want = sigma_point_nb(s) * beta * (3.0 - beta * beta) / 2.0;
            let got = tau.sigma_nb(s);
            assert!((got / want - 1.0).abs() < 1e-14, "sqrt_s={sqrt_s}");
        }
        assert_eq!(tau.sigma_nb(3.5f64.powi(2)), 0.0);
    }

    #[test]
    fn coulomb_factor_limits() {
        // Far from threshold F_C → 1 + πα/(2β) (Sakharov 1948; physics notes §1), and
        // σ·F_C stays finite (∝ πα·(3 − β²)/2·σ_pt) as β → 0.
        let f = coulomb_factor(0.9);
        let want = 1.0 + PI * ALPHA / 1.8;
        assert!((f - want).abs() < 1e-4 * want);
        let tau = FermionPair::tau().with_coulomb(true);
        let s = 4.0 * M_TAU_GEV * M_TAU_GEV * (1.0 + 1e-12);
        let got = tau.sigma_nb(s);
        let want = sigma_point_nb(s) * PI * ALPHA * 1.5;
        assert!((got / want - 1.0).abs() < 1e-5, "{got} vs {want}");
    }

    #[test]
    fn afb_at_petra_energy() {
        // A_FB(μμ) at √s = 34.5 GeV ≈ −9% (PETRA measurements, physics notes §1; from memory).
        // The tolerance ±1.5% absolute covers the memory and the scheme of κ.
        let mumu = FermionPair::muon().with_z(ZExchange::standard(WidthScheme::Running));
        let afb = mumu.afb(34.5f64.powi(2));
        assert!((afb + 0.09).abs() < 0.015, "afb {afb}");
    }

    #[test]
    fn narrow_bins_keep_their_digits() {
        // Bins 10⁻³ wide at backward angles above the Z (the first is the case a property test
        // found: a difference of two antiderivative values had lost 3.7e-12 relatively).
        // Against 4-point Gauss–Legendre quadrature of dσ/dcosθ, exact for the quadratic up to
        // rounding. Backward of the Z the symmetric and asymmetric terms nearly cancel: their
        // sum of magnitudes is dσ(−c)/dσ(c) (~160 here) times the result, so both sides keep a
        // few ulp of that, and the tolerance is 4 ulp times the ratio.
        let rule = crate::numeric::GaussLegendre::new(4);
        let tau = FermionPair::tau().with_z(ZExchange::standard(WidthScheme::Running));
        for (sqrt_s, lo) in [
            (111.807_964_861_828_8, -0.913_064_457_293_868),
            (124.0, -0.95),
        ] {
            let (s, hi) = (sqrt_s * sqrt_s, lo + 1e-3);
            let q = rule.integrate(|c| tau.dsigma_dcos_nb(s, c), lo, hi);
            let cf = tau.sigma_in_cos_nb(s, lo, hi);
            let cancellation = tau.dsigma_dcos_nb(s, -lo) / tau.dsigma_dcos_nb(s, lo);
            let tolerance = 4.0 * f64::EPSILON * cancellation.max(1.0);
            assert!(
                (q / cf - 1.0).abs() < tolerance,
                "sqrt_s={sqrt_s}: {q} vs {cf}"
            );
        }
    }

    #[test]
    fn differential_integrates_to_total() {
        // The closed-form integral against Gauss–Legendre quadrature of dσ/dcosθ
        // (a degree-2 polynomial in cosθ: 8 points are exact).
        let rule = crate::numeric::GaussLegendre::new(8);
        let mumu = FermionPair::tau().with_z(ZExchange::standard(WidthScheme::Running));
        for sqrt_s in [4.0, 60.0, 91.2] {
            let s = sqrt_s * sqrt_s;
            let q = rule.integrate(|c| mumu.dsigma_dcos_nb(s, c), -0.7, 0.9);
            let cf = mumu.sigma_in_cos_nb(s, -0.7, 0.9);
            assert!((q / cf - 1.0).abs() < 1e-13, "sqrt_s={sqrt_s}");
        }
    }
}
