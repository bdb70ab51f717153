//! ISR radiator functions F(x, s): the probability density that the initial state loses
//! the fraction x = 1 − s′/s of s to photon emission (soft + virtual corrections included).
//!
//! Every scheme is written as F(x, s) = C·β x^(β−1) + H(x), β = (2α/π)(ln(s/mₑ²) − 1):
//! a soft coefficient C times the integrable but singular soft density β x^(β−1), and a
//! hard part H(x) that is at most logarithmically singular. The convolution integrates
//! the soft density exactly (t = x^β) and H by ordinary quadrature.

use crate::constants::{ALPHA, M_E_GEV};
use special::Gamma;
use std::f64::consts::PI;

/// Euler–Mascheroni constant γ_E.
const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// The published radiator schemes. Short names (`kf2`, `exp1`, `sfll`) are ours.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Scheme {
    /// Kuraev–Fadin to O(β²) (default):
    /// C = 1 + 3β/4 + (α/π)(π²/3 − 1/2) + β²(9/32 − π²/12),
    /// H = −β(1 − x/2) + (β²/8)[−4(2 − x) ln x − (1 + 3(1 − x)²) ln(1 − x)/x − 6 + x].
    ///
    /// E. A. Kuraev, V. S. Fadin, Sov. J. Nucl. Phys. 41 (1985) 466, eq. (28) (the O(β²)
    /// expansion of their radiator; equation number from memory). This variant of the
    /// constant satisfies ∫₀¹F dx = 1 + (α/π)(π²/3 − 1/2) exactly.
    KuraevFadin2,
    /// First-order exponentiated: the O(β) truncation of the same expansion,
    /// C = 1 + 3β/4 + (α/π)(π²/3 − 1/2), H = −β(1 − x/2) (the form usually called
    /// "first-order exponentiated", e.g. G. Bonneau, F. Martin, Nucl. Phys. B27 (1971) 381
    /// for the O(α) spectrum, exponentiated soft part; attribution from memory).
    Exponentiated1,
    /// Exponentiated leading-log structure-function form: the product of two electron
    /// structure functions in the Gribov–Lipatov exponentiated solution,
    /// C = exp[β(3/4 − γ_E)]/Γ(1 + β)·(1 + (α/π)(π²/3 − 1/2)), H = −β(1 − x/2)
    /// (O. Nicrosini, L. Trentadue, Phys. Lett. B196 (1987) 551; M. Skrzypek,
    /// S. Jadach, Z. Phys. C49 (1991) 577). C comes from the convolution of the two
    /// beams' soft terms (β/2)(1−z)^(β/2−1) e^{(β/2)(3/4−γ_E)}/Γ(1+β/2); it agrees with
    /// the Kuraev–Fadin C to O(β), so the spread of schemes is an O(β²) effect.
    StructureFunctionLl,
}

impl Scheme {
    /// Every scheme, default first.
    pub const ALL: [Scheme; 3] = [
        Scheme::KuraevFadin2,
        Scheme::Exponentiated1,
        Scheme::StructureFunctionLl,
    ];

    /// Our short name (the `--radiator` value).
    pub fn key(self) -> &'static str {
        match self {
            Scheme::KuraevFadin2 => "kf2",
            Scheme::Exponentiated1 => "exp1",
            Scheme::StructureFunctionLl => "sfll",
        }
    }

    /// A one-line description with the source, for output provenance.
    pub fn describe(self) -> &'static str {
        match self {
            Scheme::KuraevFadin2 => {
                "Kuraev-Fadin O(beta^2) radiator (Sov. J. Nucl. Phys. 41 (1985) 466)"
            }
            Scheme::Exponentiated1 => {
                "first-order exponentiated radiator (O(beta) truncation of Kuraev-Fadin)"
            }
            Scheme::StructureFunctionLl => {
                "exponentiated leading-log structure-function radiator (Nicrosini-Trentadue 1987)"
            }
        }
    }

    /// The scheme with short name `key`.
    pub fn from_key(key: &str) -> Option<Scheme> {
        Scheme::ALL.into_iter().find(|s| s.key() == key)
    }

    /// The keys of all schemes, comma-separated (for "allowed: …" in error messages).
    pub fn allowed_keys() -> String {
        let keys: Vec<&str> = Scheme::ALL.iter().map(|s| s.key()).collect();
        keys.join(", ")
    }
}

