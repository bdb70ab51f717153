//! The forward fit of a narrow resonance (`[fit]` in a scan card): closure through the full
//! chain, the narrow-width area of a Breit–Wigner as an outside reference, the pulls of
//! seeded toy fits, loud failures, bad cards, and the `radnorm correct` command end to end.
//!
//! Every scenario here is invented (J/ψ-like numbers, not a measurement).

mod common;

use assert_cmd::Command;
use common::assert_rel;
use radnorm::constants::{GEV2_TO_NB, sigma_point_nb};
use radnorm::process::{ConstantR, CrossSection, Hadrons};
use radnorm::scan::fit::{
    FitPoint, FitShape, FitStop, Noise, Parameter, ResonanceLine, fit_forward, observed_points,
};
use radnorm::scan::generate::{PlannedPoint, expected_sigma_obs_nb, generate_scan, scan_to_csv};
use radnorm::scan::{ScanCard, ScanError, fit_scan, parse_full_scan_card};
use std::f64::consts::PI;
use std::path::Path;

/// The invented resonance: J/ψ-like mass and total width, an invented Γ_ee·B.
const MASS_GEV: f64 = 3.0969;
const WIDTH_GEV: f64 = 9.3e-5;
const GEE_B_KEV: f64 = 4.5;
/// The continuum: R = 2 times the point-like cross-section.
const R_CONT: f64 = 2.0;
/// The machine's centre-of-mass energy spread.
const SPREAD_MEV: f64 = 1.0;

/// The invented dressed truth, written out here independently of the fit module:
/// R·σ_pt + 12π Γ_ee B Γ / ((s − M²)² + M²Γ²) (relativistic Breit–Wigner, PDG review
/// "Cross-section formulae for specific processes").
struct Truth {
    mass_gev: f64,
    gee_b_kev: f64,
}

impl CrossSection for Truth {
    fn sigma_nb(&self, s: f64) -> f64 {
        let m2 = self.mass_gev * self.mass_gev;
        let mg = self.mass_gev * WIDTH_GEV;
        R_CONT * sigma_point_nb(s)
            + 12.0 * PI * self.gee_b_kev * 1e-6 * WIDTH_GEV / ((s - m2).powi(2) + mg * mg)
                * GEV2_TO_NB
    }
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * 0.139_570_39f64.powi(2)
    }
    fn features(&self) -> &[radnorm::process::Feature] {
        const F: [radnorm::process::Feature; 1] = [radnorm::process::Feature::Peak {
            s_gev2: MASS_GEV * MASS_GEV,
            m_gamma_gev2: MASS_GEV * WIDTH_GEV,
        }];
        &F
    }
}

const TRUTH: Truth = Truth {
    mass_gev: MASS_GEV,
    gee_b_kev: GEE_B_KEV,
};

/// A card with the invented resonance, `radiator` and a `[fit]` table (`fit_extra` lines).
fn card(radiator: &str, fit_extra: &str) -> String {
    format!(
        r#"# invented scenario for tests
[process]
final_state = "hadrons"
r_ratio = {R_CONT}
[radiation]
radiator = "{radiator}"
min_mass_gev = 2.5
[vp]
model = "none"
[beam]
energy_spread_mev = {SPREAD_MEV}
[[resonance]]
name = "jpsi_like"
mass_gev = {MASS_GEV}
width_gev = {WIDTH_GEV}
[fit]
resonance = "jpsi_like"
{fit_extra}
"#
    )
}

fn parse(text: &str) -> ScanCard {
    parse_full_scan_card(text, "scan.toml").unwrap()
}

/// Points at `energies` with a common luminosity (nb⁻¹), ε = 0.6, 20 background events.
fn planned(energies: &[f64], lumi: f64) -> Vec<PlannedPoint> {
    energies
        .iter()
        .map(|&e| PlannedPoint {
            sqrt_s_gev: e,
            luminosity_nb_inv: lumi,
            efficiency: 0.6,
            n_bkg: 20.0,
            energy_spread_mev: SPREAD_MEV,
        })
        .collect()
}

/// A resonance scan through the full chain: two continuum points below the peak with more
/// luminosity, then M − 5 MeV … M + 9 MeV in 1 MeV steps (the radiative tail above).
fn full_chain_points() -> Vec<PlannedPoint> {
    let mut p = planned(&[MASS_GEV - 0.030, MASS_GEV - 0.015], 500.0);
    let scan: Vec<f64> = (-5..=9).map(|k| MASS_GEV + 1e-3 * k as f64).collect();
    p.extend(planned(&scan, 50.0));
    p
}

