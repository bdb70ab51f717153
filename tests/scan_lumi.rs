//! A scan normalised by luminosity-monitor counts through the luminosity layer: the scan
//! card's `[luminosity.monitor]` (or `luminosity.monitor_card`) gives σ_vis per energy and
//! the layer's budget, which joins the scan budget.

mod common;

use assert_cmd::Command;
use common::{EXACT, QUADRATURE, assert_abs, assert_rel};
use radnorm::constants::sigma_point_nb;
use radnorm::isr::{Cuts, Scheme};
use radnorm::process::CrossSection;
use radnorm::scan::generate::{PlannedPoint, generate_scan};
use radnorm::scan::{
    CorrectedScan, ForwardChain, ScanPoint, correct_scan, parse_scan, parse_scan_card,
    scan_source_name,
};
use std::collections::HashMap;
use std::path::Path;

/// α(0), CODATA 2022: α⁻¹ = 137.035 999 177(21).
const ALPHA: f64 = 1.0 / 137.035_999_177;
/// (ħc)² = 0.389 379 3721 GeV² mb (PDG 2024 "Physical constants"), in GeV² nb.
const HBARC2_NB: f64 = 0.389_379_372_1e6;

/// The bracket of the Bhabha dσ/dΩ = (α²/2s)[(s² + u²)/t² + 2u²/(st) + (t² + u²)/s²]
/// (massless, γ exchange only; physics notes §1, e.g. Peskin & Schroeder problem 5.2) with
/// t = −s x/2, u = −s(2 − x)/2 and x = 1 − cos θ:
/// (4 + (2 − x)²)/x² − (2 − x)²/x + (x² + (2 − x)²)/4.
fn bhabha_bracket(x: f64) -> f64 {
    (4.0 + (2.0 - x).powi(2)) / (x * x) - (2.0 - x).powi(2) / x + (x * x + (2.0 - x).powi(2)) / 4.0
}

/// An antiderivative in x of [`bhabha_bracket`], derived by hand term by term:
/// 8/x² − 4/x + 1, −4/x + 4 − x and x²/2 − x + 1 integrate to
/// F(x) = −8/x − 8 ln x + 6x − x² + x³/6 (checked against quadrature below).
fn bhabha_antiderivative(x: f64) -> f64 {
    -8.0 / x - 8.0 * x.ln() + 6.0 * x - x * x + x.powi(3) / 6.0
}

/// Born Bhabha cross-section (nb) with the electron in [θ_min, θ_max] (degrees):
/// σ = ∫dφ ∫dcosθ dσ/dΩ = (πα²/s)[F(1 − cos θ_max) − F(1 − cos θ_min)] (x grows with θ).
fn bhabha_closed_nb(s: f64, theta_min_deg: f64, theta_max_deg: f64) -> f64 {
    let x = |deg: f64| 1.0 - deg.to_radians().cos();
    std::f64::consts::PI * ALPHA * ALPHA / s
        * (bhabha_antiderivative(x(theta_max_deg)) - bhabha_antiderivative(x(theta_min_deg)))
        * HBARC2_NB
}

