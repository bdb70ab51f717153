//! `radnorm isr` end to end: the output contract, the flags, and bad input.

mod common;
use common::{assert_rel, radnorm, radnorm_json};
use serde_json::Value;

/// `radnorm isr ARGS --format json`, parsed.
fn json(args: &[&str]) -> Value {
    let mut all = vec!["isr"];
    all.extend_from_slice(args);
    radnorm_json(&all)
}

fn fails(args: &[&str], needle: &str) {
    let out = radnorm().arg("isr").args(args).output().unwrap();
    assert!(!out.status.success(), "{args:?} should fail");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains(needle),
        "{args:?}: stderr {err:?} lacks {needle:?}"
    );
}

#[test]
fn one_point_has_the_contract_keys_and_ratios() {
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "10",
        "--x-max",
        "0.5",
        "--vp",
        "none",
    ]);
    for key in [
        "sqrt_s_gev",
        "sigma_born_nb",
        "sigma_dressed_nb",
        "sigma_obs_nb",
        "one_plus_delta",
        "vp_factor",
        "radiator",
        "x_max",
    ] {
        assert!(v.get(key).is_some(), "missing {key}: {v}");
    }
    let f = |k: &str| v[k].as_f64().unwrap();
    // The ratios are defined as in physics.md §4; with --vp none the dressed σ is the bare one.
    assert_rel(
        "one_plus_delta",
        f("one_plus_delta"),
        f("sigma_obs_nb") / f("sigma_dressed_nb"),
        1e-15,
    );
    assert_eq!(f("vp_factor"), 1.0);
    assert_eq!(f("x_max"), 0.5);
    assert_eq!(v["radiator"], "kf2");
    assert!(v.get("fsr_factor").is_none(), "FSR is off by default");
}

#[test]
fn grid_compare_fsr_keep_the_shape() {
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "3:10:3",
        "--vp",
        "lep",
        "--compare-radiators",
        "--fsr",
    ]);
    let rows = v.as_array().expect("a grid is an array");
    assert_eq!(rows.len(), 3);
    for r in rows {
        let nested = r["radiators"].as_object().expect("nested radiators object");
        let vals: Vec<f64> = ["kf2", "exp1", "sfll"]
            .iter()
            .map(|k| nested[*k].as_f64().unwrap())
            .collect();
        let range = vals.iter().cloned().fold(f64::MIN, f64::max)
            - vals.iter().cloned().fold(f64::MAX, f64::min);
        assert_rel(
            "spread = max − min",
            r["spread"].as_f64().unwrap(),
            range,
            1e-12,
        );
        assert_rel(
            "kf2 entry is the main result",
            vals[0],
            r["one_plus_delta"].as_f64().unwrap(),
            1e-15,
        );
        // Schwinger's 1 + 3α/4π (massless leptons), α = 1/137.035999177 (CODATA 2022).
        let want = 1.0 + 3.0 / (4.0 * std::f64::consts::PI * 137.035_999_177);
        assert_rel("fsr_factor", r["fsr_factor"].as_f64().unwrap(), want, 1e-14);
        assert!(
            r["vp_factor"].as_f64().unwrap() > 1.0,
            "leptonic VP raises σ: {r}"
        );
    }
}

#[test]
fn cuts_combine_tightest_wins() {
    // E_γ ≤ 1 GeV at √s = 10 GeV is x ≤ 0.2, tighter than --x-max 0.5.
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "10",
        "--vp",
        "none",
        "--x-max",
        "0.5",
        "--max-photon-gev",
        "1",
    ]);
    assert_rel(
        "x_max from the photon cut",
        v["x_max"].as_f64().unwrap(),
        0.2,
        1e-15,
    );
    // √s′ ≥ 8 GeV: x ≤ 1 − 0.64.
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "10",
        "--vp",
        "none",
        "--min-mass-gev",
        "8",
    ]);
    assert_rel(
        "x_max from the mass cut",
        v["x_max"].as_f64().unwrap(),
        0.36,
        1e-14,
    );
}

#[test]
fn spread_adds_its_keys() {
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "10",
        "--vp",
        "none",
        "--x-max",
        "0.5",
        "--energy-spread-mev",
        "5",
    ]);
    // Far from any narrow structure a 5 MeV spread changes a smooth 1/s shape by ~(σ_W/√s)² only.
    assert_rel(
        "smooth shape barely smeared",
        v["sigma_obs_nb"].as_f64().unwrap(),
        v["sigma_radiated_nb"].as_f64().unwrap(),
        1e-5,
    );
    assert_eq!(v["energy_spread_mev"].as_f64().unwrap(), 5.0);
}

#[test]
fn bad_input_is_a_clear_error() {
    let base = ["--process", "mumu", "--sqrt-s", "10", "--vp", "none"];
    let with = |extra: &[&'static str]| [&base[..], extra].concat();
    fails(&with(&["--x-max", "0"]), "--x-max 0");
    fails(&with(&["--x-max", "1.5"]), "--x-max 1.5");
    fails(&with(&["--min-mass-gev", "12"]), "--min-mass-gev 12");
    fails(
        &with(&["--energy-spread-mev", "-1"]),
        "--energy-spread-mev -1",
    );
    // A spread wider than √s/8 (1250 MeV at 10 GeV) puts the ±8σ window at W ≤ 0.
    fails(
        &with(&["--energy-spread-mev", "1300"]),
        "--energy-spread-mev 1300: too wide at sqrt_s = 10 GeV; allowed: ≤ 1250 MeV",
    );
    fails(&with(&["--radiator", "kf9"]), "kf9");
    fails(&["--process", "hadrons", "--sqrt-s", "3", "--fsr"], "--fsr");
}

#[test]
fn at_threshold_is_zero_not_nan() {
    // 2 m_μ = 0.211316751 GeV (CODATA 2022): at and just above, σ_obs is 0 or small, finite.
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "0.2113:0.2114:3",
        "--vp",
        "none",
    ]);
    for r in v.as_array().unwrap() {
        let obs = r["sigma_obs_nb"].as_f64().unwrap();
        assert!(obs.is_finite() && obs >= 0.0, "{r}");
    }
}

