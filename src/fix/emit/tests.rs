use super::{comment, file_value, num, path_file};
use crate::job::{load, Job, Overrides};
use crate::rotation::angle_between;
use std::path::Path;

/// Every key the path-file reader accepts, each away from its default, in mm and degrees.
/// The three orientation forms appear on the waypoints, the tool and the work frame; the
/// first waypoint carries no segment keys (it ends no segment, so they would be dropped).
const EVERY_KEY_MM_DEG: &str = "\
units: {length: mm, angle: deg}
robot: arm.urdf
tip: flange
tool: {xyz: [1.5, -2, 180.25], rpy: [0, 90, 10], free_spin: true, spin_range: [-90, 120.5], spin_rate: 45}
work_frame: {xyz: [900, 0.1, 250], rotvec: [0, 0, 30]}
start_joints: [0, 10, -20, 30.5, 45, 0.25]
start_joints_seed: true
config: {shoulder: front, elbow: up, wrist: noflip}
speed: 20.3
orientation_speed: 30
limits: {tool_angular_speed: 120, joint_speed_scale: 0.8, near_limit_margin: {angle: 3, length: 2.5}, tcp_acceleration: 1500.5, tool_angular_acceleration: 400, joint_acceleration_scale: 0.7, process_speed_tolerance: 0.1, joint_accelerations: {j2: 250.5, j5: 900}}
sampling: {step: 0.7, angle_step: 0.3}
waypoints:
  - {name: approach, xyz: [0, 0, 60], rpy: [180, 0, 0]}
  - {name: seam_a, xyz: [0.1, 0.2, 0.3], quat: [0, 1, 0, 0], motion: joint, speed: 50%}
  - {xyz: [400, -0.7, 1e-3], rotvec: [180, 0, 0], motion: linear, speed: 8.1, process: true, blend: 2.5}
  - {name: seam_c, xyz: [410, 33.3, 0], quat: [0, 0.6, 0.8, 0], process: false}
";

/// The same keys in m and rad, with the one-number margin and the wrist asked for only.
const EVERY_KEY_M_RAD: &str = "\
units: {length: m, angle: rad}
robot: arm.urdf
tool: {xyz: [0, 0, 0.18], quat: [0.6, 0, 0.8, 0], free_spin: true, spin_range: [-1, 1]}
work_frame: {xyz: [0.9, 0, 0.25], rpy: [0, 0, 0.5]}
start_joints: [0, 0.1, -0.2, 0.3, 0.4, 0.5]
config: {wrist: flip}
speed: 0.02
limits: {near_limit_margin: 0.05}
waypoints:
  - {xyz: [0, 0, 0.06], rotvec: [3.14159, 0, 0]}
  - {xyz: [0.1, 0.2, 0.3], rpy: [3, 0.1, 0], motion: joint}
  - {xyz: [0.4, 0, 0], rpy: [3, 0.1, 0.2], speed: 0.008, process: true}
";

