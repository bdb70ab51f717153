//! tables/resonances.toml against the PDG 2026 database bundled in the `pdg` Python package,
//! and α_s running against an independent ODE solution (scipy).

mod common;
use common::*;

use radnorm::rmodel::alpha_s::AlphaS;
use radnorm::rmodel::params::Parameters;

#[test]
fn resonance_table_matches_pdg_2026() {
    let Some(out) = python_reference("vp_resonances.py", &[]) else {
        return;
    };
    let pdg = parse_key_values(&out);
    assert_eq!(
        pdg["edition"], 2026.0,
        "the pdg package is not the 2026 edition"
    );
    let p = Parameters::shipped();
    // The table carries 10 significant digits of the pdg values: 1e-9 relative.
    let tol = 1e-9;
    assert_rel("rho.mass_gev", p.rho.mass_gev, pdg["rho.mass_gev"], tol);
    assert_rel("rho.width_gev", p.rho.width_gev, pdg["rho.width_gev"], tol);
    for r in &p.resonance {
        let key = |k: &str| pdg[&format!("{}.{k}", r.name)];
        assert_rel(
            &format!("{} mass", r.name),
            r.mass_gev,
            key("mass_gev"),
            tol,
        );
        assert_rel(
            &format!("{} width", r.name),
            r.width_gev,
            key("width_gev"),
            tol,
        );
        assert_rel(
            &format!("{} gamma_ee", r.name),
            r.gamma_ee_kev,
            key("gamma_ee_kev"),
            tol,
        );
        assert_rel(
            &format!("{} gamma_ee_unc", r.name),
            r.gamma_ee_unc_kev,
            key("gamma_ee_unc_kev"),
            tol,
        );
    }
}

#[test]
fn alpha_s_running_matches_scipy() {
    // tests/ref/vp_alpha_s.py integrates the same four-loop equation with scipy's
    // solve_ivp (rtol 1e-12) and the same continuous matching; our RK4 + spline on
    // ln μ² steps of 0.01 is good to ~1e-10.
    let points = ["1.0", "2.0", "3.0", "5.0", "10.0", "30.0", "1000.0"];
    let Some(out) = python_reference("vp_alpha_s.py", &points) else {
        return;
    };
    let want = parse_key_values(&out);
    let a = AlphaS::new(0.1180, 91.1880, 1.2729, 4.186);
    for p in points {
        let e: f64 = p.parse().unwrap();
        assert_rel(
            &format!("alpha_s({e} GeV)"),
            a.alpha_s(e * e),
            want[&format!("as_{p}")],
            1e-8,
        );
    }
}
