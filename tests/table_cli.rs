//! `radnorm table` end to end: values against an independent mpmath convolution, shards
//! that merge byte-identically, a HEPData folder the format's own validator accepts, and
//! bad input.

mod common;

use assert_cmd::Command;
use common::{assert_abs, assert_rel, parse_key_values, python_reference};
use std::path::Path;

/// μμ without VP at the energies and cut of the reference script `isr_convolution.py`
/// (its cases kf2_3_half, kf2_10_half and exp1_10_half), plus a beam-energy variation.
const CARD: &str = r#"# invented card for tests
[grid]
sqrt_s_gev = [3.0, 10.0]
processes = ["mumu", "tautau"]

[vp]
model = "none"

[[cut]]
name = "open"
[[cut]]
name = "x50"
x_max = 0.5

[[variation]]
name = "radiator_exp1"
radiator = "exp1"
[[variation]]
name = "beam_energy"
sqrt_s_shift_mev = 2.0
"#;

fn radnorm(dir: &Path, args: &[&str]) -> assert_cmd::assert::Assert {
    Command::cargo_bin("radnorm")
        .unwrap()
        .env_remove("RUST_BACKTRACE")
        .current_dir(dir)
        .arg("table")
        .args(args)
        .assert()
}

fn json_rows(path: &Path) -> Vec<serde_json::Value> {
    let doc: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    doc["rows"].as_array().unwrap().clone()
}

#[test]
fn values_match_an_independent_convolution() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("c.toml"), CARD).unwrap();
    radnorm(
        dir.path(),
        &["--card", "c.toml", "--format", "json", "--out", "t.json"],
    )
    .success();
    let rows = json_rows(&dir.path().join("t.json"));
    // 2 processes × 2 cut sets × 2 energies, process-major, then cut, then energy.
    assert_eq!(rows.len(), 8);
    let row = |process: &str, cut: &str, e: f64| {
        rows.iter()
            .find(|r| r["process"] == process && r["cut"] == cut && r["sqrt_s_gev"] == e)
            .unwrap_or_else(|| panic!("no row {process} {cut} {e}"))
    };
    let f = |r: &serde_json::Value, k: &str| r[k].as_f64().unwrap();

    // Without VP the dressed and bare cross-sections coincide: vp factor 1, no VP shift.
    for r in &rows {
        assert_eq!(f(r, "vp_factor"), 1.0, "{r}");
        assert_eq!(f(&r["shifts"]["radiator_exp1"], "vp_factor"), 0.0);
    }
    // Below 2m_τ ≈ 3.5537 GeV (PDG m_τ) nothing is produced: σ = 0 and 1 + δ = 0 by
    // convention, not NaN.
    assert_eq!(f(row("tautau", "open", 3.0), "sigma_obs_nb"), 0.0);
    assert_eq!(f(row("tautau", "open", 3.0), "one_plus_delta"), 0.0);

    let Some(out) = python_reference("isr_convolution.py", &[]) else {
        return;
    };
    let want = parse_key_values(&out);
    // The ISR layer's accuracy target is 1e-8 relative; the issue asks ≤ 1e-7 against
    // the independent 30-digit evaluation.
    let tol = 1e-7;
    let r3 = row("mumu", "x50", 3.0);
    assert_rel(
        "σ_obs mumu 3 GeV x≤0.5",
        f(r3, "sigma_obs_nb"),
        want["kf2_3_half"],
        tol,
    );
    let r10 = row("mumu", "x50", 10.0);
    assert_rel(
        "σ_obs mumu 10 GeV x≤0.5",
        f(r10, "sigma_obs_nb"),
        want["kf2_10_half"],
        tol,
    );
    // The radiator variation's shift is (1+δ)_exp1 − (1+δ)_kf2, so
    // σ_dressed·(1 + δ + shift) is the exp1 convolution.
    let exp1 = f(r10, "sigma_dressed_nb")
        * (f(r10, "one_plus_delta") + f(&r10["shifts"]["radiator_exp1"], "one_plus_delta"));
    assert_rel("σ_obs exp1 10 GeV x≤0.5", exp1, want["exp1_10_half"], tol);
    // The open cut reaches the kinematic limit 1 − 4m_μ²/s (m_μ CODATA 2022).
    let m_mu = 0.1056583755_f64;
    assert_abs(
        "x_max open 10 GeV",
        f(row("mumu", "open", 10.0), "x_max"),
        1.0 - 4.0 * m_mu * m_mu / 100.0,
        1e-15,
    );
    // The quadrature sum of the shifts (definition of *_syst).
    let s = &r10["shifts"];
    let q = (f(&s["radiator_exp1"], "one_plus_delta").powi(2)
        + f(&s["beam_energy"], "one_plus_delta").powi(2))
    .sqrt();
    assert_rel(
        "one_plus_delta_syst",
        f(r10, "one_plus_delta_syst"),
        q,
        1e-15,
    );
}