/// The spread-only scan: M ± 5 MeV in 0.5 MeV steps.
fn spread_only_points(lumi: f64) -> Vec<PlannedPoint> {
    let scan: Vec<f64> = (-10..=10).map(|k| MASS_GEV + 5e-4 * k as f64).collect();
    planned(&scan, lumi)
}

/// |got − want| within `k` of its standard uncertainty.
#[track_caller]
fn assert_within_sigma(what: &str, got: f64, unc: f64, want: f64, k: f64) {
    assert!(
        (got - want).abs() <= k * unc && unc > 0.0 && unc.is_finite(),
        "{what}: fitted {got:.9e} ± {unc:.3e}, injected {want:.9e}, pull {:.2} (allowed ±{k})",
        (got - want) / unc
    );
}

#[test]
fn narrow_resonance_closure_through_isr_and_spread() {
    // Γ = 0.093 MeV ≪ σ_W = 1 MeV: the pointwise unfolding's domain ends here. The scan is
    // generated from the truth through ISR (Kuraev–Fadin O(β²), min mass 2.5 GeV) and the
    // spread with seeded Poisson noise, and fitted back with the card's chain, started
    // 1 MeV (one spread) above the true mass.
    let c = parse(&card(
        "kf2",
        &format!("continuum = \"scale\"\nmass_gev = {}", MASS_GEV + 1e-3),
    ));
    let points = full_chain_points();
    let data = generate_scan(&c.plan.chain, &TRUTH, &points, 20260611);
    let fit = c.fit.as_ref().unwrap();
    let r = fit_scan(&c.plan, fit, &data).unwrap();
    let (m, dm) = (
        r.value(Parameter::Mass).unwrap(),
        r.uncertainty(Parameter::Mass).unwrap(),
    );
    let (g, dg) = (
        r.value(Parameter::GeeB).unwrap(),
        r.uncertainty(Parameter::GeeB).unwrap(),
    );
    let (a, da) = (
        r.value(Parameter::ContinuumScale).unwrap(),
        r.uncertainty(Parameter::ContinuumScale).unwrap(),
    );
    eprintln!(
        "full chain: M = {m:.7} ± {dm:.2e} GeV (injected {MASS_GEV}), Γee·B = {g:.4} ± {dg:.4} keV \
         (injected {GEE_B_KEV}), scale = {a:.4} ± {da:.4}, chi2/ndf = {:.2}/{}, {} after {} \
         iterations",
        r.chi2, r.ndf, r.stop, r.iterations
    );
    assert_within_sigma("mass", m, dm, MASS_GEV, 3.0);
    assert_within_sigma("gee_b", g, dg, GEE_B_KEV, 3.0);
    assert_within_sigma("continuum scale", a, da, 1.0, 3.0);
    // The statistical reach such a scan has (~3e5 signal events): M to a few keV,
    // Γ_ee·B to well below 1%.
    assert!(dm < 1e-5 && dg / g < 0.01, "dm {dm}, dg/g {}", dg / g);
    // χ² with ndf = 17 − 3 = 14: mean 14, sd √28 ≈ 5.3; accept 14 ± 4 sd.
    assert_eq!(r.ndf, 14);
    assert!(r.chi2 < 14.0 + 4.0 * 28f64.sqrt(), "chi2 {}", r.chi2);
    let corr = r.correlation();
    for i in 0..3 {
        assert!((corr.get(i, i) - 1.0).abs() < 1e-12);
        for j in 0..3 {
            assert!(corr.get(i, j).abs() <= 1.0 + 1e-12);
            assert!((corr.get(i, j) - corr.get(j, i)).abs() < 1e-12);
        }
    }
    assert!(r.pulls().iter().all(|p| p.abs() < 5.0), "{:?}", r.pulls());
}

/// Noise-free ("Asimov") points: σ_obs equal to the expectation through the card's chain,
/// uncertainties from the expected counts.
fn noise_free_points(c: &ScanCard, planned: &[PlannedPoint]) -> Vec<FitPoint> {
    let sigma = expected_sigma_obs_nb(&c.plan.chain, &TRUTH, planned);
    planned
        .iter()
        .zip(&sigma)
        .map(|(p, s)| {
            let exposure = p.efficiency * p.luminosity_nb_inv;
            FitPoint {
                sqrt_s_gev: p.sqrt_s_gev,
                energy_spread_mev: p.energy_spread_mev,
                sigma_obs_nb: *s,
                sigma_obs_stat_nb: (exposure * s + p.n_bkg).sqrt() / exposure,
                noise: Noise::Counts {
                    exposure_nb_inv: exposure,
                    sigma_bkg_nb: p.n_bkg / exposure,
                    luminosity_rel: 0.0,
                },
            }
        })
        .collect()
}

