//! `radnorm lumi` end to end: card + counts → JSON rows and summary; bad input → a clear
//! error naming file, line and field, and no output file.

mod common;
use common::{radnorm, radnorm_json};
use serde_json::Value;
use std::fs;

const CARD: &str = r#"
process = "ee"
vp = "none"
[acceptance]
theta_min_deg = 40.0
theta_max_deg = 140.0
acol_max_deg = 10.0
e_min_frac = 0.5
[uncertainty]
theta_edge_deg = 0.01
sqrt_s_gev = 0.005
efficiency_rel = 0.002
"#;

const COUNTS: &str = "run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency
# invented demo scenario
r1,10.58,120000,1200,0.92
r2,10.58,80000,900,0.92
r3,10.0,50000,400,0.90
";

#[test]
fn luminosity_table_follows_the_contract() {
    let dir = tempfile::tempdir().unwrap();
    let (card, data) = (dir.path().join("lumi.toml"), dir.path().join("counts.csv"));
    fs::write(&card, CARD).unwrap();
    fs::write(&data, COUNTS).unwrap();
    let (card, data) = (card.to_str().unwrap(), data.to_str().unwrap());
    let v = radnorm_json(&["lumi", "--card", card, "--data", data]);
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 3);
    let mut total = 0.0;
    for r in rows {
        // L = (N − N_bkg)/(ε σ_vis) (physics notes §5) from the row's own inputs.
        let l = r["luminosity_nb_inv"].as_f64().unwrap();
        let want = (r["n_bhabha"].as_f64().unwrap() - r["n_bhabha_bkg"].as_f64().unwrap())
            / (r["bhabha_efficiency"].as_f64().unwrap() * r["sigma_vis_nb"].as_f64().unwrap());
        assert!((l / want - 1.0).abs() < 1e-12, "{r}");
        // Statistics √N/(ε σ_vis).
        let stat = r["luminosity_stat_nb_inv"].as_f64().unwrap();
        let want = r["n_bhabha"].as_f64().unwrap().sqrt()
            / (r["bhabha_efficiency"].as_f64().unwrap() * r["sigma_vis_nb"].as_f64().unwrap());
        assert!((stat / want - 1.0).abs() < 1e-12);
        assert!(r["luminosity_syst_nb_inv"].as_f64().unwrap() > 0.0);
        assert!(r["budget"]["rc_scale_nb_inv"].is_number());
        total += l;
    }
    // Runs at one energy share σ_vis (computed once per distinct energy).
    assert_eq!(rows[0]["sigma_vis_nb"], rows[1]["sigma_vis_nb"]);
    let s = &v["summary"];
    assert!((s["luminosity_nb_inv"].as_f64().unwrap() / total - 1.0).abs() < 1e-12);
    assert_eq!(s["runs"].as_i64(), Some(3));
    assert_eq!(s["energies"].as_i64(), Some(2));
    // Correlated systematics add linearly over runs: the summed correlated part exceeds the
    // quadrature sum of the per-run ones.
    let cor = s["luminosity_correlated_unc_nb_inv"].as_f64().unwrap();
    let quad: f64 = rows
        .iter()
        .map(|r| {
            r["luminosity_correlated_unc_nb_inv"]
                .as_f64()
                .unwrap()
                .powi(2)
        })
        .sum::<f64>()
        .sqrt();
    assert!(cor > quad);
    // pb⁻¹ on request: keys renamed and values ÷1000.
    let p = radnorm_json(&["lumi", "--card", card, "--data", data, "--units", "pb"]);
    let lp = p["rows"][0]["luminosity_pb_inv"].as_f64().unwrap();
    assert!((lp * 1e3 / rows[0]["luminosity_nb_inv"].as_f64().unwrap() - 1.0).abs() < 1e-12);
}

