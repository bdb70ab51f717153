//! `radnorm correct` end to end on an invented scan: the folder it writes, the HEPData
//! validation, and the refusals of bad input with nothing half-written.

mod common;

use assert_cmd::Command;
use common::{parse_key_values, python_reference};
use radnorm::constants::sigma_point_nb;
use radnorm::isr::{Cuts, Scheme};
use radnorm::process::CrossSection;
use radnorm::scan::ForwardChain;
use radnorm::scan::generate::{PlannedPoint, generate_scan, scan_to_csv};
use std::path::Path;

/// An invented line shape: R = 2 continuum and a 30 MeV wide resonance at 3.0 GeV.
struct Invented;
impl CrossSection for Invented {
    fn sigma_nb(&self, s: f64) -> f64 {
        let mg = 3.0 * 0.03;
        2.0 * sigma_point_nb(s) + 30.0 * mg * mg / ((s - 9.0f64).powi(2) + mg * mg)
    }
    fn threshold_s_gev2(&self) -> f64 {
        4.0 * 0.139_570_39f64.powi(2)
    }
}

const CARD: &str = r#"# invented scenario for tests
[process]
final_state = "hadrons"
r_ratio = 2.0
[radiation]
radiator = "kf2"
min_mass_gev = 2.7
compare = ["exp1"]
[vp]
model = "leptonic"
[beam]
energy_unc_mev = 0.2
[luminosity]
scale_unc_rel = 0.01
[efficiency]
unc_rel = 0.005
[[resonance]]
name = "R"
mass_gev = 3.0
width_gev = 0.03
"#;

fn write_inputs(dir: &Path) -> (std::path::PathBuf, std::path::PathBuf) {
    let chain = ForwardChain::new(
        Scheme::KuraevFadin2,
        Cuts::NONE.with_min_mass_gev(2.7).unwrap(),
    );
    let points: Vec<PlannedPoint> = (0..21)
        .map(|i| PlannedPoint {
            sqrt_s_gev: 2.9 + 0.01 * i as f64,
            luminosity_nb_inv: 1.0e4,
            efficiency: 0.7,
            n_bkg: 20.0,
            energy_spread_mev: 0.0,
        })
        .collect();
    let data = generate_scan(&chain, &Invented, &points, 1);
    let card = dir.join("scan.toml");
    let csv = dir.join("scan.csv");
    std::fs::write(&card, CARD).unwrap();
    std::fs::write(&csv, scan_to_csv(&data, "invented scenario for tests")).unwrap();
    (card, csv)
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
fn writes_tables_budget_hepdata_and_plots() {
    let dir = tempfile::tempdir().unwrap();
    let (card, csv) = write_inputs(dir.path());
    let out = dir.path().join("corrected");
    let ok = correct(&card, &csv, &out).success();
    let stdout = String::from_utf8_lossy(&ok.get_output().stdout).into_owned();
    assert!(stdout.contains("corrected 21 points"), "{stdout}");
    for f in [
        "corrected.csv",
        "corrected.json",
        "budget.json",
        "hepdata/submission.yaml",
        "hepdata/cross_sections.yaml",
        "plots/line_shape.svg",
        "plots/corrections.svg",
        "plots/budget.svg",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("corrected.json")).unwrap())
            .unwrap();
    let row = &json["rows"][0];
    for key in [
        "sigma_obs_nb",
        "one_plus_delta",
        "sigma_dressed_nb",
        "vp_factor",
        "sigma_born_nb",
        "sigma_born_stat_nb",
        "sigma_born_syst_nb",
        "sigma_dressed_stat_nb",
        "sigma_obs_syst_nb",
    ] {
        assert!(row[key].is_number(), "{key}: {row}");
    }
    assert!(
        row["budget"]["sigma_born"]["radiator_exp1_nb"].is_number(),
        "{row}"
    );
    // Leptonic VP raises the dressed σ above the bare one (|1 − Π|⁻² > 1 for Re Π > 0).
    assert!(row["vp_factor"].as_f64().unwrap() > 1.0);
    let csv_text = std::fs::read_to_string(out.join("corrected.csv")).unwrap();
    assert!(csv_text.starts_with("# radnorm "));
    assert!(csv_text.contains("# card: scan.toml sha256 "));
    assert!(csv_text.contains("#   [process]"));
    let svg = std::fs::read_to_string(out.join("plots/line_shape.svg")).unwrap();
    assert!(svg.contains("√s [GeV]") && svg.contains("σ [nb]"));

    let hep = out.join("hepdata");
    if let Some(res) = python_reference("hepdata_check.py", &[hep.to_str().unwrap()]) {
        let kv = parse_key_values(&res);
        assert_eq!(kv["valid"], 1.0);
        // 3 cross-sections + 2 factors + energies of 2 tables (21 each) + 21² covariance
        // entries with their two energies.
        assert_eq!(kv["numeric_values"], (21 * 4 + 21 * 3 + 441 * 3) as f64);
    }
}

#[test]
fn bad_inputs_fail_clearly_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (card, csv) = write_inputs(dir.path());
    // An output folder that is a file.
    let file = dir.path().join("taken");
    std::fs::write(&file, "x").unwrap();
    let err = correct(&card, &csv, &file).failure();
    let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    assert!(msg.contains("is an existing file"), "{msg}");
    // Duplicate energies, zero luminosity, efficiency above 1, counts below background.
    let head = "sqrt_s_gev,n_events,n_bkg,efficiency,luminosity_nb_inv\n";
    for (body, want) in [
        (
            "3.0,100,1,0.5,10\n3.0,100,1,0.5,10\n",
            "line 3, column sqrt_s_gev",
        ),
        ("3.0,100,1,0.5,0\n", "column luminosity_nb_inv"),
        ("3.0,100,1,1.5,10\n", "column efficiency"),
        ("3.0,10,20,0.5,10\n", "column n_bkg"),
        ("", "no data rows"),
        // Below the card's minimum mass (2.7 GeV) no event passes: said so, not a failed fit.
        (
            "2.6,100,1,0.5,10\n2.65,100,1,0.5,10\n",
            "min_mass_gev = 2.7 is not below sqrt_s_gev = 2.6",
        ),
    ] {
        let bad = dir.path().join("bad.csv");
        std::fs::write(&bad, format!("{head}{body}")).unwrap();
        let out = dir.path().join("never");
        let err = correct(&card, &bad, &out).failure();
        let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
        assert!(msg.contains(want), "{body:?}: {msg}");
        assert!(!out.exists());
    }
    // An unwritable place: a folder below a file.
    let err = correct(&card, &csv, &file.join("sub")).failure();
    assert!(!String::from_utf8_lossy(&err.get_output().stderr).is_empty());
    // A missing data file: named once with the system's reason, said once (not doubled by
    // the error chain).
    let gone = dir.path().join("gone.csv");
    let err = correct(&card, &gone, &dir.path().join("never")).failure();
    let msg = String::from_utf8_lossy(&err.get_output().stderr).into_owned();
    assert!(
        msg.contains("cannot read") && msg.contains("gone.csv"),
        "{msg}"
    );
    assert_eq!(msg.matches("os error").count(), 1, "{msg}");
    // Nothing but the inputs and the blocking file is left behind.
    let mut names: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, vec!["bad.csv", "scan.csv", "scan.toml", "taken"]);
}