#[test]
fn noise_free_data_give_back_the_injected_values() {
    // On noise-free data the minimum is the truth with χ² = 0, and the fit must land there
    // to a small fraction of its uncertainty: through the full chain (continuum scale,
    // Γ_ee·B started at 4 keV) and spread-only (scale and slope, mass started 2 MeV off,
    // Γ_ee·B from the linear start).
    let cases = [
        ("kf2", "scale", "gee_b_kev = 4.0", full_chain_points()),
        (
            "none",
            "scale_slope",
            &*format!("mass_gev = {}", MASS_GEV + 2e-3),
            spread_only_points(20.0),
        ),
    ];
    for (radiator, continuum, start, planned) in cases {
        let c = parse(&card(
            radiator,
            &format!("continuum = \"{continuum}\"\n{start}"),
        ));
        let points = noise_free_points(&c, &planned);
        let fit = c.fit.as_ref().unwrap();
        let r = fit_forward(&c.plan.chain, c.plan.continuum.as_ref(), fit, &points).unwrap();
        let mut want = vec![
            (Parameter::Mass, MASS_GEV),
            (Parameter::GeeB, GEE_B_KEV),
            (Parameter::ContinuumScale, 1.0),
        ];
        if continuum == "scale_slope" {
            want.push((Parameter::ContinuumSlope, 0.0));
        }
        for (p, want) in want {
            // The EDM tolerance 1e-6 puts the end point within ~1e-3 σ of the minimum;
            // the chain's integration noise adds less. Accept 1e-2 σ.
            assert_within_sigma(
                &format!("{radiator}, {continuum}: {}", p.key()),
                r.value(p).unwrap(),
                r.uncertainty(p).unwrap(),
                want,
                1e-2,
            );
        }
        assert!(r.chi2 < 1e-3, "{radiator}, {continuum}: chi2 {}", r.chi2);
        assert_eq!(r.ndf, planned.len() - r.parameters.len());
    }
}