#[test]
fn sigma_vis_point_with_flags_only() {
    let v = radnorm_json(&[
        "lumi",
        "--process",
        "gg",
        "--sqrt-s",
        "10",
        "--theta-min-deg",
        "40",
        "--theta-max-deg",
        "140",
        "--born-only",
    ]);
    // Born only: σ_vis equals its Born value, (2πα²/s)[ln((1+c)/(1−c)) − c] (physics notes §1).
    let c = 40f64.to_radians().cos();
    let alpha = 1.0 / 137.035_999_177;
    let want = 2.0 * std::f64::consts::PI * alpha * alpha / 100.0
        * (((1.0 + c) / (1.0 - c)).ln() - c)
        * 0.389_379_372_1e6;
    assert!((v["sigma_vis_nb"].as_f64().unwrap() / want - 1.0).abs() < 1e-12);
    assert_eq!(v["sigma_vis_nb"], v["sigma_vis_born_nb"]);
}

#[test]
fn bad_input_names_file_line_field_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (card, out) = (dir.path().join("lumi.toml"), dir.path().join("out.json"));
    fs::write(&card, CARD).unwrap();
    let cases = [
        (
            "r1,10.58,100,1,0.9\nr1,10.58,100,1,0.9\n",
            "line 3, field run",
        ),
        ("r1,10.58,100,101,0.9\n", "field n_bhabha_bkg"),
        ("r1,10.58,100,1,1.5\n", "field bhabha_efficiency"),
        // Below 1e-6 (1e-160 had overflowed the luminosity's systematic term).
        (
            "r1,10.58,100,1,1e-160\n",
            "field bhabha_efficiency: 1e-160 is not allowed",
        ),
        ("r1,10.58,-100,1,0.9\n", "field n_bhabha"),
    ];
    for (body, needle) in cases {
        let data = dir.path().join("counts.csv");
        fs::write(
            &data,
            format!("run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\n{body}"),
        )
        .unwrap();
        let o = radnorm()
            .args([
                "lumi",
                "--card",
                card.to_str().unwrap(),
                "--data",
                data.to_str().unwrap(),
                "--out",
                out.to_str().unwrap(),
            ])
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(
            !o.status.success() && err.contains(needle) && err.contains("counts.csv"),
            "{body}: {err}"
        );
        assert!(!out.exists(), "partial output after: {body}");
    }
    // √s on the command line that differs from a run's.
    let data = dir.path().join("counts.csv");
    fs::write(&data, COUNTS).unwrap();
    let o = radnorm()
        .args([
            "lumi",
            "--card",
            card.to_str().unwrap(),
            "--data",
            data.to_str().unwrap(),
            "--sqrt-s",
            "10.58",
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        !o.status.success() && err.contains("line 5, field sqrt_s_gev"),
        "{err}"
    );
    // Reversed θ window from a flag: the key and the flag are named.
    let o = radnorm()
        .args([
            "lumi",
            "--card",
            card.to_str().unwrap(),
            "--sqrt-s",
            "10",
            "--theta-min-deg",
            "150",
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        !o.status.success() && err.contains("theta_max_deg") && err.contains("--theta-max-deg"),
        "{err}"
    );
}

/// Run `radnorm lumi` and return (exit code, stderr, stdout).
fn lumi(args: &[&str]) -> (Option<i32>, String, String) {
    let o = radnorm().arg("lumi").args(args).output().unwrap();
    (
        o.status.code(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
        String::from_utf8_lossy(&o.stdout).into_owned(),
    )
}

/// `radnorm lumi --card <card_text written to a temporary file> args…`.
fn lumi_with_card(card_text: &str, args: &[&str]) -> (Option<i32>, String, String) {
    let dir = tempfile::tempdir().unwrap();
    let card = dir.path().join("lumi.toml");
    fs::write(&card, card_text).unwrap();
    lumi(&[&["--card", card.to_str().unwrap()], args].concat())
}

/// The acceptance of the examples, with the `(flag, value)` pairs of `with` replacing or
/// adding to it.
fn flags<'a>(process: &'a str, sqrt_s: &'a str, with: &[&'a str]) -> Vec<&'a str> {
    let mut pairs = vec![
        ["--process", process],
        ["--sqrt-s", sqrt_s],
        ["--theta-min-deg", "40"],
        ["--theta-max-deg", "140"],
        ["--e-min-frac", "0.5"],
        ["--vp", "none"],
    ];
    for w in with.chunks(2) {
        match pairs.iter_mut().find(|p| p[0] == w[0]) {
            Some(p) => p[1] = w[1],
            None => pairs.push([w[0], w[1]]),
        }
    }
    pairs.concat()
}

