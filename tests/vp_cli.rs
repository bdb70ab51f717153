//! `radnorm alpha` end to end: output keys and shapes, agreement with the library, user R
//! tables, and clear errors for bad input.

mod common;
use common::*;

use radnorm::vp::leptonic::pi_leptonic;
use radnorm::vp::standard_hadronic;
use serde_json::Value;
use std::path::Path;

fn json(args: &[&str]) -> Value {
    radnorm_json(args)
}

fn failure(args: &[&str]) -> String {
    let out = radnorm().args(args).output().unwrap();
    assert!(!out.status.success(), "expected failure for {args:?}");
    String::from_utf8_lossy(&out.stderr).into_owned()
}

#[test]
fn a_grid_of_one_point_is_an_array() {
    // The output contract: a value gives one object, any grid an array.
    for flag in ["--q2", "--sqrt-s"] {
        let v = json(&["alpha", flag, "3:3:1"]);
        assert_eq!(v.as_array().map(Vec::len), Some(1), "{flag} 3:3:1: {v}");
        assert!(json(&["alpha", flag, "3"]).is_object(), "{flag} 3");
    }
}

#[test]
fn spacelike_grid_has_the_contract_keys() {
    let v = json(&["alpha", "--q2", "-100:-1:3"]);
    let rows = v.as_array().expect("a grid is an array");
    assert_eq!(rows.len(), 3);
    for row in rows {
        for key in [
            "q2_gev2",
            "delta_alpha_lep",
            "delta_alpha_had",
            "delta_alpha_had_unc",
            "im_pi",
            "alpha_inv",
        ] {
            assert!(row[key].is_number(), "missing {key}: {row}");
        }
        assert_eq!(row["im_pi"].as_f64(), Some(0.0));
        let q2 = row["q2_gev2"].as_f64().unwrap();
        // The command reports the library's numbers (closed forms tested elsewhere).
        assert_rel(
            "lep",
            row["delta_alpha_lep"].as_f64().unwrap(),
            pi_leptonic(q2).re,
            EXACT,
        );
        assert_rel(
            "had",
            row["delta_alpha_had"].as_f64().unwrap(),
            standard_hadronic().delta_alpha(q2),
            EXACT,
        );
        // alpha_inv = α⁻¹(1 − Δα_lep − Δα_had) (the definition).
        let want = radnorm::constants::ALPHA_INV
            * (1.0
                - row["delta_alpha_lep"].as_f64().unwrap()
                - row["delta_alpha_had"].as_f64().unwrap());
        assert_rel("alpha_inv", row["alpha_inv"].as_f64().unwrap(), want, EXACT);
    }
}

#[test]
fn mz_with_breakdown() {
    let v = json(&["alpha", "--sqrt-s", "91.1876", "--breakdown"]);
    assert!(v.is_object(), "one point is one object");
    let b = &v["breakdown"];
    let sum: f64 = ["pipi", "omega_phi", "inclusive_1_2_gev", "pqcd", "narrow"]
        .iter()
        .map(|k| b[k]["delta_alpha_had"].as_f64().expect(k))
        .sum();
    // The breakdown is the rule's, the total the table's: equal to the table tolerance.
    assert_rel(
        "breakdown sum",
        sum,
        v["delta_alpha_had"].as_f64().unwrap(),
        1e-7,
    );
    // 1/α(M_Z²) without the top ≈ 128.9 (PDG electroweak review: 128.95 for the on-shell
    // α(M_Z) with Δα_had = 0.02761; from memory): ours within the hadronic uncertainty.
    let inv = v["alpha_inv"].as_f64().unwrap();
    assert!((inv - 128.95).abs() < 0.1, "1/alpha(M_Z) = {inv}");
    // Im Π ≈ −(α/3)(R_had + 3 R_ℓ) at M_Z (physics.md §2): ≈ −α(R + 3)/3 with R ≈ 3.8.
    let im = v["im_pi"].as_f64().unwrap();
    assert!(
        (im + radnorm::constants::ALPHA * (3.8 + 3.0) / 3.0).abs() < 3e-4,
        "im {im}"
    );
}

#[test]
fn defined_exactly_at_resonance_masses_and_thresholds() {
    for e in [
        "3.096900355",
        "0.7826557238",
        "0.27914078196736",
        "3.729684884",
        "0.210",
    ] {
        let v = json(&["alpha", "--sqrt-s", e]);
        for key in ["delta_alpha_had", "im_pi", "alpha_inv"] {
            assert!(v[key].as_f64().is_some_and(f64::is_finite), "{e}: {key}");
        }
    }
}

fn write(dir: &Path, name: &str, text: &str) -> String {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p.display().to_string()
}