#[test]
fn shards_merge_to_the_single_run_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("c.toml"), CARD).unwrap();
    for format in ["csv", "json"] {
        let full = format!("full.{format}");
        radnorm(d, &["--card", "c.toml", "--format", format, "--out", &full]).success();
        let mut parts = Vec::new();
        for k in 1..=3 {
            let part = format!("part{k}.{format}");
            radnorm(
                d,
                &[
                    "--card",
                    "c.toml",
                    "--format",
                    format,
                    "--shard",
                    &format!("{k}/3"),
                    "--out",
                    &part,
                ],
            )
            .success();
            parts.push(part);
        }
        // Shards given out of order still join in row order.
        let merged = format!("merged.{format}");
        radnorm(
            d,
            &["--merge", &parts[2], &parts[0], &parts[1], "--out", &merged],
        )
        .success();
        assert_eq!(
            std::fs::read(d.join(&full)).unwrap(),
            std::fs::read(d.join(&merged)).unwrap(),
            "{format}: merged shards differ from the single run"
        );
        // A missing shard is refused, and nothing is written.
        radnorm(d, &["--merge", &parts[0], &parts[2], "--out", "gap.out"])
            .failure()
            .code(2)
            .stderr(predicates::str::contains("each of 1..=3 exactly once"));
        assert!(!d.join("gap.out").exists());
    }
    // A shard whose card text was edited no longer matches its recorded hash.
    let text = std::fs::read_to_string(d.join("part2.csv")).unwrap();
    std::fs::write(d.join("part2.csv"), text.replace("2.0", "3.0")).unwrap();
    radnorm(
        d,
        &[
            "--merge",
            "part1.csv",
            "part2.csv",
            "part3.csv",
            "--out",
            "x.csv",
        ],
    )
    .failure()
    .code(2)
    .stderr(predicates::str::contains("sha256"));
}

#[test]
fn hepdata_folder_is_valid() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("c.toml"), CARD).unwrap();
    radnorm(
        d,
        &["--card", "c.toml", "--format", "hepdata", "--out", "hep"],
    )
    .success();
    for f in [
        "submission.yaml",
        "corrections_mumu_open.yaml",
        "corrections_tautau_x50.yaml",
    ] {
        assert!(d.join("hep").join(f).is_file(), "{f} missing");
    }
    // Count what the folder must hold from the same table in JSON: per point the energy
    // and five dependent values, plus every non-zero shift (the format refuses zero errors).
    radnorm(
        d,
        &["--card", "c.toml", "--format", "json", "--out", "t.json"],
    )
    .success();
    let rows = json_rows(&d.join("t.json"));
    let nonzero: usize = rows
        .iter()
        .flat_map(|r| r["shifts"].as_object().unwrap().values())
        .flat_map(|s| [&s["one_plus_delta"], &s["vp_factor"]])
        .filter(|v| v.as_f64().unwrap() != 0.0)
        .count();
    assert!(nonzero > 0);
    if let Some(res) = python_reference("hepdata_check.py", &[d.join("hep").to_str().unwrap()]) {
        let kv = parse_key_values(&res);
        assert_eq!(kv["valid"], 1.0);
        assert_eq!(kv["numeric_values"], (rows.len() * 6) as f64);
        assert_eq!(kv["numeric_errors"], nonzero as f64);
    }
}

#[test]
fn bad_input_fails_with_the_key_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::write(d.join("c.toml"), CARD).unwrap();
    std::fs::write(
        d.join("bad.toml"),
        "[grid]\nsqrt_s_gev = 3.0\n[[cut]]\nname = \"a\"\nx_max = 1.5\n",
    )
    .unwrap();
    let cases: [(&[&str], &str); 6] = [
        (
            &["--card", "bad.toml", "--format", "csv", "--out", "o.csv"],
            "cut[0].x_max",
        ),
        (&["--card", "missing.toml"], "--card missing.toml"),
        (
            &["--card", "c.toml", "--format", "csv", "--shard", "4/3"],
            "--shard 4/3",
        ),
        (
            &["--card", "c.toml", "--shard", "1/2"],
            "needs --format csv or json",
        ),
        (
            &["--card", "c.toml", "--format", "hepdata"],
            "needs --out DIR",
        ),
        (
            &["--card", "c.toml", "--format", "csv", "--out", "c.toml"],
            "c.toml",
        ),
    ];
    for (args, want) in cases {
        radnorm(d, args)
            .failure()
            .code(2)
            .stderr(predicates::str::contains(want));
    }
    assert!(!d.join("o.csv").exists());
    assert_eq!(std::fs::read_to_string(d.join("c.toml")).unwrap(), CARD);
}