/// The same by composite Simpson in cos θ (an independent check of the antiderivative).
fn bhabha_simpson_nb(s: f64, theta_min_deg: f64, theta_max_deg: f64) -> f64 {
    let (c0, c1) = (
        theta_max_deg.to_radians().cos(),
        theta_min_deg.to_radians().cos(),
    );
    let n = 20_000;
    let h = (c1 - c0) / n as f64;
    let f = |c: f64| bhabha_bracket(1.0 - c);
    let mut sum = f(c0) + f(c1);
    for k in 1..n {
        sum += f(c0 + k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
    }
    std::f64::consts::PI * ALPHA * ALPHA / s * sum * h / 3.0 * HBARC2_NB
}

#[test]
fn closed_form_bhabha_equals_its_quadrature_and_the_small_angle_limit() {
    for (s, a, b) in [(4.0, 40.0, 140.0), (9.0, 20.0, 160.0), (100.0, 30.0, 90.0)] {
        assert_rel(
            &format!("Bhabha in {a}-{b} deg at s = {s}: closed form vs Simpson"),
            bhabha_closed_nb(s, a, b),
            bhabha_simpson_nb(s, a, b),
            QUADRATURE,
        );
    }
    // Small angles: σ ≈ (16πα²/s)(1/θ_min² − 1/θ_max²), good to ~0.1% at 30–50 mrad
    // (physics notes §1).
    let (a, b) = (0.030f64, 0.050f64);
    let small = 16.0 * std::f64::consts::PI * ALPHA * ALPHA / 100.0
        * (1.0 / (a * a) - 1.0 / (b * b))
        * HBARC2_NB;
    assert_rel(
        "small-angle limit at 30-50 mrad",
        bhabha_closed_nb(100.0, a.to_degrees(), b.to_degrees()),
        small,
        2e-3,
    );
}

/// The energies of the library-level scans: 2.0–3.0 GeV in steps of 0.1 GeV.
fn energies() -> Vec<f64> {
    (0..11).map(|i| 2.0 + 0.1 * i as f64).collect()
}

/// The invented dressed line shape: R = 2 continuum.
struct Continuum;
impl CrossSection for Continuum {
    fn sigma_nb(&self, s: f64) -> f64 {
        2.0 * sigma_point_nb(s)
    }
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * 0.139_570_39f64.powi(2)
    }
}

const N_BKG: f64 = 500.0;
const EFF: f64 = 0.9;

/// Monitor counts of point i (invented).
fn n_bhabha(i: usize) -> f64 {
    200_000.0 + 1000.0 * i as f64
}

/// A scan CSV with monitor counts; the signal counts are drawn (seeded) for luminosities
/// `lumi[i]` through the ISR chain with `min_mass_gev = 1.8`.
fn bhabha_csv(energies: &[f64], lumi: &[f64]) -> String {
    let chain = ForwardChain::new(
        Scheme::KuraevFadin2,
        Cuts::NONE.with_min_mass_gev(1.8).unwrap(),
    );
    let planned: Vec<PlannedPoint> = energies
        .iter()
        .zip(lumi)
        .map(|(&e, &l)| PlannedPoint {
            sqrt_s_gev: e,
            luminosity_nb_inv: l,
            efficiency: 0.7,
            n_bkg: 20.0,
            energy_spread_mev: 0.0,
        })
        .collect();
    let signal = generate_scan(&chain, &Continuum, &planned, 7);
    let mut csv = String::from(
        "sqrt_s_gev,n_events,n_bkg,efficiency,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n",
    );
    for (i, p) in signal.iter().enumerate() {
        csv.push_str(&format!(
            "{},{},{},{},{},{N_BKG},{EFF}\n",
            p.sqrt_s_gev,
            p.n_events,
            p.n_bkg,
            p.efficiency,
            n_bhabha(i)
        ));
    }
    csv
}

/// A Born-level monitor (no radiation, no VP) in 40–140°: its σ_vis is the closed form.
const SCAN_BORN_MONITOR: &str = r#"
[process]
final_state = "hadrons"
r_ratio = 2.0
[radiation]
radiator = "kf2"
min_mass_gev = 1.8
[vp]
model = "none"
[beam]
energy_unc_mev = 1.0
[luminosity]
scale_unc_rel = 0.003
[luminosity.monitor]
process = "ee"
born_only = true
vp = "none"
[luminosity.monitor.acceptance]
theta_min_deg = 40.0
theta_max_deg = 140.0
[luminosity.monitor.uncertainty]
theta_edge_deg = 0.05
efficiency_rel = 0.002
"#;

/// The shift of σ_obs (or another quantity's budget) of source `name` at each point.
fn shifts(b: &radnorm::budget::Budget, name: &str) -> Vec<f64> {
    b.sources()
        .iter()
        .find(|s| s.name == name)
        .unwrap_or_else(|| {
            let names: Vec<&str> = b.sources().iter().map(|s| s.name.as_str()).collect();
            panic!("no source {name}; have {names:?}")
        })
        .shifts
        .clone()
}

