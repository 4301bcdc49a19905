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

/// The text of robots/arm6.urdf.
pub fn arm6_text() -> String {
    std::fs::read_to_string(repo("robots/arm6.urdf")).unwrap()
}

/// The text of robots/arm6.urdf with the first `from` replaced by `to` (the edit must apply).
pub fn arm6_text_with(from: &str, to: &str) -> String {
    let a = arm6_text();
    assert!(a.contains(from), "arm6.urdf has no `{from}`");
    a.replacen(from, to, 1)
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

/// arm6 geometry (m), from the header of robots/arm6.urdf.
pub const A1: f64 = 0.15;
pub const A2: f64 = 0.12;
pub const C1: f64 = 0.45;
pub const C2: f64 = 0.60;
pub const C3: f64 = 0.68;
pub const C4: f64 = 0.10;

/// `xyz: [..], quat: [..]` (mm) of a TCP pose of arm6 with a straight 180 mm tool at joints
/// `q_deg`, moved by `shift_mm` along base axes and turned by `roll_deg` about the tool z axis.
pub fn arm6_pose(q_deg: &[f64], shift_mm: [f64; 3], roll_deg: f64) -> String {
    use nalgebra::{Isometry3, Translation3, UnitQuaternion, Vector3};
    let mut robot = armpath::robot::load_urdf(&repo("robots/arm6.urdf"), None).unwrap();
    robot.set_tool(Isometry3::from_parts(
        Translation3::new(0.0, 0.0, 0.18),
        UnitQuaternion::identity(),
    ));
    let q: Vec<f64> = q_deg.iter().map(|d| d.to_radians()).collect();
    let pose = robot.chain().fk(&armpath::Joints::from_slice(&q).unwrap());
    let r =
        pose.rotation * UnitQuaternion::from_axis_angle(&Vector3::z_axis(), roll_deg.to_radians());
    let t = pose.translation.vector * 1e3 + Vector3::from(shift_mm);
    format!(
        "xyz: [{:.9}, {:.9}, {:.9}], quat: [{:.12}, {:.12}, {:.12}, {:.12}]",
        t.x, t.y, t.z, r.w, r.i, r.j, r.k
    )
}
