//! Helpers shared by the integration tests: write a path file into a temporary folder, run
//! the binary on it, read its JSON report.
#![allow(dead_code)]

use assert_cmd::Command;
use std::path::{Path, PathBuf};

pub fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

pub fn arm6() -> String {
    repo("robots/arm6.urdf").display().to_string()
}

/// Write `yaml` as `path.yaml` in a fresh temporary folder; returns the folder and the file.
pub fn path_file(yaml: &str) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("path.yaml");
    std::fs::write(&p, yaml).unwrap();
    (dir, p)
}

/// Run `armpath check FILE --json -` plus `extra` args; returns (exit code, JSON report).
pub fn check_json(file: &Path, extra: &[&str]) -> (i32, serde_json::Value) {
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .arg("check")
        .arg(file)
        .args(["--json", "-"])
        .args(extra)
        .output()
        .unwrap();
    let code = out.status.code().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    let json = serde_json::from_str(&text).unwrap_or_else(|e| {
        panic!(
            "no JSON ({e}); stdout: {text}; stderr: {}",
            String::from_utf8_lossy(&out.stderr)
        )
    });
    (code, json)
}

/// The findings of a report with the given kind.
pub fn findings<'a>(report: &'a serde_json::Value, kind: &str) -> Vec<&'a serde_json::Value> {
    report["findings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["kind"] == kind)
        .collect()
}

pub fn f64_of(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// The binary under test.
pub fn armpath() -> Command {
    Command::cargo_bin("armpath").unwrap()
}

/// Run the binary with `args` (which should include `--json -`); (exit code, JSON).
pub fn json_of(args: &[&str]) -> (i32, serde_json::Value) {
    let out = armpath().args(args).output().unwrap();
    let text = String::from_utf8(out.stdout).unwrap();
    (
        out.status.code().unwrap(),
        serde_json::from_str(&text).unwrap_or_else(|e| panic!("{e}: {text}")),
    )
}