#[test]
fn user_table_replaces_the_model_over_its_range() {
    let dir = tempfile::tempdir().unwrap();
    // Invented example table (not data): R = 2.2 ± 0.05 (stat) ± 0.04 (syst) over 2–3 GeV.
    let mut text =
        String::from("# invented example, not a measurement\nsqrt_s_gev,r,r_stat,r_syst\n");
    for k in 0..=10 {
        text.push_str(&format!("{},{},0.05,0.04\n", 2.0 + 0.1 * k as f64, 2.2));
    }
    let path = write(dir.path(), "r.csv", &text);
    let base = json(&["alpha", "--q2", "-10"]);
    let with = json(&["alpha", "--q2", "-10", "--r-table", &path, "--breakdown"]);
    let (b, w) = (
        base["delta_alpha_had"].as_f64().unwrap(),
        with["delta_alpha_had"].as_f64().unwrap(),
    );
    // The model's R at 2–3 GeV is ≈ 2.17–2.20, the table's 2.2: the shift is ≲ 2% of the
    // region's share (~3e-4 at q² = −10 GeV²), so below 1e-5, but not zero.
    assert!((w - b).abs() < 1e-5 && w != b, "{b} vs {w}");
    assert!(
        with["breakdown"]["user_table"]["delta_alpha_had"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    assert!(
        with["breakdown"]["user_table_stat"]["delta_alpha_had_unc"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    // A table over the J/ψ that says it contains the narrow resonances drops the analytic
    // J/ψ: Δα_had(M_Z²) falls by about its 7e-4 (the table has no peak).
    let mut text = String::from("sqrt_s_gev,r,r_stat,r_syst\n");
    for k in 0..=10 {
        text.push_str(&format!("{},2.2,0.05,0.04\n", 3.0 + 0.02 * k as f64));
    }
    let path = write(dir.path(), "jpsi.csv", &text);
    let kept = json(&["alpha", "--sqrt-s", "91.1876", "--r-table", &path]);
    let dropped = json(&[
        "alpha",
        "--sqrt-s",
        "91.1876",
        "--r-table",
        &path,
        "--table-includes-narrow",
    ]);
    let drop =
        kept["delta_alpha_had"].as_f64().unwrap() - dropped["delta_alpha_had"].as_f64().unwrap();
    assert!((6.5e-4..7.5e-4).contains(&drop), "J/psi share {drop}");
}

#[test]
fn bad_tables_name_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let header = "sqrt_s_gev,r,r_stat,r_syst\n";
    let cases: [(&str, String, &str); 7] = [
        (
            "unsorted.csv",
            format!("{header}2.0,2,0.1,0.1\n1.9,2,0.1,0.1\n"),
            "line 3, column 1",
        ),
        (
            "duplicate.csv",
            format!("{header}2.0,2,0.1,0.1\n2.0,2,0.1,0.1\n"),
            "line 3, column 1",
        ),
        (
            "negative.csv",
            format!("{header}2.0,-2,0.1,0.1\n2.1,2,0.1,0.1\n"),
            "line 2, column 2",
        ),
        (
            "neg_unc.csv",
            format!("{header}2.0,2,0.1,0.1\n2.1,2,0.1,-0.1\n"),
            "line 3, column 4",
        ),
        ("missing.csv", format!("{header}2.0,2,0.1\n"), "line 2"),
        (
            "nan.csv",
            format!("{header}2.0,2,abc,0.1\n2.1,2,0.1,0.1\n"),
            "line 2, column 3",
        ),
        (
            "one.csv",
            format!("{header}2.0,2,0.1,0.1\n"),
            "at least 2 rows",
        ),
    ];
    for (name, text, want) in cases {
        let path = write(dir.path(), name, &text);
        let err = failure(&["alpha", "--q2", "-1", "--r-table", &path]);
        assert!(err.contains(name) && err.contains(want), "{name}: {err}");
    }
    let path = write(dir.path(), "header.csv", "e,r\n1,2\n");
    assert!(failure(&["alpha", "--q2", "-1", "--r-table", &path]).contains("line 1"));
}

#[test]
fn bad_points_are_errors() {
    assert!(failure(&["alpha", "--q2", "abc"]).contains("--q2"));
    assert!(failure(&["alpha", "--q2", "-1e11"]).contains("|q2|"));
    assert!(failure(&["alpha", "--sqrt-s", "-3"]).contains("--sqrt-s"));
    // A negative energy reaches our validation (not clap's "unexpected argument '-3'").
    for bad in ["-3", "-3:3:3"] {
        let err = failure(&["alpha", "--sqrt-s", bad]);
        assert!(
            err.contains(&format!("--sqrt-s {bad}")) && err.contains("allowed"),
            "{err}"
        );
    }
    assert!(failure(&["alpha"]).contains("--q2"));
    assert!(failure(&["alpha", "--q2", "-1", "--sqrt-s", "3"]).contains("cannot be used"));
}

#[test]
fn born_hadrons_uses_the_model_by_default() {
    let v = json(&["born", "--process", "hadrons", "--sqrt-s", "10"]);
    // σ = σ_pt·R with R(10 GeV) ≈ 3.53 (udsc, pQCD): 0.8685 nb × 3.53.
    let sigma = v["sigma_nb"].as_f64().unwrap();
    assert!(
        (sigma / (86.85 / 100.0 * 3.53) - 1.0).abs() < 0.01,
        "{sigma}"
    );
    let c = json(&[
        "born",
        "--process",
        "hadrons",
        "--sqrt-s",
        "10",
        "--r-const",
        "2",
    ]);
    assert_rel(
        "r-const",
        c["sigma_nb"].as_f64().unwrap(),
        radnorm::constants::sigma_point_nb(100.0) * 2.0,
        EXACT,
    );
}