fn born_monitor_scan(card: &str) -> (Vec<ScanPoint>, CorrectedScan) {
    let e = energies();
    let lumi: Vec<f64> = e
        .iter()
        .enumerate()
        .map(|(i, &e)| (n_bhabha(i) - N_BKG) / (EFF * bhabha_closed_nb(e * e, 40.0, 140.0)))
        .collect();
    let data = parse_scan(&bhabha_csv(&e, &lumi), "scan.csv").unwrap();
    let plan = parse_scan_card(card, "scan.toml").unwrap();
    let result = correct_scan(&plan, &data).unwrap();
    (data, result)
}

#[test]
fn born_monitor_gives_the_closed_form_luminosity_and_budget() {
    let plan = parse_scan_card(SCAN_BORN_MONITOR, "scan.toml").unwrap();
    assert!(
        plan.luminosity
            .describe
            .contains("inline [luminosity.monitor]"),
        "{}",
        plan.luminosity.describe
    );
    let (data, r) = born_monitor_scan(SCAN_BORN_MONITOR);
    let lumi = plan.luminosity.evaluate(&data).unwrap();
    let d_gev = 1.0e-3; // beam.energy_unc_mev = 1.0
    let dtheta = 0.05;
    for (i, p) in r.points.iter().enumerate() {
        let e = p.sqrt_s_gev;
        let s = e * e;
        // Reference: the closed form above (physics notes §1), L = (N − B)/(ε σ) (§5).
        let sigma = bhabha_closed_nb(s, 40.0, 140.0);
        let at = format!("sqrt_s = {e} GeV");
        assert_rel(
            &format!("sigma_vis at {at}"),
            lumi.sigma_vis_nb[i].unwrap(),
            sigma,
            1e-12,
        );
        let l = (n_bhabha(i) - N_BKG) / (EFF * sigma);
        assert_rel(
            &format!("luminosity at {at}"),
            p.luminosity_nb_inv,
            l,
            1e-12,
        );
        let q = &data[i];
        let obs = (q.n_events - q.n_bkg) / (q.efficiency * l);
        assert_rel(&format!("sigma_obs at {at}"), p.sigma_obs_nb, obs, 1e-12);

        // The budget of σ_obs: each monitor term is δσ_vis/σ_vis of σ_obs.
        let rel = |name: &str| shifts(&r.obs, name)[i] / obs;
        // σ_vis ∝ 1/s: (σ(E+d) − σ(E−d))/2 / σ(E) = −2 d E³/(E² − d²)² exactly.
        let want = -2.0 * d_gev * e.powi(3) / (e * e - d_gev * d_gev).powi(2);
        assert_rel(
            &format!("beam_energy at {at}"),
            rel("beam_energy"),
            want,
            1e-9,
        );
        // Width: both ends of the window moved in (narrow) or out (wide) by δθ.
        let narrow = bhabha_closed_nb(s, 40.0 + dtheta, 140.0 - dtheta);
        let wide = bhabha_closed_nb(s, 40.0 - dtheta, 140.0 + dtheta);
        assert_rel(
            &format!("acceptance_width at {at}"),
            rel("luminosity:acceptance_width"),
            0.5 * (narrow - wide) / sigma,
            1e-9,
        );
        // Offset: every edge moved by ±δθ; back to back in a window symmetric about 90°
        // both directions leave [40 + δθ, 140 − δθ], so the one-sided change is taken
        // (its sign is a convention when both directions agree: compare sizes).
        assert_rel(
            &format!("acceptance_offset at {at}"),
            rel("luminosity:acceptance_offset").abs(),
            (sigma - narrow) / sigma,
            1e-9,
        );
        assert_rel(
            &format!("monitor efficiency at {at}"),
            rel("luminosity:efficiency"),
            0.002,
            EXACT,
        );
        assert_rel(
            &format!("luminosity_scale at {at}"),
            rel("luminosity_scale"),
            0.003,
            EXACT,
        );
        // Monitor statistics: √N/(N − B).
        assert_rel(
            &format!("luminosity_stat at {at}"),
            rel("luminosity_stat"),
            n_bhabha(i).sqrt() / (n_bhabha(i) - N_BKG),
            1e-12,
        );
        // A uniform relative shift of σ_obs is the same relative shift of σ_dressed
        // (the unfolding is linear; the response matrix reproduces it to its residual).
        let y = p.sigma_dressed_nb;
        assert_rel(
            &format!("dressed monitor efficiency at {at}"),
            shifts(&r.dressed, "luminosity:efficiency")[i] / y,
            0.002,
            1e-6,
        );
    }
    // No radiation and no VP in the monitor: no theory or VP terms.
    for s in r.obs.sources() {
        assert!(
            !s.name.starts_with("vp:") && !s.name.contains("rc_"),
            "{}",
            s.name
        );
    }
}

