//! `radnorm born` end to end: output shapes, units, and errors on bad input.

mod common;
use common::{radnorm, radnorm_json};
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    radnorm_json(args)
}

#[test]
fn one_point_is_an_object_and_a_grid_an_array() {
    let v = json(&["born", "--process", "mumu", "--sqrt-s", "10"]);
    assert_eq!(v["process"], "mumu");
    // 86.85 nb/s (σ_pt, Peskin & Schroeder ch. 5) at s = 100 GeV²; mass effects < 1e-7.
    assert!((v["sigma_nb"].as_f64().unwrap() - 0.8685).abs() < 1e-3);
    let v = json(&["born", "--process", "tautau", "--sqrt-s", "2:12:11", "--z"]);
    let rows = v.as_array().unwrap();
    assert_eq!(rows.len(), 11);
    // Below the τ threshold (√s = 2, 3 GeV) σ = 0 and A_FB = 0: a result, not an error.
    assert_eq!(rows[0]["sigma_nb"].as_f64(), Some(0.0));
    assert_eq!(rows[1]["afb"].as_f64(), Some(0.0));
    assert!(rows[10]["afb"].as_f64().unwrap() < 0.0);
}

#[test]
fn differential_units_and_csv() {
    let v = json(&[
        "born",
        "--process",
        "gg",
        "--sqrt-s",
        "3",
        "--theta-min-deg",
        "30",
        "--theta-max-deg",
        "150",
        "--cos-theta",
        "-0.5",
        "--units",
        "pb",
    ]);
    assert!(v["dsigma_dcos_pb"].as_f64().unwrap() > 0.0);
    assert!(v.get("sigma_nb").is_none() && v["sigma_pb"].as_f64().unwrap() > 1000.0);
    let out = radnorm()
        .args([
            "born",
            "--process",
            "ee",
            "--sqrt-s",
            "1:2:3",
            "--theta-min-deg",
            "40",
            "--theta-max-deg",
            "140",
            "--format",
            "csv",
        ])
        .output()
        .unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let data: Vec<&str> = text.lines().filter(|l| !l.starts_with('#')).collect();
    assert_eq!(data[0], "process,sqrt_s_gev,sigma_nb");
    assert_eq!(data.len(), 4);
}

#[test]
fn writes_atomically_to_out() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("born.csv");
    radnorm()
        .args([
            "born",
            "--process",
            "mumu",
            "--sqrt-s",
            "2:12:1000",
            "--format",
            "csv",
            "--out",
        ])
        .arg(&path)
        .assert()
        .success();
    let text = std::fs::read_to_string(&path).unwrap();
    assert_eq!(text.lines().filter(|l| !l.starts_with('#')).count(), 1001);
    assert_eq!(
        std::fs::read_dir(dir.path()).unwrap().count(),
        1,
        "no temporary files left"
    );
}

