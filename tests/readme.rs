//! README's two newcomer commands: the demo line uses only options the binary accepts,
//! and the test command is exactly what CI runs.

mod common;

use assert_cmd::Command;
use common::repo_root;

fn readme() -> String {
    std::fs::read_to_string(repo_root().join("README.md")).unwrap()
}

#[test]
fn demo_command_uses_accepted_options() {
    let text = readme();
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with("cargo run --release -- demo"))
        .expect("README gives `cargo run --release -- demo`");
    let command = line.split('#').next().unwrap();
    let args: Vec<&str> = command
        .split_whitespace()
        .skip_while(|w| *w != "--")
        .skip(1)
        .collect();
    assert_eq!(args.first(), Some(&"demo"));
    // The parser rejects an unknown option before it reaches --help; nothing runs.
    Command::cargo_bin("radnorm")
        .unwrap()
        .args(&args)
        .arg("--help")
        .assert()
        .success();
}

#[test]
fn test_command_is_what_ci_runs() {
    let text = readme();
    let test = text
        .lines()
        .map(|l| l.split('#').next().unwrap().trim())
        .find(|l| l.starts_with("cargo test"))
        .expect("README gives a cargo test command");
    let ci = std::fs::read_to_string(repo_root().join(".ci/run")).unwrap();
    assert!(
        ci.lines().any(|l| l.trim() == test),
        "`.ci/run` does not run README's test command `{test}`"
    );
}
