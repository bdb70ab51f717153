//! The resonance and threshold parameters of the default model, from `tables/resonances.toml`
//! (compiled in, so the library reads no files at run time).

use serde::Deserialize;

/// The shipped parameter table (PDG 2026, one citation per row).
pub const RESONANCES_TOML: &str = include_str!("../../tables/resonances.toml");

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Parameters {
    pub edition: String,
    pub rho: RhoParams,
    pub resonance: Vec<ResonanceParams>,
    pub thresholds: Thresholds,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RhoParams {
    pub mass_gev: f64,
    pub width_gev: f64,
    pub omega_mixing: f64,
    pub prime_mass_gev: f64,
    pub prime_width_gev: f64,
    pub prime_weight: f64,
}

/// One Breit–Wigner resonance row.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ResonanceParams {
    pub name: String,
    pub mass_gev: f64,
    pub width_gev: f64,
    /// The PDG electronic width (includes vacuum polarisation), keV.
    pub gamma_ee_kev: f64,
    pub gamma_ee_unc_kev: f64,
    /// Fraction of the decays already counted elsewhere (ω → π⁺π⁻ in F_π).
    pub exclude_fraction: f64,
    /// J/ψ, ψ(2S), Υ(1S–3S): narrow, below the open-flavour threshold.
    pub narrow: bool,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Thresholds {
    pub m_pi_charged_gev: f64,
    pub m_d0_gev: f64,
    pub m_b_charged_gev: f64,
    pub m_c_msbar_gev: f64,
    pub m_b_msbar_gev: f64,
}

impl Parameters {
    /// Parse a parameter table in the format of `tables/resonances.toml`.
    ///
    /// # Errors
    /// The TOML parser's message (with line and column) when the text does not fit.
    pub fn parse(text: &str) -> Result<Self, toml::de::Error> {
        toml::from_str(text)
    }

    /// The shipped table.
    pub fn shipped() -> Self {
        Self::parse(RESONANCES_TOML).expect("tables/resonances.toml is checked by a unit test")
    }

    /// The row called `name`, if any.
    pub fn resonance(&self, name: &str) -> Option<&ResonanceParams> {
        self.resonance.iter().find(|r| r.name == name)
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn shipped_table_parses() {
        let p = super::Parameters::shipped();
        assert_eq!(p.resonance.len(), 7);
        assert!(p.resonance("jpsi").is_some_and(|r| r.narrow));
    }
}
