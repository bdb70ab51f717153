//! The numeric toolkit against independent general-purpose libraries (tests/ref/numeric.py).

mod common;
use common::{assert_rel, python_reference};
use num_complex::Complex64;
use radnorm::numeric::{
    Tolerance, integrate, integrate_double_exponential, integrate_power_endpoint, li2, li2_complex,
    principal_value,
};

fn lines(text: &str, prefix: &str) -> Vec<Vec<f64>> {
    text.lines()
        .filter(|l| l.starts_with(prefix))
        .map(|l| {
            l.split_whitespace()
                .skip(1)
                .map(|v| v.parse().unwrap())
                .collect()
        })
        .collect()
}

#[test]
fn dilogarithm_matches_mpmath() {
    let Some(text) = python_reference("numeric.py", &[]) else {
        return;
    };
    // mpmath.polylog at 30 digits; the Bernoulli series sums to f64 rounding (≤ 4 ulp seen),
    // so 1e-14 relative is the bar.
    let real = lines(&text, "li2_real_");
    assert_eq!(real.len(), 11);
    for v in real {
        assert_rel(&format!("Re Li2({})", v[0]), li2(v[0]), v[1], 1e-14);
    }
    let cplx = lines(&text, "li2_cplx_");
    assert_eq!(cplx.len(), 5);
    for v in cplx {
        let got = li2_complex(Complex64::new(v[0], v[1]));
        let want = Complex64::new(v[2], v[3]);
        assert!(
            (got - want).norm() <= 1e-14 * want.norm(),
            "Li2({}+{}i): {got} vs {want}",
            v[0],
            v[1]
        );
    }
}

#[test]
fn principal_value_and_endpoint_substitution_match_quadpack() {
    let Some(text) = python_reference("numeric.py", &[]) else {
        return;
    };
    let get = |k: &str| lines(&text, k)[0][0];
    // scipy's QAWC/QAWS reach ~1e-14 on these smooth weights; 1e-12 leaves room for both.
    let tol = Tolerance::relative(1e-13);
    let pv = principal_value(f64::cos, 0.0, std::f64::consts::PI, 1.0, &[], tol);
    assert_rel("P∫cos/(x−1)", pv.value, get("pv_cos"), 1e-12);
    let pv = principal_value(|x| (-x).exp() / (1.0 + x), 0.0, 3.0, 0.7, &[], tol);
    assert_rel("P∫e^-x/((1+x)(x−0.7))", pv.value, get("pv_exp"), 1e-12);
    let b = 0.07;
    // ∫₀¹ x^(b−1) g dx = (1/b) ∫₀¹ b x^(b−1) g dx.
    let r = integrate_power_endpoint(|x| (3.0 * x).cos() / (1.0 + x * x), b, 1.0, &[], tol);
    assert_rel("∫x^(b−1) cos3x/(1+x²)", r.value / b, get("alg_cos"), 1e-12);
}

#[test]
fn two_independent_rules_agree() {
    // Gauss–Kronrod (ours) and tanh-sinh (the `quadrature` crate) on a smooth peaked integrand.
    let f = |x: f64| (x * x).sin() * (-x).exp() / (0.01 + (x - 1.3).powi(2));
    let tol = Tolerance::relative(1e-12);
    let gk = integrate(f, 0.0, 4.0, &[1.3], tol);
    let de = integrate_double_exponential(f, 0.0, 4.0, tol);
    assert!(gk.converged() && de.converged(), "{gk:?} {de:?}");
    assert_rel("GK21 vs tanh-sinh", gk.value, de.value, 1e-11);
}