#[test]
fn without_radiation_the_monitor_terms_pass_unchanged_to_dressed() {
    // No ISR and no spread: σ_dressed = σ_obs, the response matrix is the identity, and the
    // correction does not depend on the energy: every monitor term, the beam energy
    // included, is the same shift of σ_dressed as of σ_obs.
    let card = SCAN_BORN_MONITOR.replace("radiator = \"kf2\"", "radiator = \"none\"");
    let (_, r) = born_monitor_scan(&card);
    for name in [
        "beam_energy",
        "luminosity:acceptance_width",
        "luminosity:acceptance_offset",
        "luminosity:efficiency",
    ] {
        let (o, d) = (shifts(&r.obs, name), shifts(&r.dressed, name));
        for i in 0..o.len() {
            assert_abs(
                &format!("{name} at point {i}"),
                d[i],
                o[i],
                1e-12 * r.points[i].sigma_obs_nb,
            );
        }
    }
}

#[test]
fn monitor_card_file_equals_the_inline_table() {
    let dir = tempfile::tempdir().unwrap();
    let lumi_card = r#"process = "ee"
born_only = true
vp = "none"
[acceptance]
theta_min_deg = 40.0
theta_max_deg = 140.0
[uncertainty]
theta_edge_deg = 0.05
efficiency_rel = 0.002
"#;
    std::fs::create_dir(dir.path().join("cards")).unwrap();
    std::fs::write(dir.path().join("cards/lumi.toml"), lumi_card).unwrap();
    let head = SCAN_BORN_MONITOR
        .split("[luminosity.monitor]")
        .next()
        .unwrap()
        .to_string();
    let card = format!("{head}monitor_card = \"cards/lumi.toml\"\n");
    let path = dir.path().join("scan.toml");
    let plan = parse_scan_card(&card, path.to_str().unwrap()).unwrap();
    assert!(plan.luminosity.describe.contains("lumi.toml"));
    let inline = parse_scan_card(SCAN_BORN_MONITOR, "scan.toml").unwrap();
    let e = energies();
    let data = parse_scan(&bhabha_csv(&e, &vec![1.0e4; e.len()]), "scan.csv").unwrap();
    let (a, b) = (
        plan.luminosity.evaluate(&data).unwrap(),
        inline.luminosity.evaluate(&data).unwrap(),
    );
    assert_eq!(a, b);
}

#[test]
fn lumi_source_names_in_the_scan_budget() {
    for (lumi, scan) in [
        ("beam_energy", "beam_energy"),
        ("vp_pipi", "vp:pipi"),
        ("vp_inclusive_1_2_gev", "vp:inclusive_1_2_gev"),
        ("rc_scale", "luminosity:rc_scale"),
        ("acceptance_width", "luminosity:acceptance_width"),
        ("numerical", "luminosity:numerical"),
    ] {
        assert_eq!(scan_source_name(lumi), scan, "{lumi}");
    }
}