/// Each bad input exits with code 2 and a message naming the option and the allowed range.
#[test]
fn bad_input_is_a_clear_error() {
    let cases: &[(&[&str], &str)] = &[
        (&["--process", "mumu", "--sqrt-s", "-3"], "--sqrt-s"),
        (&["--process", "mumu", "--sqrt-s", "0"], "--sqrt-s"),
        (&["--process", "mumu", "--sqrt-s", "2:12:0"], "count"),
        (
            &[
                "--process",
                "ee",
                "--sqrt-s",
                "3",
                "--theta-min-deg",
                "50",
                "--theta-max-deg",
                "40",
            ],
            "--theta-max-deg",
        ),
        (
            &[
                "--process",
                "ee",
                "--sqrt-s",
                "3",
                "--theta-min-deg",
                "0",
                "--theta-max-deg",
                "40",
            ],
            "--theta-min-deg",
        ),
        (
            &[
                "--process",
                "ee",
                "--sqrt-s",
                "3",
                "--theta-min-deg",
                "10",
                "--theta-max-deg",
                "190",
            ],
            "--theta-max-deg",
        ),
        (&["--process", "ee", "--sqrt-s", "3"], "--theta-min-deg"),
        (
            &["--process", "mumu", "--sqrt-s", "3", "--cos-theta", "1.5"],
            "--cos-theta",
        ),
        (&["--process", "quark", "--sqrt-s", "3"], "--process"),
        (&["--process", "mumu", "--sqrt-s", "abc"], "--sqrt-s"),
    ];
    for (args, flag) in cases {
        let out = radnorm().arg("born").args(*args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(
            err.contains(flag),
            "{args:?}: message does not name {flag}: {err}"
        );
        assert!(!err.contains("panicked"), "{args:?}: {err}");
    }
}

#[test]
fn hadrons_are_zero_below_the_two_pion_threshold() {
    // 2m_π± = 0.27914 GeV (PDG 2026 m_π± = 139.57039 MeV): R = 0 below, so σ = 0 exactly.
    let v = json(&["born", "--process", "hadrons", "--sqrt-s", "0.1:0.2:2"]);
    for row in v.as_array().unwrap() {
        assert_eq!(row["sigma_nb"].as_f64(), Some(0.0), "{row}");
    }
    let v = json(&["born", "--process", "hadrons", "--sqrt-s", "0.2791"]);
    assert_eq!(v["sigma_nb"].as_f64(), Some(0.0));
    let v = json(&["born", "--process", "hadrons", "--sqrt-s", "0.3"]);
    assert!(v["sigma_nb"].as_f64().unwrap() > 0.0);
}

/// Run `radnorm born` on bad input: exit code 2, a message that names `flag`, says what is
/// allowed, and is ours (not clap's "unexpected argument").
fn born_fails(args: &[&str], flag: &str) -> String {
    let out = radnorm().arg("born").args(args).output().unwrap();
    let err = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
    assert!(
        err.contains(flag) && err.contains("allowed") && !err.contains("unexpected argument"),
        "{args:?}: message does not name {flag} and its range: {err}"
    );
    err
}

#[test]
fn negative_values_reach_our_validation() {
    born_fails(&["--process", "mumu", "--sqrt-s", "-3"], "--sqrt-s -3");
    born_fails(
        &["--process", "mumu", "--sqrt-s", "-3:5:2"],
        "--sqrt-s -3:5:2",
    );
    let window = |lo: &'static str, hi: &'static str| {
        [
            "--process",
            "ee",
            "--sqrt-s",
            "3",
            "--theta-min-deg",
            lo,
            "--theta-max-deg",
            hi,
        ]
    };
    born_fails(&window("-5", "140"), "--theta-min-deg -5");
    born_fails(&window("40", "-140"), "--theta-max-deg -140");
    // Closer to the beam than 0.1°: σ_Bhabha ∝ 1/θ² had come out infinite.
    born_fails(&window("1e-9", "140"), "allowed: 0.1 ≤ theta_min_deg");
    born_fails(
        &["--process", "hadrons", "--sqrt-s", "3", "--r-const", "-1"],
        "--r-const -1",
    );
    // Above any hadronic R (1e308 had overflowed σ into an internal error).
    born_fails(
        &[
            "--process",
            "hadrons",
            "--sqrt-s",
            "3",
            "--r-const",
            "1e308",
        ],
        "--r-const 1e308: not allowed; allowed: 0 < r_const ≤ 1e6",
    );
    // Flags that do not apply to the process are refused, not silently ignored.
    born_fails(
        &["--process", "mumu", "--sqrt-s", "3", "--r-const", "5"],
        "--r-const: not for --process mumu",
    );
    born_fails(
        &["--process", "hadrons", "--sqrt-s", "3", "--coulomb"],
        "--coulomb: not for --process hadrons",
    );
    born_fails(
        &[
            "--process",
            "hadrons",
            "--sqrt-s",
            "3",
            "--theta-min-deg",
            "30",
        ],
        "--theta-min-deg/--theta-max-deg: not for --process hadrons",
    );
}

#[test]
fn energies_outside_the_representable_range_are_a_range_error() {
    // σ_pt ∝ 1/s overflows at √s = 1e-160 GeV; s = √s² overflows at √s = 1e155 GeV.
    for (process, e) in [
        ("hadrons", "1e-160"),
        ("hadrons", "1e155"),
        ("mumu", "1e160"),
    ] {
        born_fails(&["--process", process, "--sqrt-s", e], "--sqrt-s");
    }
    born_fails(
        &[
            "--process",
            "ee",
            "--sqrt-s",
            "1e-160",
            "--theta-min-deg",
            "40",
            "--theta-max-deg",
            "140",
        ],
        "1e-100",
    );
}

#[test]
fn cos_theta_at_a_pole_is_a_range_error_and_outside_the_window_a_note() {
    let args = |p: &'static str, c: &'static str| {
        [
            "--process",
            p,
            "--sqrt-s",
            "3",
            "--theta-min-deg",
            "40",
            "--theta-max-deg",
            "140",
            "--cos-theta",
            c,
        ]
    };
    // Bhabha: the t-channel photon pole at cosθ = 1; γγ: the poles at cosθ = ±1.
    let err = born_fails(&args("ee", "1"), "--cos-theta 1");
    assert!(err.contains("cos-theta < 1"), "{err}");
    let err = born_fails(&args("gg", "1"), "--cos-theta 1");
    assert!(err.contains("-1 < cos-theta < 1"), "{err}");
    born_fails(&args("gg", "-1"), "--cos-theta -1");
    // Backward Bhabha is finite; outside the 40–140° window the differential is reported
    // and the output says that σ does not count that angle.
    let out = radnorm()
        .arg("born")
        .args(args("ee", "-1"))
        .args(["--format", "csv"])
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(
        text.lines()
            .any(|l| l.starts_with("# cos_theta = -1 is outside the window")),
        "{text}"
    );
    let row = text.lines().last().unwrap();
    let dsigma: f64 = row.rsplit(',').next().unwrap().parse().unwrap();
    assert!(dsigma.is_finite() && dsigma > 0.0, "{row}");
    // Fermion pairs have no pole: cosθ = 1 is allowed.
    let v = json(&[
        "born",
        "--process",
        "mumu",
        "--sqrt-s",
        "3",
        "--cos-theta",
        "1",
    ]);
    assert!(v["dsigma_dcos_nb"].as_f64().unwrap() > 0.0);
}

#[test]
fn a_grid_of_one_point_is_an_array() {
    // The output contract: a value gives one object, a grid an array, whatever its length.
    let v = json(&["born", "--process", "mumu", "--sqrt-s", "3:3:1"]);
    let rows = v.as_array().expect("a grid gives an array");
    assert_eq!(rows.len(), 1);
    assert_eq!(rows[0]["sqrt_s_gev"].as_f64(), Some(3.0));
    assert!(json(&["born", "--process", "mumu", "--sqrt-s", "3"]).is_object());
}
