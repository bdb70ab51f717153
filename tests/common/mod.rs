//! Shared test support: the precision policy and the independent Python references.
//!
//! Tolerances live here with the reason for each; assertions print the inputs, the
//! values and the relative difference, so a failure reads as a sentence.
#![allow(
    dead_code,
    reason = "each integration test uses a different part of this module"
)]

use std::path::PathBuf;
use std::process::Command;

/// Two exact evaluations of the same closed form in f64 (rounding only).
pub const EXACT: f64 = 1e-13;
/// An adaptive integral at its default 1e-12 target against a closed form.
pub const QUADRATURE: f64 = 1e-10;

/// Assert |got/want − 1| ≤ tol, naming `what`.
#[track_caller]
pub fn assert_rel(what: &str, got: f64, want: f64, tol: f64) {
    let rel = if want == 0.0 {
        got.abs()
    } else {
        (got / want - 1.0).abs()
    };
    assert!(
        rel <= tol && got.is_finite(),
        "{what}: got {got:.15e}, want {want:.15e}, rel {rel:.3e} > {tol:.1e}"
    );
}

/// Assert |got − want| ≤ tol, naming `what`.
#[track_caller]
pub fn assert_abs(what: &str, got: f64, want: f64, tol: f64) {
    let diff = (got - want).abs();
    assert!(
        diff <= tol && got.is_finite(),
        "{what}: got {got:.15e}, want {want:.15e}, |diff| {diff:.3e} > {tol:.1e}"
    );
}

/// Assert that an integral `got` ± its estimated error `error` agrees with an independent
/// value `want` to `tol` and that the estimate covers the true error, up to `rounding`
/// (relative) of f64 arithmetic: the error estimate is honest, not only the value close.
#[track_caller]
pub fn assert_within_estimate(
    what: &str,
    got: f64,
    error: f64,
    want: f64,
    tol: f64,
    rounding: f64,
) {
    assert_rel(what, got, want, tol);
    let true_error = (got - want).abs();
    assert!(
        true_error <= error + rounding * want.abs(),
        "{what}: true error {true_error:e} > estimate {error:e}"
    );
}

/// The repository root (for reading shipped tables and reference scripts; tests never write here).
pub fn repo_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Run `tests/ref/<script>` with python3 and return its standard output.
///
/// The scripts are independent evaluations with general-purpose libraries (mpmath, scipy,
/// pdg). When python3 or a module is missing the test is skipped with a loud message —
/// unless `RADNORM_REQUIRE_REFERENCES=1` (set by `.ci/run`), where it fails.
pub fn python_reference(script: &str, args: &[&str]) -> Option<String> {
    let path = repo_root().join("tests/ref").join(script);
    let required = std::env::var("RADNORM_REQUIRE_REFERENCES").is_ok_and(|v| v == "1");
    let out = Command::new("python3").arg(&path).args(args).output();
    let failure = match out {
        Ok(o) if o.status.success() => {
            return Some(String::from_utf8_lossy(&o.stdout).into_owned());
        }
        Ok(o) => format!(
            "{} exited with {}: {}",
            path.display(),
            o.status,
            String::from_utf8_lossy(&o.stderr)
        ),
        Err(e) => format!("cannot run python3: {e}"),
    };
    if required {
        panic!("independent reference unavailable (RADNORM_REQUIRE_REFERENCES=1): {failure}");
    }
    eprintln!(
        "\n*** SKIPPING independent reference check: {failure}\n*** install tests/requirements.txt to run it\n"
    );
    None
}

/// Parse the `key value` lines a reference script prints.
pub fn parse_key_values(text: &str) -> std::collections::HashMap<String, f64> {
    text.lines()
        .filter_map(|l| {
            let mut it = l.split_whitespace();
            let k = it.next()?;
            let v: f64 = it.next()?.parse().ok()?;
            Some((k.to_string(), v))
        })
        .collect()
}

/// The built binary, with RUST_BACKTRACE unset so that error messages read as users see them.
pub fn radnorm() -> assert_cmd::Command {
    let mut c = assert_cmd::Command::cargo_bin("radnorm").expect("the radnorm binary");
    c.env_remove("RUST_BACKTRACE");
    c
}

/// `radnorm ARGS --format json`: asserted to succeed, its output parsed.
pub fn radnorm_json(args: &[&str]) -> serde_json::Value {
    let out = radnorm()
        .args(args)
        .args(["--format", "json"])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "radnorm {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}