/// The radiator of one scheme at one s: its β, soft coefficient and hard part.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Radiator {
    scheme: Scheme,
    beta: f64,
    soft: f64,
}

/// (α/π)(π²/3 − 1/2): the non-logarithmic soft + virtual constant.
fn non_log_constant() -> f64 {
    ALPHA / PI * (PI * PI / 3.0 - 0.5)
}

impl Radiator {
    /// The radiator of `scheme` at s (GeV²), s > 4mₑ².
    pub fn new(scheme: Scheme, s_gev2: f64) -> Self {
        let l = (s_gev2 / (M_E_GEV * M_E_GEV)).ln();
        let beta = 2.0 * ALPHA / PI * (l - 1.0);
        let soft = match scheme {
            Scheme::KuraevFadin2 => {
                1.0 + 0.75 * beta + non_log_constant() + beta * beta * (9.0 / 32.0 - PI * PI / 12.0)
            }
            Scheme::Exponentiated1 => 1.0 + 0.75 * beta + non_log_constant(),
            Scheme::StructureFunctionLl => {
                (beta * (0.75 - EULER_GAMMA)).exp() / Gamma::gamma(1.0 + beta)
                    * (1.0 + non_log_constant())
            }
        };
        Radiator { scheme, beta, soft }
    }

    pub fn scheme(&self) -> Scheme {
        self.scheme
    }

    /// β = (2α/π)(ln(s/mₑ²) − 1), the exponent of the soft density.
    #[inline]
    pub fn beta(&self) -> f64 {
        self.beta
    }

    /// C in F = C·β x^(β−1) + H(x) (for Kuraev–Fadin, δ_VS).
    #[inline]
    pub fn soft_coefficient(&self) -> f64 {
        self.soft
    }

    /// The hard part H(x) for 0 < x < 1.
    pub fn hard(&self, x: f64) -> f64 {
        self.hard_with_logs(x, x.ln(), (-x).ln_1p())
    }

    /// H(x) given ln x and ln(1 − x), which hot loops already have.
    #[inline]
    pub fn hard_with_logs(&self, x: f64, ln_x: f64, ln_1mx: f64) -> f64 {
        let b = self.beta;
        let first = -b * (1.0 - 0.5 * x);
        match self.scheme {
            Scheme::KuraevFadin2 => {
                let y = 1.0 - x;
                // ln(1 − x)/x → −1 as x → 0; the series avoids 0/0 below 1e-8.
                let l1x = if x > 1e-8 { ln_1mx / x } else { -1.0 - 0.5 * x };
                first
                    + b * b / 8.0 * (-4.0 * (2.0 - x) * ln_x - (1.0 + 3.0 * y * y) * l1x - 6.0 + x)
            }
            Scheme::Exponentiated1 | Scheme::StructureFunctionLl => first,
        }
    }

    /// The full density F(x, s) for 0 < x < 1.
    pub fn density(&self, x: f64) -> f64 {
        self.soft * self.beta * x.powf(self.beta - 1.0) + self.hard(x)
    }

    /// ∫₀^c F(x) dx in closed form for the O(β) hard part −β(1 − x/2) plus the soft term
    /// (exact for `exp1` and `sfll`; for `kf2` without its β² hard terms).
    pub fn first_order_integral(&self, c: f64) -> f64 {
        self.soft * c.powf(self.beta) - self.beta * (c - 0.25 * c * c)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for s in Scheme::ALL {
            assert_eq!(Scheme::from_key(s.key()), Some(s));
        }
        assert_eq!(Scheme::from_key("nope"), None);
    }
}