#[test]
fn help_lists_the_radiators() {
    let out = radnorm().args(["isr", "--help"]).output().unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    for name in ["kf2", "exp1", "sfll"] {
        assert!(text.contains(name), "--help lacks {name}");
    }
}

/// Negative values reach our validation (clap would stop at "unexpected argument '-0.1'"):
/// exit code 2 and a message naming the flag, the value and the allowed range.
#[test]
fn negative_values_are_named_with_their_range() {
    let base = ["--process", "mumu", "--sqrt-s", "10", "--vp", "none"];
    let cases: &[(&[&str], &str)] = &[
        (&["--x-max", "-0.1"], "--x-max -0.1"),
        (&["--min-mass-gev", "-1"], "--min-mass-gev -1"),
        (&["--max-photon-gev", "-1"], "--max-photon-gev -1"),
        (&["--energy-spread-mev", "-5"], "--energy-spread-mev -5"),
    ];
    let mut all: Vec<(Vec<&str>, &str)> = cases
        .iter()
        .map(|(extra, needle)| ([&base[..], extra].concat(), *needle))
        .collect();
    all.push((
        vec!["--process", "mumu", "--sqrt-s", "-10", "--vp", "none"],
        "--sqrt-s -10",
    ));
    all.push((
        vec!["--process", "mumu", "--sqrt-s", "-10:10:3", "--vp", "none"],
        "--sqrt-s -10:10:3",
    ));
    all.push((
        vec!["--process", "hadrons", "--sqrt-s", "3", "--r-const", "-2"],
        "--r-const -2",
    ));
    for (args, needle) in all {
        let out = radnorm().arg("isr").args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(
            err.contains(needle) && err.contains("allowed") && !err.contains("unexpected"),
            "{args:?}: {err}"
        );
    }
}

#[test]
fn a_grid_of_one_point_is_an_array() {
    let v = json(&["--process", "mumu", "--sqrt-s", "3:3:1", "--vp", "none"]);
    assert_eq!(v.as_array().expect("a grid gives an array").len(), 1);
}

#[test]
fn a_dense_grid_agrees_with_its_points_run_alone() {
    // A grid of 400 energies (runs of them share the far part of the integral, see
    // `Isr::observe_many`) against single-point runs of the same energies, with the
    // radiators compared: each within two accuracy targets (2e-8; measured ≲ 1e-11).
    let v = json(&[
        "--process",
        "mumu",
        "--sqrt-s",
        "3.3:3.7:401",
        "--compare-radiators",
    ]);
    let rows = v.as_array().expect("a grid is an array");
    assert_eq!(rows.len(), 401);
    for r in rows.iter().step_by(80) {
        let sqrt_s = r["sqrt_s_gev"].as_f64().unwrap();
        let alone = json(&[
            "--process",
            "mumu",
            "--sqrt-s",
            &sqrt_s.to_string(),
            "--compare-radiators",
        ]);
        for key in ["sigma_obs_nb", "one_plus_delta", "x_max"] {
            let what = format!("√s = {sqrt_s} GeV: {key}");
            assert_rel(
                &what,
                r[key].as_f64().unwrap(),
                alone[key].as_f64().unwrap(),
                2e-8,
            );
        }
        for scheme in ["kf2", "exp1", "sfll"] {
            let (grid, one) = (&r["radiators"][scheme], &alone["radiators"][scheme]);
            let what = format!("√s = {sqrt_s} GeV: {scheme}");
            assert_rel(&what, grid.as_f64().unwrap(), one.as_f64().unwrap(), 2e-8);
        }
    }
}

#[test]
fn a_grid_says_which_values_were_interpolated() {
    // How a value was made is in the output: a dense grid says how many of its energies
    // were interpolated; a grid with an x_max cut (each point alone) and a single point
    // say nothing of it.
    let csv = |args: &[&str]| {
        let out = radnorm()
            .args(["isr", "--process", "mumu", "--format", "csv"])
            .args(args)
            .output()
            .unwrap();
        assert!(out.status.success(), "{args:?}");
        String::from_utf8(out.stdout).unwrap()
    };
    let note = |text: &str| {
        text.lines()
            .find(|l| l.starts_with("# sigma_obs at ") && l.contains("interpolated"))
            .map(str::to_string)
    };
    let dense = csv(&["--sqrt-s", "3.3:3.7:401"]);
    let line = note(&dense).expect("a dense grid's note");
    // "# sigma_obs at N of 401 energies ...": most of them (a short last run goes alone).
    let n: usize = line["# sigma_obs at ".len()..]
        .split(' ')
        .next()
        .and_then(|n| n.parse().ok())
        .expect("a count");
    assert!(line.contains(" of 401 energies") && n >= 300, "{line}");
    assert_eq!(
        note(&csv(&["--sqrt-s", "3.3:3.7:401", "--x-max", "0.5"])),
        None
    );
    assert_eq!(note(&csv(&["--sqrt-s", "3.5"])), None);
}