/// Writes `text` as `job.yaml` (with an empty `arm.urdf` beside it, so that the robot path
/// resolves) in `dir` and loads it.
fn load_text(dir: &Path, name: &str, text: &str) -> Job {
    std::fs::write(dir.join("arm.urdf"), "").unwrap();
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    load(&p, &Overrides::default()).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

/// `a` and `b` agree to `rel` relative (exactly when `rel` is 0).
fn close(a: f64, b: f64, rel: f64, what: &str) {
    assert!(
        a == b || (a - b).abs() <= rel * a.abs().max(b.abs()),
        "{what}: {a} != {b}"
    );
}

/// The two jobs hold the same settings and waypoints in SI. `rel` bounds the relative
/// difference of converted numbers; rotations are compared by the angle between them, within
/// 1e-12 rad in every case, because the reader normalises the written quaternion again, which
/// may move its components by a rounding.
fn assert_same_job(a: &Job, b: &Job, rel: f64) {
    let rot = |x: &nalgebra::Isometry3<f64>, y: &nalgebra::Isometry3<f64>, what: &str| {
        let angle = angle_between(&x.rotation, &y.rotation);
        assert!(angle <= 1e-12, "{what}: rotations differ by {angle} rad");
        for k in 0..3 {
            let (p, q) = (x.translation.vector[k], y.translation.vector[k]);
            close(p, q, rel, &format!("{what}.xyz[{k}]"));
        }
    };
    assert_eq!(
        std::fs::canonicalize(&a.robot).unwrap(),
        std::fs::canonicalize(&b.robot).unwrap()
    );
    assert_eq!(a.tip, b.tip);
    assert_eq!(a.units, b.units);
    rot(&a.tool.tip_T_tcp, &b.tool.tip_T_tcp, "tool");
    assert_eq!(a.tool.free_spin, b.tool.free_spin);
    close(
        a.tool.spin_range.0,
        b.tool.spin_range.0,
        rel,
        "spin_range[0]",
    );
    close(
        a.tool.spin_range.1,
        b.tool.spin_range.1,
        rel,
        "spin_range[1]",
    );
    assert_eq!(a.tool.spin_rate.is_some(), b.tool.spin_rate.is_some());
    if let (Some(x), Some(y)) = (a.tool.spin_rate, b.tool.spin_rate) {
        close(x, y, rel, "spin_rate");
    }
    rot(&a.base_T_work, &b.base_T_work, "work_frame");
    assert_eq!(a.start_joints.is_some(), b.start_joints.is_some());
    if let (Some(sa), Some(sb)) = (&a.start_joints, &b.start_joints) {
        assert_eq!(sa.values, sb.values, "start joints are written unconverted");
        assert_eq!(
            (sa.angle_to_rad, sa.length_to_m, sa.seed),
            (sb.angle_to_rad, sb.length_to_m, sb.seed)
        );
    }
    assert_eq!(a.config, b.config);
    close(a.speed, b.speed, rel, "speed");
    assert_eq!(a.orientation_speed.is_some(), b.orientation_speed.is_some());
    if let (Some(x), Some(y)) = (a.orientation_speed, b.orientation_speed) {
        close(x, y, rel, "orientation_speed");
    }
    let (la, lb) = (&a.limits, &b.limits);
    close(
        la.tool_angular_speed,
        lb.tool_angular_speed,
        rel,
        "tool_angular_speed",
    );
    close(
        la.joint_speed_scale,
        lb.joint_speed_scale,
        0.0,
        "joint_speed_scale",
    );
    close(
        la.near_limit_margin_angle,
        lb.near_limit_margin_angle,
        rel,
        "margin angle",
    );
    close(
        la.near_limit_margin_length,
        lb.near_limit_margin_length,
        rel,
        "margin length",
    );
    close(
        la.tcp_acceleration,
        lb.tcp_acceleration,
        rel,
        "tcp_acceleration",
    );
    close(
        la.tool_angular_acceleration,
        lb.tool_angular_acceleration,
        rel,
        "tool_angular_acceleration",
    );
    close(
        la.joint_acceleration_scale,
        lb.joint_acceleration_scale,
        0.0,
        "joint_acceleration_scale",
    );
    close(
        la.process_speed_tolerance,
        lb.process_speed_tolerance,
        0.0,
        "process_speed_tolerance",
    );
    // Given joint accelerations stay in the file's units, so they come back exactly.
    assert_eq!(
        a.joint_accelerations, b.joint_accelerations,
        "joint_accelerations"
    );
    assert_eq!(a.move_keys.len(), b.move_keys.len(), "move keys");
    for (i, (x, y)) in a.move_keys.iter().zip(b.move_keys.iter()).enumerate() {
        close(x.blend, y.blend, rel, &format!("waypoints[{i}].blend"));
        assert_eq!(
            x.joint_speed_fraction, y.joint_speed_fraction,
            "waypoints[{i}] joint-move share"
        );
    }
    close(a.sampling.step, b.sampling.step, rel, "step");
    close(
        a.sampling.angle_step,
        b.sampling.angle_step,
        rel,
        "angle_step",
    );
    assert_eq!(a.waypoints.len(), b.waypoints.len());
    for (i, (x, y)) in a.waypoints.iter().zip(b.waypoints.iter()).enumerate() {
        let what = format!("waypoints[{i}]");
        rot(&x.work_T_tcp, &y.work_T_tcp, &what);
        assert_eq!(x.speed.is_some(), y.speed.is_some(), "{what}.speed");
        if let (Some(p), Some(q)) = (x.speed, y.speed) {
            close(p, q, rel, &format!("{what}.speed"));
        }
        assert_eq!((x.motion, x.process), (y.motion, y.process), "{what}");
        assert_eq!(a.waypoint_name(i), b.waypoint_name(i));
    }
}

/// Loads `text`, writes it with [`path_file`], loads the written file and compares the jobs;
/// returns the written text.
fn round_trip(text: &str, rel: f64) -> String {
    let dir = tempfile::tempdir().unwrap();
    let first = load_text(dir.path(), "job.yaml", text);
    assert!(first.warnings.is_empty(), "{:?}", first.warnings);
    let header = ["note".to_string()];
    let written = path_file(&first, &header).unwrap();
    let second = load_text(dir.path(), "amended.yaml", &written);
    // The written file is clean: no quaternion off unit length, no ignored setting.
    assert!(
        second.warnings.is_empty(),
        "{:?}\n{written}",
        second.warnings
    );
    assert_same_job(&first, &second, rel);
    written
}

#[test]
fn every_key_round_trips_through_the_written_file() {
    // source: common practice (a writer is checked by reading its output back with the
    // reader it serves). mm and deg are converted to SI on reading and back on writing, so a
    // value may come back a rounding or two away: 1e-12 relative is a thousand times coarser
    // than that and a million times finer than any robot's resolution.
    let written = round_trip(EVERY_KEY_MM_DEG, 1e-12);
    // Every key was written (a key left out would come back as its default, which the
    // comparison catches too; this names the key).
    let yaml: serde_yaml::Mapping = serde_yaml::from_str(&written).unwrap();
    let keys: Vec<&str> = yaml.keys().filter_map(|k| k.as_str()).collect();
    assert_eq!(
        keys,
        [
            "units",
            "robot",
            "tip",
            "tool",
            "work_frame",
            "start_joints",
            "start_joints_seed",
            "config",
            "speed",
            "orientation_speed",
            "limits",
            "sampling",
            "waypoints"
        ]
    );
    let tool = yaml["tool"].as_mapping().unwrap();
    for k in ["xyz", "quat", "free_spin", "spin_range", "spin_rate"] {
        assert!(tool.contains_key(k), "tool.{k}\n{written}");
    }
    let given = &yaml["limits"]["joint_accelerations"];
    // source: the EVERY_KEY_MM_DEG text above
    assert_eq!(given["j2"].as_f64(), Some(250.5), "{written}");
    assert_eq!(given["j5"].as_f64(), Some(900.0), "{written}");
    let waypoints = yaml["waypoints"].as_sequence().unwrap();
    for k in ["name", "xyz", "quat", "motion", "speed", "process"] {
        let given = waypoints
            .iter()
            .any(|w| w.as_mapping().unwrap().contains_key(k));
        assert!(given, "{k}\n{written}");
    }
    assert!(written.starts_with("# note\n"), "{written}");
    // Short numbers stay short where they read back exactly.
    assert!(written.contains("speed: 20.3\n"), "{written}");
}

#[test]
fn metre_radian_file_round_trips_exactly_but_for_rotations() {
    // source: common practice. In m and rad no value is converted (the factors are 1), so
    // every number comes back bit for bit; rotations are compared as above.
    let written = round_trip(EVERY_KEY_M_RAD, 0.0);
    assert!(written.contains("speed: 0.02\n"), "{written}");
}

#[test]
fn names_are_written_as_one_quoted_scalar() {
    // source: serde_yaml 0.9 as the reference YAML reader. Each name would start a key of its
    // own if written raw.
    let names = [
        "a\nstart_joints: [1, 2, 3, 4, 5, 6]",
        "cr\rlf\r\n",
        "tab\tand \"quotes\" and \\ back",
        "nel\u{85} ls\u{2028} ps\u{2029} bom\u{feff} nul\u{0} del\u{7f}",
        "}, start_joints: [0], x: {",
        "true",
        "12.5",
        "# not a comment",
    ];
    // Written into the input as YAML escapes (`\uXXXX`), which the reader accepts where the
    // raw characters would be refused.
    let escaped = |n: &str| {
        let mut out = String::from("\"");
        for c in n.chars() {
            if (c.is_ascii_graphic() || c == ' ') && c != '"' && c != '\\' {
                out.push(c);
            } else {
                out += &format!("\\u{:04x}", c as u32);
            }
        }
        out + "\""
    };
    let mut text = String::from("robot: arm.urdf\nspeed: 20\nwaypoints:\n");
    for (i, n) in names.iter().enumerate() {
        let yaml_name = escaped(n);
        text += &format!("  - {{name: {yaml_name}, xyz: [{i}, 0, 0], rpy: [180, 0, 0]}}\n");
    }
    let written = round_trip(&text, 1e-12);
    let yaml: serde_yaml::Mapping = serde_yaml::from_str(&written).unwrap();
    assert!(!yaml.contains_key("start_joints"), "{written}");
    let read: Vec<&str> = yaml["waypoints"]
        .as_sequence()
        .unwrap()
        .iter()
        .map(|w| w["name"].as_str().unwrap())
        .collect();
    assert_eq!(read, names);
}

#[test]
fn start_joints_in_other_units_are_converted_or_refused() {
    // source: SI definitions (1° = π/180 rad, 1 mm = 1e-3 m)
    let dir = tempfile::tempdir().unwrap();
    let text = "units: {length: m, angle: rad}\nrobot: arm.urdf\nspeed: 0.02\nwaypoints:\n  - {xyz: [0, 0, 0], rpy: [3, 0, 0]}\n  - {xyz: [0.1, 0, 0], rpy: [3, 0, 0]}\n";
    std::fs::write(dir.path().join("arm.urdf"), "").unwrap();
    let p = dir.path().join("job.yaml");
    std::fs::write(&p, text).unwrap();
    // Given in m and rad like the file: written as given.
    let ov = |length: &str, angle: &str| Overrides {
        start_joints: Some(vec![90.0, 0.5]),
        units_length: Some(length.into()),
        units_angle: Some(angle.into()),
        ..Default::default()
    };
    let job = load(&p, &ov("m", "rad")).unwrap();
    let spec = super::spec(&job).unwrap();
    assert_eq!(spec.start_joints, Some(vec![90.0, 0.5]));
    // In mm and deg against a file in m and rad: a revolute value would be divided by 57.3, a
    // prismatic one by 1000, and the job does not know which joint is which.
    let job = load(&p, &ov("mm", "deg")).unwrap();
    let e = super::spec(&job).unwrap_err().to_string();
    assert!(
        e.starts_with("--start-joints: is given in other units"),
        "{e}"
    );
    assert!(e.contains("--units m,rad"), "{e}");
}

#[test]
fn file_values_read_back_to_the_same_si_value() {
    // source: IEEE 754 double arithmetic. The reader makes SI values as file value × unit
    // factor; each such value is written back as a number that gives it again.
    let deg = std::f64::consts::PI / 180.0;
    for &(x, unit) in &[
        (20.3, 1e-3),
        (46.6, 1e-3),
        (0.1, 1e-3),
        (1.0, deg),
        (33.333333333333336, deg),
        (0.123456789, 1e-3),
        (-7.25, 1e-3),
        (1e-9, 1e-3),
    ] {
        let si = x * unit;
        let v = file_value(si, unit);
        assert_eq!(v * unit, si, "{x} in units of {unit}: wrote {v}");
        assert!(v.to_string().len() <= x.to_string().len(), "{x}: wrote {v}");
    }
    // Divided by the factor, these SI values would read 15.699999999999998 mm and
    // 7.499999999999999 deg (source: IEEE 754 double arithmetic, checked with Python 3
    // floats); the shorter 15.7 and 7.5 give the same SI values and are written instead.
    assert_ne!((15.7 * 1e-3) / 1e-3, 15.7);
    assert_eq!(file_value(15.7 * 1e-3, 1e-3), 15.7);
    assert_ne!((7.5 * deg) / deg, 7.5);
    assert_eq!(file_value(7.5 * deg, deg), 7.5);
    // A factor of 1 writes the value itself.
    assert_eq!(file_value(0.1, 1.0), 0.1);
}

#[test]
fn comments_stay_on_one_line() {
    // source: common practice (a YAML comment ends at the line break)
    let c = comment("segment 1 (a\nspeed: 1 → b\u{2028}c)");
    assert_eq!(c, "segment 1 (a\\nspeed: 1 → b\\u2028c)");
    let v: Option<serde_yaml::Value> = serde_yaml::from_str(&format!("# {c}\n")).unwrap();
    assert!(v.is_none_or(|v| v.is_null()));
}

#[test]
fn numbers_lose_trailing_zeros_only() {
    // source: common practice (fixed-point formatting)
    assert_eq!(num(20.0, 9), "20");
    assert_eq!(num(-0.0000000001, 9), "0");
    assert_eq!(num(46.6, 9), "46.6");
    assert_eq!(num(100.0, 0), "100");
}
