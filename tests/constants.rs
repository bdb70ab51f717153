//! Our constants read back against the PDG database of the `pdg` Python package (2026).

mod common;
use common::python_reference;
use radnorm::constants::*;

#[test]
fn constants_agree_with_the_pdg_database() {
    let Some(text) = python_reference("constants.py", &[]) else {
        return;
    };
    let table: std::collections::HashMap<String, (f64, f64)> = text
        .lines()
        .filter_map(|l| {
            let v: Vec<&str> = l.split_whitespace().collect();
            Some((
                v.first()?.to_string(),
                (v.get(1)?.parse().ok()?, v.get(2)?.parse().ok()?),
            ))
        })
        .collect();
    // Each of our values must lie within one standard error of the table's (we quote the
    // table's rounded central values, so the difference is rounding, far below 1σ).
    for (key, ours) in [
        ("m_e", M_E_GEV),
        ("m_mu", M_MU_GEV),
        ("m_tau", M_TAU_GEV),
        ("m_z", M_Z_GEV),
        ("gamma_z", GAMMA_Z_GEV),
        ("sin2_eff", SIN2_THETA_EFF),
    ] {
        let (value, error) = table[key];
        assert!(
            (ours - value).abs() <= error,
            "{key}: ours {ours}, PDG {value} ± {error}"
        );
    }
}