#[test]
fn spread_keeps_the_narrow_width_area_and_the_fit_recovers_it() {
    // Outside reference: the narrow-width integral of the relativistic Breit–Wigner,
    // ∫σ_R d√s = 6π² Γ_ee B / M² (∫ds MΓ/((s − M²)² + M²Γ²) = π, ds = 2√s d√s; PDG review
    // "Cross-section formulae for specific processes"), and the same over a window
    // [E₁, E₂]: (6π² Γ_ee B/M²)·(1/π)[arctan((E₂² − M²)/MΓ) − arctan((E₁² − M²)/MΓ)],
    // exact up to the 1/√s weight's asymmetry in the window, O((Δ/M)·Γ/Δ) ≈ 1e-5 here.
    // A Gaussian spread is a normalised convolution, so the spread-only observed curve has
    // the same area (the Gaussian tails beyond ±20σ_W are below 1e-80).
    let cont = Hadrons::new(ConstantR(R_CONT));
    let line = ResonanceLine {
        mass_gev: MASS_GEV,
        width_gev: WIDTH_GEV,
        gee_b_kev: GEE_B_KEV,
    };
    let full = 6.0 * PI * PI * GEE_B_KEV * 1e-6 / (MASS_GEV * MASS_GEV) * GEV2_TO_NB;
    assert_rel("peak area", line.peak_area_nb_gev(), full, common::EXACT);
    let c = parse(&card("none", ""));
    let chain = c.plan.chain;
    // Resonance alone (continuum scale 0), trapezoid with h = 0.1σ_W over ±20σ_W: for a
    // smooth curve smeared by a Gaussian the trapezoid error is ~exp(−2π²σ_W²/h²) (nil).
    let shape = FitShape::new(&cont, line, 0.0, 0.0, MASS_GEV);
    let (e1, e2, steps) = (MASS_GEV - 0.020, MASS_GEV + 0.020, 400);
    let h = (e2 - e1) / steps as f64;
    let area: f64 = (0..=steps)
        .map(|k| {
            let w = if k == 0 || k == steps { 0.5 } else { 1.0 };
            w * h * chain.observed_nb(&shape, e1 + h * k as f64, SPREAD_MEV)
        })
        .sum();
    let mg = MASS_GEV * WIDTH_GEV;
    let m2 = MASS_GEV * MASS_GEV;
    let window = full / PI * (((e2 * e2 - m2) / mg).atan() - ((e1 * e1 - m2) / mg).atan());
    assert_rel("spread-only area in ±20 MeV", area, window, 1e-4);

    // The fit on a seeded spread-only scan recovers the injected Γ_ee·B within its error,
    // and that error is the counting precision of the signal: for an amplitude with known
    // shape over a small continuum, δ(Γ_ee B)/(Γ_ee B) ≈ 1/√(Σ N_signal) (Poisson); the
    // continuum and the free mass can only add to it (allowed: up to 1.3 times).
    let points = spread_only_points(20.0);
    let data = generate_scan(&chain, &TRUTH, &points, 99);
    let r = fit_scan(&c.plan, c.fit.as_ref().unwrap(), &data).unwrap();
    let (g, dg) = (
        r.value(Parameter::GeeB).unwrap(),
        r.uncertainty(Parameter::GeeB).unwrap(),
    );
    eprintln!(
        "spread only: Γee·B = {g:.4} ± {dg:.4} keV (injected {GEE_B_KEV}); area {area:.6} vs \
         {window:.6} nb GeV"
    );
    assert_within_sigma("gee_b (spread only)", g, dg, GEE_B_KEV, 3.0);
    let n_signal: f64 = points
        .iter()
        .map(|p| {
            let s = chain.observed_nb(&shape, p.sqrt_s_gev, SPREAD_MEV);
            p.efficiency * p.luminosity_nb_inv * s
        })
        .sum();
    let counting = 1.0 / n_signal.sqrt();
    assert!(
        dg / g >= 0.99 * counting && dg / g < 1.3 * counting,
        "relative error {:.4e} vs counting {counting:.4e}",
        dg / g
    );
    // The fitted area is the data's: 6π²Γ_ee B/M² from the fit parameters.
    let (a, da) = r.peak_area_nb_gev();
    assert_within_sigma("peak area", a, da, full, 3.0);
}