#[test]
fn below_the_muon_pair_threshold_is_a_clear_error() {
    // 2 m_μ = 0.211316751 GeV (CODATA 2022 m_μ = 0.1056583755 GeV): σ_vis = 0 below it,
    // so no luminosity can be normalised to it.
    for born_only in [false, true] {
        let mut args = flags("mumu", "0.2", &[]);
        if born_only {
            args.push("--born-only");
        }
        let (code, err, _) = lumi(&args);
        assert_eq!(code, Some(2), "{err}");
        assert!(
            err.contains("--sqrt-s 0.2")
                && err.contains("threshold 0.2113")
                && err.contains("allowed")
                && !err.contains("NaN"),
            "{err}"
        );
    }
    // From a counts file: the file, line and field are named.
    let dir = tempfile::tempdir().unwrap();
    let (card, data) = (dir.path().join("mumu.toml"), dir.path().join("counts.csv"));
    fs::write(&card, CARD.replace("\"ee\"", "\"mumu\"")).unwrap();
    fs::write(
        &data,
        "run,sqrt_s_gev,n_bhabha,n_bhabha_bkg,bhabha_efficiency\nr1,3.0,100,1,0.9\nr2,0.2,100,1,0.9\n",
    )
    .unwrap();
    let (code, err, _) = lumi(&[
        "--card",
        card.to_str().unwrap(),
        "--data",
        data.to_str().unwrap(),
    ]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("counts.csv, line 3, field sqrt_s_gev") && err.contains("threshold"),
        "{err}"
    );
}

#[test]
fn negative_values_are_named_with_their_range() {
    // Without allow_negative_numbers clap stops at "unexpected argument '-10' found".
    let cases: &[(Vec<&str>, &str, &str)] = &[
        (flags("ee", "-10", &[]), "--sqrt-s", "-10"),
        (flags("ee", "-10:10:3", &[]), "--sqrt-s", "-10:10:3"),
        (
            flags("ee", "10", &["--theta-min-deg", "-5"]),
            "--theta-min-deg",
            "-5",
        ),
        (
            flags("ee", "10", &["--theta-max-deg", "-140"]),
            "--theta-max-deg",
            "-140",
        ),
        (
            flags("ee", "10", &["--acol-max-deg", "-1"]),
            "--acol-max-deg",
            "-1",
        ),
        (
            flags("ee", "10", &["--e-min-frac", "-0.5"]),
            "--e-min-frac",
            "-0.5",
        ),
        (
            flags("ee", "10", &["--precision", "-1"]),
            "--precision",
            "-1",
        ),
    ];
    for (args, flag, value) in cases {
        let (code, err, _) = lumi(args);
        assert_eq!(code, Some(2), "{args:?}: {err}");
        assert!(
            err.contains(flag)
                && err.contains(value)
                && err.contains("allowed")
                && !err.contains("unexpected"),
            "{args:?}: {err}"
        );
    }
}

#[test]
fn card_errors_name_only_flags_that_exist() {
    // An uncertainty is a card key without a flag.
    let (code, err, _) = lumi_with_card(
        &CARD.replace("theta_edge_deg = 0.01", "theta_edge_deg = -0.01"),
        &["--sqrt-s", "10"],
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("uncertainty.theta_edge_deg")
            && err.contains("allowed")
            && !err.contains("--theta-edge-deg"),
        "{err}"
    );
    // The card's energy is set on the command line by --sqrt-s (there is no --sqrt-s-gev).
    let (code, err, _) = lumi_with_card(&format!("sqrt_s_gev = -10.0\n{CARD}"), &[]);
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("sqrt_s_gev") && err.contains("--sqrt-s)") && !err.contains("--sqrt-s-gev"),
        "{err}"
    );
}

