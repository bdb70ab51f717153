//! `radnorm demo` end to end: every output is written and parses, the unfolded dressed
//! cross-sections close on the invented truth the counts were drawn from, the shipped
//! data regenerate byte for byte, and a non-empty folder is refused.

mod common;

use assert_cmd::Command;
use common::{parse_key_values, python_reference, repo_root};
use radnorm::demo::{Truth, parse_scenario};
use radnorm::process::CrossSection;
use radnorm::scan::{Matrix, parse_scan_card};
use std::path::Path;

fn radnorm(args: &[&str]) -> assert_cmd::assert::Assert {
    Command::cargo_bin("radnorm")
        .unwrap()
        .env_remove("RUST_BACKTRACE")
        .args(args)
        .assert()
}

fn json(path: &Path) -> serde_json::Value {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

#[test]
fn demo_writes_every_output_and_closes_on_the_truth() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("demo");
    let ok = radnorm(&["demo", "--out", out.to_str().unwrap()]).success();
    let stdout = String::from_utf8_lossy(&ok.get_output().stdout).into_owned();
    assert!(stdout.contains("INVENTED"), "{stdout}");
    assert!(stdout.contains("closure"), "{stdout}");
    for f in [
        "inputs/scenario.toml",
        "inputs/scan.csv",
        "luminosity.json",
        "corrected/corrected.csv",
        "corrected/corrected.json",
        "corrected/budget.json",
        "corrected/hepdata/submission.yaml",
        "corrected/plots/line_shape.svg",
        "corrected/plots/corrections.svg",
        "corrected/plots/budget.svg",
        "corrections.csv",
        "corrections_hepdata/submission.yaml",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }

    // Luminosity: the scenario's true 15 × 2000 nb⁻¹ within 3 standard deviations of
    // the measured total (its statistical and systematic parts in quadrature).
    let lumi = json(&out.join("luminosity.json"));
    let s = &lumi["summary"];
    let total = s["luminosity_nb_inv"].as_f64().unwrap();
    let unc = s["luminosity_stat_nb_inv"]
        .as_f64()
        .unwrap()
        .hypot(s["luminosity_syst_nb_inv"].as_f64().unwrap());
    assert!(
        (total - 30_000.0).abs() < 3.0 * unc,
        "total luminosity {total} ± {unc} nb⁻¹ vs the invented 30000"
    );

    // Closure: d = σ_dressed − truth at every point with the dressed covariance. The truth
    // is the scenario's own line shape, evaluated here from the shipped files.
    let root = repo_root().join("tables/demo");
    let scenario = parse_scenario(
        &std::fs::read_to_string(root.join("scenario.toml")).unwrap(),
        "scenario.toml",
    )
    .unwrap();
    let plan = parse_scan_card(
        &std::fs::read_to_string(root.join("scan.toml")).unwrap(),
        &root.join("scan.toml").display().to_string(),
    )
    .unwrap();
    let truth = Truth::new(&scenario, plan.vp.clone());
    let rows = json(&out.join("corrected/corrected.json"))["rows"]
        .as_array()
        .unwrap()
        .clone();
    let budget = json(&out.join("corrected/budget.json"));
    let cov = &budget["budget"]["sigma_dressed"]["covariance_nb2"];
    let n = rows.len();
    assert_eq!(n, 15);
    let mut c = Matrix::zeros(n);
    let mut d = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        let e = r["sqrt_s_gev"].as_f64().unwrap();
        let diff = r["sigma_dressed_nb"].as_f64().unwrap() - truth.sigma_nb(e * e);
        for j in 0..n {
            c.set(i, j, cov[i][j].as_f64().unwrap());
        }
        // No single point further than 4σ (a 1-in-16000 event per point for a Gaussian).
        assert!(
            diff.abs() < 4.0 * c.get(i, i).sqrt(),
            "point {e} GeV: dressed − truth = {diff} nb, σ = {}",
            c.get(i, i).sqrt()
        );
        d.push(diff);
    }
    let chi2: f64 = d
        .iter()
        .zip(c.inverse().unwrap().apply(&d))
        .map(|(a, b)| a * b)
        .sum();
    // χ² for 15 degrees of freedom: the 99.9% quantile is 37.70 (standard χ² tables, e.g.
    // NIST/SEMATECH e-Handbook, table 1.3.6.7.4).
    assert!(chi2 < 37.70, "closure χ² = {chi2} for 15 points");

    // 41 energies × 2 processes × 2 cut sets in the correction table, after its header.
    let table = std::fs::read_to_string(out.join("corrections.csv")).unwrap();
    let data_lines = table.lines().filter(|l| !l.starts_with('#')).count();
    assert_eq!(data_lines, 1 + 41 * 2 * 2);

    for hep in ["corrected/hepdata", "corrections_hepdata"] {
        if let Some(res) = python_reference("hepdata_check.py", &[out.join(hep).to_str().unwrap()])
        {
            assert_eq!(parse_key_values(&res)["valid"], 1.0, "{hep}");
        }
    }
}

#[test]
fn shipped_data_regenerate_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    radnorm(&["demo", "--write-data", dir.path().to_str().unwrap()]).success();
    for f in ["scan.csv", "bhabha_counts.csv"] {
        let shipped = std::fs::read(repo_root().join("tables/demo").join(f)).unwrap();
        let again = std::fs::read(dir.path().join(f)).unwrap();
        assert!(
            shipped == again,
            "{f}: regenerated data differ from tables/demo/{f}"
        );
    }
}

#[test]
fn a_non_empty_folder_is_refused_without_force() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("keep.txt"), "mine").unwrap();
    radnorm(&["demo", "--out", dir.path().to_str().unwrap()])
        .failure()
        .code(2)
        .stderr(predicates::str::contains("not empty"));
    assert_eq!(
        std::fs::read_to_string(dir.path().join("keep.txt")).unwrap(),
        "mine"
    );
}