#[test]
fn pulls_of_seeded_toy_fits_are_standard_normal() {
    // 200 toys of the spread-only scan (the pull test checks the covariance of the fit,
    // which does not depend on which links the chain has; without radiation a fit takes
    // milliseconds). Lower luminosity than above, so the continuum scale matters too.
    // For n = 200 standard-normal pulls the mean has standard error 1/√200 = 0.071 and the
    // standard deviation 1/√400 = 0.05: accept 3 of them.
    let c = parse(&card("none", ""));
    let fit = c.fit.as_ref().unwrap();
    let points = spread_only_points(5.0);
    let toys = 200;
    let params = [Parameter::Mass, Parameter::GeeB, Parameter::ContinuumScale];
    let truth = [MASS_GEV, GEE_B_KEV, 1.0];
    let mut pulls = vec![Vec::new(); 3];
    for seed in 0..toys {
        let data = generate_scan(&c.plan.chain, &TRUTH, &points, 1000 + seed);
        let r = fit_scan(&c.plan, fit, &data).unwrap();
        for k in 0..3 {
            pulls[k]
                .push((r.value(params[k]).unwrap() - truth[k]) / r.uncertainty(params[k]).unwrap());
        }
    }
    let n = toys as f64;
    for (k, p) in pulls.iter().enumerate() {
        let mean = p.iter().sum::<f64>() / n;
        let sd = (p.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
        eprintln!(
            "{}: pull mean {mean:.3}, width {sd:.3} ({toys} toys)",
            params[k].key()
        );
        assert!(
            mean.abs() < 3.0 / n.sqrt(),
            "{}: pull mean {mean}",
            params[k].key()
        );
        assert!(
            (sd - 1.0).abs() < 3.0 / (2.0 * n).sqrt(),
            "{}: pull width {sd}",
            params[k].key()
        );
    }
}

#[test]
fn a_fit_that_cannot_converge_fails_loudly() {
    let c = parse(&card("none", "max_iterations = 1\nmass_gev = 3.0999"));
    let data = generate_scan(&c.plan.chain, &TRUTH, &spread_only_points(20.0), 5);
    // Started 3 MeV off with one step allowed.
    let Err(err) = fit_scan(&c.plan, c.fit.as_ref().unwrap(), &data) else {
        panic!("one step from 3 MeV off converged")
    };
    assert!(
        matches!(
            err,
            ScanError::FitFailed {
                stop: FitStop::MaxIterations,
                ..
            }
        ),
        "{err}"
    );
    assert!(err.to_string().contains("fit.max_iterations"), "{err}");
    // Γ_ee·B = 0 at the start: the mass moves no point, A is singular.
    let mut fit = c.fit.clone().unwrap();
    fit.gee_b_start_kev = Some(0.0);
    fit.max_iterations = 100;
    let err = fit_scan(&c.plan, &fit, &data).unwrap_err();
    assert!(
        matches!(
            err,
            ScanError::FitFailed {
                stop: FitStop::Singular,
                ..
            }
        ),
        "{err}"
    );
}

#[test]
fn bad_fit_cards_name_their_key() {
    let base = card("none", "");
    for (from, to, want) in [
        (
            "resonance = \"jpsi_like\"",
            "resonance = \"psi3\"",
            "fit.resonance",
        ),
        (
            "resonance = \"jpsi_like\"",
            "continuum = \"cubic\"",
            "fit.continuum",
        ),
        (
            "resonance = \"jpsi_like\"",
            "mass_gev = -3.0",
            "fit.mass_gev",
        ),
        (
            "resonance = \"jpsi_like\"",
            "gee_b_kev = 0.0",
            "fit.gee_b_kev",
        ),
        (
            "resonance = \"jpsi_like\"",
            "max_iterations = 0",
            "fit.max_iterations",
        ),
        (
            "resonance = \"jpsi_like\"",
            "width_gev = 1e-4",
            "unknown field",
        ),
    ] {
        let text = base.replace(from, to);
        assert_ne!(text, base);
        let Err(err) = parse_full_scan_card(&text, "scan.toml") else {
            panic!("{to:?} was accepted")
        };
        let err = err.to_string();
        assert!(
            err.starts_with("scan.toml") && err.contains(want),
            "{to:?}: {err}"
        );
    }
    // An unknown resonance names the ones the card has.
    let unknown = base.replace("resonance = \"jpsi_like\"", "resonance = \"psi3\"");
    let err = parse_full_scan_card(&unknown, "scan.toml")
        .err()
        .unwrap()
        .to_string();
    assert!(
        err.contains("'psi3'") && err.contains("'jpsi_like'"),
        "{err}"
    );
    // The plain parser validates [fit] too.
    assert!(radnorm::scan::parse_scan_card(&unknown, "scan.toml").is_err());
    // A card without any [[resonance]] has nothing to fit.
    let block = format!(
        "[[resonance]]\nname = \"jpsi_like\"\nmass_gev = {MASS_GEV}\nwidth_gev = {WIDTH_GEV}\n"
    );
    assert!(base.contains(&block));
    let err = parse_full_scan_card(&base.replace(&block, ""), "scan.toml")
        .err()
        .unwrap()
        .to_string();
    assert!(
        err.contains("fit.resonance") && err.contains("no [[resonance]]"),
        "{err}"
    );
    // Without fit.resonance the only resonance is taken.
    let only = parse(&base.replace("resonance = \"jpsi_like\"\n", ""));
    assert_eq!(only.fit.unwrap().resonance, "jpsi_like");

    // Fewer points than parameters + 1: four points for mass, Γ_ee·B, scale and slope.
    let c = parse(&card("none", "continuum = \"scale_slope\""));
    let data = generate_scan(&c.plan.chain, &TRUTH, &spread_only_points(20.0)[8..12], 3);
    let points = observed_points(&c.plan, &data).unwrap();
    assert_eq!(points.len(), 4);
    let err = fit_scan(&c.plan, c.fit.as_ref().unwrap(), &data).unwrap_err();
    let msg = err.to_string();
    assert!(
        matches!(
            err,
            ScanError::FitTooFewPoints {
                points: 4,
                parameters: 4,
                ..
            }
        ) && msg.contains("fit.continuum")
            && msg.contains("at least 5 points"),
        "{msg}"
    );
}

fn correct(card: &Path, data: &Path, out: &Path) -> assert_cmd::assert::Assert {
    Command::cargo_bin("radnorm")
        .unwrap()
        .env_remove("RUST_BACKTRACE")
        .args(["correct", "--card"])
        .arg(card)
        .arg("--data")
        .arg(data)
        .arg("--out")
        .arg(out)
        .assert()
}

#[test]
fn correct_with_a_fit_table_writes_fit_json() {
    let dir = tempfile::tempdir().unwrap();
    // Spread only (no radiation), so that the end-to-end run takes well under a second;
    // the full chain is exercised by the library tests above.
    let text = card("none", "continuum = \"scale_slope\"\ngee_b_kev = 4.0");
    let c = parse(&text);
    let data = generate_scan(&c.plan.chain, &TRUTH, &full_chain_points(), 11);
    let card_path = dir.path().join("scan.toml");
    let csv = dir.path().join("scan.csv");
    std::fs::write(&card_path, &text).unwrap();
    std::fs::write(&csv, scan_to_csv(&data, "invented scenario for tests")).unwrap();
    let out = dir.path().join("fitted");
    let ok = correct(&card_path, &csv, &out).success();
    let stdout = String::from_utf8_lossy(&ok.get_output().stdout).into_owned();
    assert!(
        stdout.contains("forward fit of jpsi_like to 17 points") && stdout.contains("converged"),
        "{stdout}"
    );
    assert!(
        stdout.contains("gee_b_kev") && stdout.contains("held fixed"),
        "{stdout}"
    );
    for f in ["fit.json", "fit.csv", "plots/fit.svg"] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    assert!(!out.join("corrected.json").exists());
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("fit.json")).unwrap()).unwrap();
    let s = &json["summary"];
    for key in [
        "mass_gev",
        "mass_unc_gev",
        "gee_b_kev",
        "gee_b_unc_kev",
        "continuum_scale",
        "continuum_scale_unc",
        "continuum_slope_per_gev",
        "continuum_slope_unc_per_gev",
        "peak_area_nb_gev",
        "peak_area_unc_nb_gev",
        "width_gev",
        "chi2",
        "chi2_per_ndf",
        "edm",
    ] {
        assert!(s[key].is_number(), "{key}: {s}");
    }
    assert_eq!(s["status"], "converged");
    assert_eq!(s["ndf"], 13);
    assert_eq!(s["width_fixed"], true);
    assert_eq!(
        s["parameters"],
        serde_json::json!([
            "mass_gev",
            "gee_b_kev",
            "continuum_scale",
            "continuum_slope_per_gev"
        ])
    );
    let corr = s["correlation"].as_array().unwrap();
    assert_eq!(corr.len(), 4);
    assert!(corr.iter().all(|r| r.as_array().unwrap().len() == 4));
    let m = s["mass_gev"].as_f64().unwrap();
    let dm = s["mass_unc_gev"].as_f64().unwrap();
    assert_within_sigma("mass (CLI)", m, dm, MASS_GEV, 3.0);
    let rows = json["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 17);
    for key in [
        "sqrt_s_gev",
        "energy_spread_mev",
        "sigma_obs_nb",
        "sigma_obs_stat_nb",
        "sigma_obs_fit_nb",
        "sigma_obs_fit_stat_nb",
        "pull",
    ] {
        assert!(rows[5][key].is_number(), "{key}: {}", rows[5]);
    }
    // The pulls are (σ_obs − σ_fit)/δ_fit and χ² is the sum of their squares.
    let mut sum = 0.0;
    for row in rows {
        let f = |k: &str| row[k].as_f64().unwrap();
        let pull = (f("sigma_obs_nb") - f("sigma_obs_fit_nb")) / f("sigma_obs_fit_stat_nb");
        assert_rel("pull", f("pull"), pull, common::EXACT);
        sum += pull * pull;
    }
    assert_rel("chi2", s["chi2"].as_f64().unwrap(), sum, 1e-12);
    assert_eq!(json["provenance"]["card_file"], "scan.toml");
    let csv_text = std::fs::read_to_string(out.join("fit.csv")).unwrap();
    assert!(csv_text.starts_with("# radnorm "));
    assert!(csv_text.contains(
        "sqrt_s_gev,energy_spread_mev,sigma_obs_nb,sigma_obs_stat_nb,sigma_obs_fit_nb,\
         sigma_obs_fit_stat_nb,pull"
    ));

    // A [fit] naming an unknown resonance: the key in the message, nothing written.
    let bad = dir.path().join("bad.toml");
    std::fs::write(
        &bad,
        text.replace("resonance = \"jpsi_like\"", "resonance = \"R\""),
    )
    .unwrap();
    let never = dir.path().join("never");
    let err = correct(&bad, &csv, &never).failure();
    let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    assert!(
        msg.contains("fit.resonance") && msg.contains("'R'"),
        "{msg}"
    );
    assert!(!never.exists());
}