#[test]
fn bad_monitor_cards_name_the_key() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("bad_lumi.toml"),
        "[acceptance]\ntheta_min_deg = 40.0\ntheta_max_deg = 30.0\nborn_only = 1\n",
    )
    .unwrap();
    std::fs::write(
        dir.path().join("range_lumi.toml"),
        "born_only = true\n[acceptance]\ntheta_min_deg = 40.0\ntheta_max_deg = 30.0\n",
    )
    .unwrap();
    let scan_card = dir.path().join("scan.toml");
    let scan_card = scan_card.to_str().unwrap();
    let base = SCAN_BORN_MONITOR
        .split("[luminosity.monitor]")
        .next()
        .unwrap()
        .to_string();
    let monitor = |extra: &str| {
        SCAN_BORN_MONITOR.replace(
            "theta_max_deg = 140.0\n",
            &format!("theta_max_deg = 140.0\n{extra}\n"),
        )
    };
    for (card, want) in [
        (
            SCAN_BORN_MONITOR.replace("theta_min_deg = 40.0", "theta_min_deg = -5.0"),
            "luminosity.monitor.acceptance.theta_min_deg",
        ),
        (
            SCAN_BORN_MONITOR.replace("theta_max_deg = 140.0", "theta_max_deg = 30.0"),
            "luminosity.monitor.acceptance.theta_max_deg",
        ),
        (monitor("theta_minimum = 3.0"), "theta_minimum"),
        (
            SCAN_BORN_MONITOR.replace("process = \"ee\"", "process = \"tautau\""),
            "luminosity.monitor.process",
        ),
        (
            SCAN_BORN_MONITOR.replace("born_only = true\n", ""),
            "luminosity.monitor.acceptance.e_min_frac",
        ),
        (
            SCAN_BORN_MONITOR.replace("process = \"ee\"", "process = \"ee\"\nsqrt_s_gev = 3.0"),
            "luminosity.monitor.sqrt_s_gev",
        ),
        (
            SCAN_BORN_MONITOR.replace("efficiency_rel = 0.002", "sqrt_s_gev = 0.002"),
            "luminosity.monitor.uncertainty.sqrt_s_gev",
        ),
        (
            SCAN_BORN_MONITOR.replace(
                "scale_unc_rel = 0.003",
                "scale_unc_rel = 0.003\nvisible_sigma_times_s_nb_gev2 = 4500.0",
            ),
            "luminosity.monitor: more than one luminosity monitor",
        ),
        (
            format!("{base}monitor_card = \"missing.toml\"\n"),
            "luminosity.monitor_card: cannot read",
        ),
        (
            format!("{base}monitor_card = \"bad_lumi.toml\"\n"),
            "luminosity.monitor_card",
        ),
        (
            format!("{base}monitor_card = \"range_lumi.toml\"\n"),
            "range_lumi.toml: acceptance.theta_max_deg",
        ),
        (
            format!("{SCAN_BORN_MONITOR}[[uncertainty]]\nname = \"luminosity:x\"\nrel = 0.1\n"),
            "uncertainty[0].name",
        ),
    ] {
        let Err(err) = parse_scan_card(&card, scan_card) else {
            panic!("accepted:\n{card}")
        };
        let err = err.to_string();
        assert!(
            err.contains(want) && err.starts_with(scan_card),
            "want {want:?} in: {err}"
        );
    }
    // The same energy uncertainty in both places is one uncertainty, accepted.
    let same = SCAN_BORN_MONITOR.replace("efficiency_rel = 0.002", "sqrt_s_gev = 0.001");
    assert_eq!(
        parse_scan_card(&same, scan_card).unwrap().energy_unc_mev,
        1.0
    );
    // Given only in the monitor, it is the scan's too.
    let only = same.replace("energy_unc_mev = 1.0", "");
    assert_rel(
        "energy uncertainty from the monitor",
        parse_scan_card(&only, scan_card).unwrap().energy_unc_mev,
        1.0,
        EXACT,
    );
}

#[test]
fn bhabha_rows_without_a_monitor_are_refused() {
    let card = SCAN_BORN_MONITOR
        .split("[luminosity.monitor]")
        .next()
        .unwrap()
        .to_string();
    let plan = parse_scan_card(&card, "scan.toml").unwrap();
    let e = energies();
    let data = parse_scan(&bhabha_csv(&e, &vec![1.0e4; e.len()]), "scan.csv").unwrap();
    let Err(err) = correct_scan(&plan, &data) else {
        panic!("Bhabha rows accepted without a monitor")
    };
    let err = err.to_string();
    assert!(
        err.contains("no luminosity monitor") && err.contains("[luminosity.monitor]"),
        "{err}"
    );
}

// ---------------------------------------------------------------- the command line

/// A monitor with radiation and full VP, as a luminosity run card (the same text goes
/// inline into the scan card under `[luminosity.monitor]`).
const MONITOR: &str = r#"process = "ee"
vp = "full"
[acceptance]
theta_min_deg = 40.0
theta_max_deg = 140.0
acol_max_deg = 10.0
e_min_frac = 0.5
[uncertainty]
theta_edge_deg = 0.01
sqrt_s_gev = 0.0005
efficiency_rel = 0.002
"#;