#[test]
fn a_grid_of_one_point_is_an_array() {
    let one = |sqrt_s: &str| -> Value {
        let (code, err, out) = lumi(&[
            "--process",
            "gg",
            "--sqrt-s",
            sqrt_s,
            "--theta-min-deg",
            "40",
            "--theta-max-deg",
            "140",
            "--born-only",
            "--format",
            "json",
        ]);
        assert_eq!(code, Some(0), "{err}");
        serde_json::from_str(&out).unwrap()
    };
    assert_eq!(one("10:10:1").as_array().expect("an array").len(), 1);
    assert!(one("10").is_object());
}

#[test]
fn zero_shifts_are_written_as_zero_not_negative_zero() {
    // No alignment or energy uncertainty: δL = −L·δσ/σ with δσ = 0 is −0.0 in f64; the
    // output writes 0 (a sign there would read as a direction).
    let dir = tempfile::tempdir().unwrap();
    let (card, data) = (dir.path().join("lumi.toml"), dir.path().join("counts.csv"));
    let no_unc = CARD
        .lines()
        .take_while(|l| !l.starts_with("[uncertainty]"))
        .collect::<Vec<_>>()
        .join("\n");
    fs::write(&card, no_unc).unwrap();
    fs::write(&data, COUNTS).unwrap();
    for format in ["json", "csv"] {
        let (code, err, out) = lumi(&[
            "--card",
            card.to_str().unwrap(),
            "--data",
            data.to_str().unwrap(),
            "--format",
            format,
        ]);
        assert_eq!(code, Some(0), "{err}");
        assert!(out.contains("acceptance_width_nb_inv"), "{out}");
        // A negative zero token, not any small negative number (−0.0066 is a real shift).
        let negative_zero = out
            .split(|c: char| !(c.is_ascii_alphanumeric() || matches!(c, '-' | '+' | '.')))
            .filter_map(|t| t.parse::<f64>().ok())
            .any(|v| v == 0.0 && v.is_sign_negative());
        assert!(!negative_zero, "{format}: {out}");
    }
}

#[test]
fn energies_outside_the_model_are_named_by_their_flag() {
    // Above 100 TeV (the VP tables' end): a range error, not a panic (1e80 GeV had panicked
    // in a spline of the t-channel VP).
    let (code, err, _) = lumi(&flags("ee", "1e80", &["--vp", "full"]));
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("--sqrt-s 1e80") && err.contains("≤ 1e5 GeV"),
        "{err}"
    );
    // Too low for the structure functions (Q² ≤ e·m_e², e·m_e² = 7.098e-7 GeV² with CODATA
    // 2022 m_e): said of the energy, not of an internal scale.
    let (code, err, _) = lumi(&flags("gg", "0.0011", &[]));
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.starts_with("radnorm: error: --sqrt-s 0.0011: sqrt_s_gev = 0.0011 is too low")
            && err.contains("7.098e-7"),
        "{err}"
    );
}

#[test]
fn a_beam_energy_uncertainty_beyond_one_percent_is_refused() {
    // uncertainty.sqrt_s_gev = 5.3 GeV at 5.2 GeV had moved σ_vis to zero energy and given a
    // beam-energy term of −47311 nb against σ_vis = 34.8 nb.
    let (code, err, _) = lumi_with_card(
        &CARD.replace("sqrt_s_gev = 0.005", "sqrt_s_gev = 5.3"),
        &["--sqrt-s", "5.2"],
    );
    assert_eq!(code, Some(2), "{err}");
    assert!(
        err.contains("uncertainty.sqrt_s_gev = 5.3") && err.contains("0.052 GeV"),
        "{err}"
    );
}