const SCAN_HEAD: &str = r#"[process]
final_state = "hadrons"
r_ratio = 2.0
[radiation]
radiator = "kf2"
min_mass_gev = 1.8
[vp]
model = "full"
"#;

fn inline_monitor() -> String {
    let body = MONITOR
        .replace("[acceptance]", "[luminosity.monitor.acceptance]")
        .replace("[uncertainty]", "[luminosity.monitor.uncertainty]");
    format!("{SCAN_HEAD}[luminosity.monitor]\n{body}")
}

fn radnorm(args: &[&str], dir: &Path) -> assert_cmd::assert::Assert {
    Command::cargo_bin("radnorm")
        .unwrap()
        .env_remove("RUST_BACKTRACE")
        .current_dir(dir)
        .args(args)
        .assert()
}

fn json_file(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// name → shifts of one quantity in budget.json.
fn budget_sources(doc: &serde_json::Value, quantity: &str) -> HashMap<String, Vec<f64>> {
    doc["budget"][quantity]["sources"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| {
            let shifts = s["shifts_nb"]
                .as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_f64().unwrap())
                .collect();
            (s["name"].as_str().unwrap().to_string(), shifts)
        })
        .collect()
}

#[test]
fn correct_with_an_inline_monitor_matches_radnorm_lumi() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let e = [2.0, 2.2, 2.4, 2.6];
    std::fs::write(d.join("scan.toml"), inline_monitor()).unwrap();
    std::fs::write(d.join("lumi.toml"), MONITOR).unwrap();
    std::fs::write(d.join("scan.csv"), bhabha_csv(&e, &[1.0e4; 4])).unwrap();
    let mut counts = String::from("run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n");
    for (i, e) in e.iter().enumerate() {
        counts.push_str(&format!("r{i},{e},{},{N_BKG},{EFF}\n", n_bhabha(i)));
    }
    std::fs::write(d.join("counts.csv"), counts).unwrap();

    let ok = radnorm(
        &[
            "correct",
            "--card",
            "scan.toml",
            "--data",
            "scan.csv",
            "--out",
            "out",
        ],
        d,
    )
    .success();
    let stdout = String::from_utf8_lossy(&ok.get_output().stdout).into_owned();
    assert!(stdout.contains("corrected 4 points"), "{stdout}");
    let corrected = json_file(&d.join("out/corrected.json"));
    let budget = json_file(&d.join("out/budget.json"));
    let csv = std::fs::read_to_string(d.join("out/corrected.csv")).unwrap();
    assert!(
        csv.contains("luminosity monitor (inline [luminosity.monitor]): ee in first 40-140 deg"),
        "{csv}"
    );

    let lumi = radnorm(
        &[
            "lumi",
            "--card",
            "lumi.toml",
            "--data",
            "counts.csv",
            "--format",
            "json",
        ],
        d,
    )
    .success();
    let lumi: serde_json::Value = serde_json::from_slice(&lumi.get_output().stdout).unwrap();

    let obs = budget_sources(&budget, "sigma_obs");
    let dressed = budget_sources(&budget, "sigma_dressed");
    let born = budget_sources(&budget, "sigma_born");
    let mut compared = 0;
    for i in 0..e.len() {
        let row = &corrected["rows"][i];
        let run = &lumi["rows"][i];
        let l = run["luminosity_nb_inv"].as_f64().unwrap();
        // The same counts through the same monitor: the same luminosity.
        assert_rel(
            &format!("luminosity at {} GeV", e[i]),
            row["luminosity_nb_inv"].as_f64().unwrap(),
            l,
            1e-12,
        );
        let sigma_obs = row["sigma_obs_nb"].as_f64().unwrap();
        // Every term of the luminosity budget appears in σ_obs with the same relative size
        // (|δL/L| = |δσ_obs/σ_obs|: σ_obs ∝ 1/L).
        for (key, value) in run["budget"].as_object().unwrap() {
            let name = key.trim_end_matches("_nb_inv");
            let scan_name = match name {
                "statistical" => "luminosity_stat".to_string(),
                "efficiency" => "luminosity:efficiency".to_string(),
                other => scan_source_name(other),
            };
            let want = value.as_f64().unwrap() / l;
            if want == 0.0 {
                continue;
            }
            let got = obs
                .get(&scan_name)
                .unwrap_or_else(|| panic!("{scan_name} missing from sigma_obs: {:?}", obs.keys()))
                [i]
                / sigma_obs;
            assert_rel(
                &format!("{scan_name} at {} GeV", e[i]),
                got.abs(),
                want.abs(),
                1e-10,
            );
            compared += 1;
        }
        // The monitor's +1σ of an R region moves σ_obs and through it σ_dressed; σ_bare
        // also moves through the VP factor of the same variation.
        for region in ["pipi", "inclusive_1_2_gev"] {
            let name = format!("vp:{region}");
            assert!(obs[&name][i] != 0.0 && dressed[&name][i] != 0.0, "{name}");
            assert!(born.contains_key(&name));
        }
    }
    // statistics, efficiency, numerical, two geometry terms, beam energy, 5 VP regions,
    // 2 theory terms, at 4 points.
    assert_eq!(compared, 4 * 13);
    for name in ["luminosity:rc_scale", "luminosity:rc_nonlog", "beam_energy"] {
        assert!(
            dressed.contains_key(name) && born.contains_key(name),
            "{name}"
        );
    }

    // The same scan with the luminosities given: σ_obs is unchanged, and the difference in
    // a VP region's σ_bare shift is the monitor's part, σ_dressed shift / vp_factor.
    let mut given = String::from("sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv\n");
    let data = parse_scan(
        &std::fs::read_to_string(d.join("scan.csv")).unwrap(),
        "scan.csv",
    )
    .unwrap();
    for (i, p) in data.iter().enumerate() {
        given.push_str(&format!(
            "{},{},{},{},{}\n",
            p.sqrt_s_gev,
            p.n_events,
            p.n_bkg,
            p.efficiency,
            corrected["rows"][i]["luminosity_nb_inv"].as_f64().unwrap()
        ));
    }
    std::fs::write(d.join("given.csv"), given).unwrap();
    std::fs::write(
        d.join("given.toml"),
        format!("{SCAN_HEAD}[beam]\nenergy_unc_mev = 0.5\n"),
    )
    .unwrap();
    radnorm(
        &[
            "correct",
            "--card",
            "given.toml",
            "--data",
            "given.csv",
            "--out",
            "given",
        ],
        d,
    )
    .success();
    let given_budget = budget_sources(&json_file(&d.join("given/budget.json")), "sigma_born");
    let given_rows = json_file(&d.join("given/corrected.json"));
    for i in 0..e.len() {
        let row = &corrected["rows"][i];
        assert_rel(
            "sigma_dressed with given luminosity",
            given_rows["rows"][i]["sigma_dressed_nb"].as_f64().unwrap(),
            row["sigma_dressed_nb"].as_f64().unwrap(),
            1e-9,
        );
        let f = row["vp_factor"].as_f64().unwrap();
        for region in ["pipi", "omega_phi", "inclusive_1_2_gev", "pqcd", "narrow"] {
            let name = format!("vp:{region}");
            assert_abs(
                &format!("{name} of sigma_born at {} GeV", e[i]),
                born[&name][i] - given_budget[&name][i],
                dressed[&name][i] / f,
                1e-9 * row["sigma_born_nb"].as_f64().unwrap(),
            );
        }
    }
}

#[test]
fn correct_refuses_bhabha_rows_without_a_monitor() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("scan.toml"), SCAN_HEAD).unwrap();
    let e = energies();
    std::fs::write(d.join("scan.csv"), bhabha_csv(&e, &vec![1.0e4; e.len()])).unwrap();
    let err = radnorm(
        &[
            "correct",
            "--card",
            "scan.toml",
            "--data",
            "scan.csv",
            "--out",
            "out",
        ],
        d,
    )
    .failure();
    let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    assert!(msg.contains("no luminosity monitor"), "{msg}");
    assert!(!d.join("out").exists());
}
