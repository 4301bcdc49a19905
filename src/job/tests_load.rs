//! Tests of loading YAML path files: every key, units, defaults, overrides, and the refusals
//! with their locations (the CSV reader's own tests are beside it).

use super::read::MAX_FILE_BYTES;
use super::*;
use crate::error::Error;
use approx::assert_relative_eq;
use nalgebra::Isometry3;
use nalgebra::{Matrix3, Vector3};
use std::f64::consts::PI;
use std::time::{Duration, Instant};

const HEAD: &str = "robot: arm.urdf\nspeed: 20\n";
const TWO: &str = "waypoints:\n  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}\n";

fn rx(a: f64) -> Matrix3<f64> {
    Matrix3::new(1.0, 0.0, 0.0, 0.0, a.cos(), -a.sin(), 0.0, a.sin(), a.cos())
}
fn ry(a: f64) -> Matrix3<f64> {
    Matrix3::new(a.cos(), 0.0, a.sin(), 0.0, 1.0, 0.0, -a.sin(), 0.0, a.cos())
}
fn rz(a: f64) -> Matrix3<f64> {
    Matrix3::new(a.cos(), -a.sin(), 0.0, a.sin(), a.cos(), 0.0, 0.0, 0.0, 1.0)
}
fn matrix(p: &Isometry3<f64>) -> Matrix3<f64> {
    p.rotation.to_rotation_matrix().into_inner()
}

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/job")
        .join(name)
}

fn load_with(text: &str, ov: &Overrides) -> Result<Job, Error> {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("job.yaml");
    std::fs::write(&p, text).unwrap();
    load(&p, ov)
}

fn load_text(text: &str) -> Result<Job, Error> {
    load_with(text, &Overrides::default())
}

/// (location, message) of an input error; panics on success or another kind.
fn input_err(r: Result<Job, Error>) -> (String, String) {
    match r {
        Err(Error::Input {
            location, message, ..
        }) => (location, message),
        Err(e) => panic!("expected an input error, got {e}"),
        Ok(_) => panic!("expected an input error, got a job"),
    }
}

/// (option, message) of a usage error.
fn usage_err(r: Result<Job, Error>) -> (String, String) {
    match r {
        Err(Error::Usage { option, message }) => (option, message),
        Err(e) => panic!("expected a usage error, got {e}"),
        Ok(_) => panic!("expected a usage error, got a job"),
    }
}

fn assert_err(text: &str, location: &str, phrases: &[&str]) {
    let (loc, msg) = input_err(load_text(text));
    assert_eq!(loc, location, "message: {msg}");
    for p in phrases {
        assert!(msg.contains(p), "`{p}` not in `{msg}`");
    }
}

fn assert_line_err(text: &str, location_start: &str, phrases: &[&str]) {
    let (loc, msg) = input_err(load_text(text));
    assert!(
        loc.starts_with(location_start),
        "location `{loc}` does not start with `{location_start}` ({msg})"
    );
    for p in phrases {
        assert!(msg.contains(p), "`{p}` not in `{msg}`");
    }
}

#[test]
fn example_file_loads_every_key() {
    let path = data("bracket.yaml");
    let job = load(&path, &Overrides::default()).unwrap();
    let deg = PI / 180.0;
    assert_eq!(job.source, path);
    assert_eq!(job.robot, data("../robots/arm6.urdf"));
    assert_eq!(job.tip.as_deref(), Some("flange"));
    assert_eq!(job.units, Units::default());
    // source: SI definitions (1 mm = 1e-3 m, 1° = π/180 rad) for every conversion below
    assert_relative_eq!(
        job.tool.tip_T_tcp.translation.vector,
        Vector3::new(0.0, 0.0, 0.18)
    );
    assert_relative_eq!(job.tool.tip_T_tcp.rotation.angle(), 0.0);
    assert!(job.tool.free_spin);
    assert_relative_eq!(job.tool.spin_range.0, -PI / 2.0, epsilon = 1e-15);
    assert_relative_eq!(job.tool.spin_range.1, PI / 2.0, epsilon = 1e-15);
    assert_relative_eq!(job.tool.spin_rate.unwrap(), PI / 4.0, epsilon = 1e-15);
    assert_relative_eq!(
        job.base_T_work.translation.vector,
        Vector3::new(0.9, 0.0, 0.25)
    );
    let sj = job.start_joints.as_ref().unwrap();
    assert_eq!(sj.values, vec![0.0, 30.0, -20.0, 0.0, 45.0, 0.0]);
    assert_eq!(sj.origin, "start_joints");
    let si = sj.to_si(&[false; 6]).unwrap();
    assert_relative_eq!(si[1], 30.0 * deg, epsilon = 1e-15);
    assert_eq!(
        job.config,
        ConfigRequest {
            shoulder: Some(Shoulder::Front),
            elbow: Some(Elbow::Up),
            wrist: Some(Wrist::NoFlip)
        }
    );
    assert_relative_eq!(job.speed, 0.02);
    assert_relative_eq!(job.orientation_speed.unwrap(), 60.0 * deg);
    assert_relative_eq!(job.limits.tool_angular_speed, 120.0 * deg);
    assert_eq!(job.limits.joint_speed_scale, 0.8);
    assert_relative_eq!(job.limits.near_limit_margin_angle, 3.0 * deg);
    assert_relative_eq!(job.limits.near_limit_margin_length, 0.002);
    assert_relative_eq!(job.sampling.step, 0.002);
    assert_relative_eq!(job.sampling.angle_step, deg);

    let names: Vec<String> = job.names.iter().map(|n| n.into_owned()).collect();
    assert_eq!(names, ["approach", "bead_a", "bead_b", "wp4"]);
    let motions: Vec<Motion> = job.waypoints.iter().map(|w| w.motion).collect();
    assert_eq!(
        motions,
        [
            Motion::Joint,
            Motion::Linear,
            Motion::Linear,
            Motion::Linear
        ]
    );
    assert_eq!(job.waypoints[2].speed, Some(0.008));
    assert!(job.waypoints[2].process && !job.waypoints[1].process);
    assert_eq!(job.waypoint_origin(2), "waypoints[2]");
    assert_relative_eq!(
        job.waypoints[2].work_T_tcp.translation.vector,
        Vector3::new(0.4, 0.0, 0.0)
    );
    // rpy [180, 0, 0] is Rx(π) = diag(1, −1, −1).
    // source: URDF spec / REP 103, R = Rz(yaw)·Ry(pitch)·Rx(roll)
    assert_relative_eq!(
        matrix(&job.waypoints[1].work_T_tcp),
        Matrix3::from_diagonal(&Vector3::new(1.0, -1.0, -1.0)),
        epsilon = 1e-15
    );
    // A quaternion [0, n] is the half turn about n: R = 2·n·nᵀ − I.
    // source: Rodrigues' formula at θ = π (Lynch & Park 2017, eq. 3.51)
    let n = Vector3::new(0.9659258, 0.0, 0.258819).normalize();
    assert_relative_eq!(
        matrix(&job.waypoints[2].work_T_tcp),
        2.0 * n * n.transpose() - Matrix3::identity(),
        epsilon = 1e-12
    );
    // rotvec [0, 180, 0] deg is Ry(π) = diag(−1, 1, −1).
    // source: Rodrigues' formula (Lynch & Park 2017, eq. 3.51)
    assert_relative_eq!(
        matrix(&job.waypoints[3].work_T_tcp),
        Matrix3::from_diagonal(&Vector3::new(-1.0, 1.0, -1.0)),
        epsilon = 1e-15
    );
    // The example's first waypoint gives `motion: joint`, which ends no segment: read, and
    // reported once by the key given.
    // source: common practice (a key without effect is reported, not dropped silently)
    assert_eq!(job.warnings.len(), 1, "{:?}", job.warnings);
    assert_eq!(job.warnings[0].location, "waypoints[0]");
    assert!(
        job.warnings[0]
            .message
            .starts_with("`motion: joint` describes"),
        "{:?}",
        job.warnings
    );
}

#[test]
fn rpy_is_fixed_axis_xyz() {
    let job = load_text(&format!(
            "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [30, 45, 60]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"
        ))
        .unwrap();
    let d = PI / 180.0;
    // source: URDF spec / REP 103, R = Rz(yaw)·Ry(pitch)·Rx(roll)
    let expected = rz(60.0 * d) * ry(45.0 * d) * rx(30.0 * d);
    assert_relative_eq!(
        matrix(&job.waypoints[0].work_T_tcp),
        expected,
        epsilon = 1e-14
    );
}

#[test]
fn units_metre_radian_apply_to_every_value() {
    let job = load_text(
            "units: {length: m, angle: rad}\nrobot: arm.urdf\nspeed: 0.05\norientation_speed: 0.5\n\
             tool: {xyz: [0, 0, 0.2], rotvec: [0, 0, 1.5707963267948966]}\n\
             start_joints: [0.1, 0.2]\n\
             limits: {tool_angular_speed: 1.0, near_limit_margin: 0.1}\n\
             sampling: {step: 0.003, angle_step: 0.01}\n\
             waypoints:\n  - {xyz: [0.4, 0, 0], rpy: [3.141592653589793, 0, 0], speed: 0.01}\n  - {xyz: [0.5, 0, 0], rpy: [3.141592653589793, 0, 0.5]}\n",
        )
        .unwrap();
    // source: SI (metres and radians pass through unchanged)
    assert_eq!(
        job.units,
        Units {
            length: LengthUnit::M,
            angle: AngleUnit::Rad
        }
    );
    assert_eq!(job.speed, 0.05);
    assert_eq!(job.orientation_speed, Some(0.5));
    assert_eq!(job.limits.tool_angular_speed, 1.0);
    assert_eq!(job.limits.near_limit_margin_angle, 0.1);
    assert_eq!(job.limits.near_limit_margin_length, 0.1);
    assert_eq!(job.sampling.step, 0.003);
    assert_eq!(job.sampling.angle_step, 0.01);
    assert_eq!(job.waypoints[0].speed, Some(0.01));
    assert_eq!(job.waypoints[0].work_T_tcp.translation.vector.x, 0.4);
    // A quarter turn about z: Rz(π/2).
    // source: Rodrigues' formula (Lynch & Park 2017, eq. 3.51)
    assert_relative_eq!(matrix(&job.tool.tip_T_tcp), rz(PI / 2.0), epsilon = 1e-15);
    // source: URDF spec / REP 103
    assert_relative_eq!(
        matrix(&job.waypoints[1].work_T_tcp),
        rz(0.5) * rx(PI),
        epsilon = 1e-15
    );
    let sj = job.start_joints.unwrap();
    assert_eq!((sj.angle_to_rad, sj.length_to_m), (1.0, 1.0));
    // A prismatic joint value stays in the length unit.
    assert_eq!(sj.to_si(&[false, true]).unwrap().as_slice(), &[0.1, 0.2]);
}

#[test]
fn mm_deg_conversion_of_mixed_start_joints() {
    let job = load_text(&format!("{HEAD}start_joints: [90, 250]\n{TWO}")).unwrap();
    let si = job.start_joints.unwrap().to_si(&[false, true]).unwrap();
    // source: SI definitions (90° = π/2 rad, 250 mm = 0.25 m)
    assert_relative_eq!(si[0], PI / 2.0, epsilon = 1e-15);
    assert_relative_eq!(si[1], 0.25, epsilon = 1e-15);
}

#[test]
fn defaults() {
    let job = load_text(&format!("{HEAD}{TWO}")).unwrap();
    // source: common practice; the defaults documented on the path-file keys:
    // 90 deg/s, scale 1, margins 5 deg / 5 mm, step 1 mm, angle step 0.5 deg, spin ±180 deg
    assert_relative_eq!(job.limits.tool_angular_speed, PI / 2.0, epsilon = 1e-15);
    assert_eq!(job.limits.joint_speed_scale, 1.0);
    assert_relative_eq!(job.limits.near_limit_margin_angle, 5.0 * PI / 180.0);
    assert_relative_eq!(job.limits.near_limit_margin_length, 0.005);
    assert_relative_eq!(job.sampling.step, 0.001);
    assert_relative_eq!(job.sampling.angle_step, 0.5 * PI / 180.0);
    assert_relative_eq!(job.tool.spin_range.0, -PI);
    assert_relative_eq!(job.tool.spin_range.1, PI);
    assert!(!job.tool.free_spin && job.tool.spin_rate.is_none());
    assert_eq!(job.tool.tip_T_tcp, Isometry3::identity());
    assert_eq!(job.base_T_work, Isometry3::identity());
    assert!(job.tip.is_none() && job.start_joints.is_none());
    assert!(job.orientation_speed.is_none());
    assert_eq!(job.config, ConfigRequest::default());
    assert_eq!(job.units, Units::default());
    assert_eq!(job.waypoint_name(0), "wp1");
    assert_eq!(job.waypoint_name(1), "wp2");
    assert_eq!(job.waypoints[1].motion, Motion::Linear);
    assert!(job.warnings.is_empty());
}

#[test]
fn margin_map_keeps_default_for_omitted_key() {
    let job = load_text(&format!(
        "{HEAD}limits: {{near_limit_margin: {{length: 2}}}}\n{TWO}"
    ))
    .unwrap();
    // source: SI definitions; the omitted angle keeps the documented 5° default
    assert_relative_eq!(job.limits.near_limit_margin_length, 0.002);
    assert_relative_eq!(job.limits.near_limit_margin_angle, 5.0 * PI / 180.0);
}

#[test]
fn overrides_win_and_use_their_own_units() {
    let ov = Overrides {
        robot: Some(PathBuf::from("/cell/other.urdf")),
        tip: Some("tool0".into()),
        units_length: Some("m".into()),
        units_angle: Some("deg".into()),
        speed: Some(0.05),
        orientation_speed: Some(30.0),
        tool: Some([0.0, 0.0, 0.2, 0.0, 0.0, 90.0]),
        work_frame: Some([1.0, 0.0, 0.5, 0.0, 0.0, 0.0]),
        start_joints: Some(vec![10.0, 20.0]),
        start_joints_seed: true,
        tool_angular_speed: Some(45.0),
        joint_speed_scale: Some(0.5),
        step: Some(0.004),
        angle_step: Some(2.0),
        tcp_acceleration: Some(1.5),
        tool_angular_acceleration: Some(180.0),
        joint_acceleration_scale: Some(0.5),
        process_speed_tolerance: Some(0.1),
        clearance: Some(0.02),
        cell: None,
    };
    let text = format!(
            "robot: arm.urdf\ntip: flange\nspeed: 20\ntool: {{xyz: [0, 0, 100], free_spin: true}}\nstart_joints: [1, 2]\n{TWO}"
        );
    let job = load_with(&text, &ov).unwrap();
    // source: SI definitions; override values are in the override units (m, deg)
    assert_eq!(job.robot, PathBuf::from("/cell/other.urdf"));
    assert_eq!(job.tip.as_deref(), Some("tool0"));
    assert_eq!(job.speed, 0.05);
    assert_relative_eq!(job.orientation_speed.unwrap(), PI / 6.0, epsilon = 1e-15);
    assert_relative_eq!(
        job.tool.tip_T_tcp.translation.vector,
        Vector3::new(0.0, 0.0, 0.2)
    );
    assert_relative_eq!(matrix(&job.tool.tip_T_tcp), rz(PI / 2.0), epsilon = 1e-15);
    assert!(job.tool.free_spin, "the file's free_spin is kept");
    assert_relative_eq!(
        job.base_T_work.translation.vector,
        Vector3::new(1.0, 0.0, 0.5)
    );
    let sj = job.start_joints.unwrap();
    assert_eq!(sj.values, vec![10.0, 20.0]);
    assert_eq!(sj.length_to_m, 1.0);
    assert_eq!(sj.origin, "--start-joints");
    assert!(sj.seed, "--start-joints-as-seed marks the joints as a seed");
    assert_relative_eq!(job.limits.tool_angular_speed, PI / 4.0, epsilon = 1e-15);
    assert_eq!(job.limits.joint_speed_scale, 0.5);
    assert_eq!(job.sampling.step, 0.004);
    assert_relative_eq!(job.sampling.angle_step, PI / 90.0, epsilon = 1e-15);
    // source: SI definitions; timing limits in the override units too (m/s², deg/s²)
    assert_eq!(job.limits.tcp_acceleration, 1.5);
    assert_relative_eq!(job.limits.tool_angular_acceleration, PI, epsilon = 1e-15);
    assert_eq!(job.limits.joint_acceleration_scale, 0.5);
    assert_eq!(job.limits.process_speed_tolerance, 0.1);
    assert_eq!(job.limits.clearance, 0.02);
    // The file's own values keep the file's units (mm): --units never rescales the file.
    assert_eq!(job.units, Units::default());
    assert_relative_eq!(job.waypoints[1].work_T_tcp.translation.vector.x, 0.1);
}

#[test]
fn timing_flags_win_over_the_file_which_is_still_checked() {
    let file = "limits: {tcp_acceleration: 500, tool_angular_acceleration: 90, \
                joint_acceleration_scale: 2, process_speed_tolerance: 0.2, clearance: 4}\n";
    let ov = Overrides {
        tcp_acceleration: Some(3000.0),
        tool_angular_acceleration: Some(360.0),
        joint_acceleration_scale: Some(0.25),
        process_speed_tolerance: Some(0.0),
        clearance: Some(7.0),
        ..Default::default()
    };
    let job = load_with(&format!("{HEAD}{file}{TWO}"), &ov).unwrap();
    // source: SI definitions (mm → m, deg → rad); override units default to mm and deg
    assert_relative_eq!(job.limits.tcp_acceleration, 3.0, epsilon = 1e-15);
    assert_relative_eq!(
        job.limits.tool_angular_acceleration,
        2.0 * PI,
        epsilon = 1e-15
    );
    assert_eq!(job.limits.joint_acceleration_scale, 0.25);
    assert_eq!(job.limits.process_speed_tolerance, 0.0);
    assert_relative_eq!(job.limits.clearance, 0.007, epsilon = 1e-15);
    // Without the flags the file's values hold.
    let job = load_text(&format!("{HEAD}{file}{TWO}")).unwrap();
    // source: SI definitions
    assert_relative_eq!(job.limits.tcp_acceleration, 0.5, epsilon = 1e-15);
    assert_relative_eq!(
        job.limits.tool_angular_acceleration,
        PI / 2.0,
        epsilon = 1e-15
    );
    assert_eq!(job.limits.joint_acceleration_scale, 2.0);
    assert_eq!(job.limits.process_speed_tolerance, 0.2);
    assert_relative_eq!(job.limits.clearance, 0.004, epsilon = 1e-15);
    // A bad file value is refused at its key even when a flag replaces it.
    let bad = format!("{HEAD}limits: {{process_speed_tolerance: 1}}\n{TWO}");
    let (location, message) = input_err(load_with(&bad, &ov));
    // source: common practice (the file stays valid on its own)
    assert_eq!(location, "limits.process_speed_tolerance");
    assert!(message.contains("not including) 1"), "{message}");
}

#[test]
fn bad_override_values_are_usage_errors() {
    let text = format!("{HEAD}{TWO}");
    let cases: Vec<(Overrides, &str, &str)> = vec![
        (
            Overrides {
                speed: Some(-1.0),
                ..Default::default()
            },
            "--speed",
            "greater than 0",
        ),
        (
            Overrides {
                joint_speed_scale: Some(2.0),
                ..Default::default()
            },
            "--joint-speed-scale",
            "above 1",
        ),
        (
            Overrides {
                units_length: Some("cm".into()),
                ..Default::default()
            },
            "--units",
            "mm or m",
        ),
        (
            Overrides {
                units_angle: Some("grad".into()),
                ..Default::default()
            },
            "--units",
            "deg or rad",
        ),
        (
            Overrides {
                tool: Some([0.0, f64::NAN, 0.0, 0.0, 0.0, 0.0]),
                ..Default::default()
            },
            "--tool",
            "finite",
        ),
        (
            Overrides {
                start_joints: Some(vec![]),
                ..Default::default()
            },
            "--start-joints",
            "one value per joint",
        ),
        (
            Overrides {
                step: Some(f64::INFINITY),
                ..Default::default()
            },
            "--step",
            "finite",
        ),
        (
            Overrides {
                tip: Some(" ".into()),
                ..Default::default()
            },
            "--tip",
            "empty",
        ),
    ];
    for (ov, option, phrase) in cases {
        let (o, m) = usage_err(load_with(&text, &ov));
        assert_eq!(o, option);
        assert!(m.contains(phrase), "`{phrase}` not in `{m}`");
    }
}

#[test]
fn orientation_forms_are_exclusive() {
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], quat: [1, 0, 0, 0]}}\n"),
            "waypoints[1]",
            &["rpy and quat", "exactly one orientation"],
        );
    assert_err(
        &format!(
            "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"
        ),
        "waypoints[0]",
        &["no orientation", "rpy", "quat", "rotvec"],
    );
    assert_err(
        &format!("{HEAD}tool: {{xyz: [0, 0, 1], rpy: [0, 0, 0], rotvec: [0, 0, 0]}}\n{TWO}"),
        "tool",
        &["rpy and rotvec"],
    );
    assert_err(
        &format!("{HEAD}work_frame: {{xyz: [0, 0, 1], quat: [0, 0, 0, 0]}}\n{TWO}"),
        "work_frame.quat",
        &["zero length"],
    );
    // Tool and work frame without orientation are identity rotations.
    let job = load_text(&format!(
        "{HEAD}tool: {{xyz: [0, 0, 50]}}\nwork_frame: {{xyz: [1, 2, 3]}}\n{TWO}"
    ))
    .unwrap();
    assert_eq!(job.tool.tip_T_tcp.rotation.angle(), 0.0);
    assert_eq!(job.base_T_work.rotation.angle(), 0.0);
}

#[test]
fn quaternion_checks() {
    let wp = |q: &str| {
        format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], quat: {q}}}\n")
    };
    assert_err(
        &wp("[0, 0, 0, 0]"),
        "waypoints[1].quat",
        &[
            "the quaternion [0, 0, 0, 0] has zero length",
            "give a unit quaternion [w, x, y, z]",
        ],
    );
    assert_err(
        &wp("[1.0e-12, 0, 0, 0]"),
        "waypoints[1].quat",
        &["too short"],
    );
    assert_err(
        &wp("[.nan, 0, 0, 1]"),
        "waypoints[1].quat",
        &["NaN", "finite"],
    );
    let job = load_text(&wp("[2, 0, 0, 0]")).unwrap();
    // source: common practice (normalising by the Euclidean norm: [2,0,0,0] → identity)
    assert_relative_eq!(job.waypoints[1].work_T_tcp.rotation.angle(), 0.0);
    assert_eq!(job.warnings.len(), 1);
    let w = &job.warnings[0];
    assert_eq!(w.location, "waypoints[1].quat");
    assert_eq!(w.waypoint, Some(1));
    assert!(w.message.contains("length 2") && w.message.contains("normalised"));
    // Within 1e-6 of unit length: no warning.
    let job = load_text(&wp("[1.0000001, 0, 0, 0]")).unwrap();
    assert!(job.warnings.is_empty());
}

#[test]
fn non_finite_numbers_are_errors() {
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, .inf, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].xyz",
            &["inf", "finite"],
        );
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, .nan, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].rpy",
            &["NaN"],
        );
    assert_err(
        &format!("robot: a.urdf\nspeed: .inf\n{TWO}"),
        "speed",
        &["finite", "mm/s"],
    );
    assert_err(
        &format!("{HEAD}start_joints: [0, .nan]\n{TWO}"),
        "start_joints",
        &["finite"],
    );
    assert_err(
        &format!("{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_range: [-.inf, 10]}}\n{TWO}"),
        "tool.spin_range",
        &["finite"],
    );
}

#[test]
fn settings_must_be_in_range() {
    assert_err(
        &format!("robot: a.urdf\nspeed: 0\n{TWO}"),
        "speed",
        &["greater than 0", "mm/s"],
    );
    assert_err(
        &format!("robot: a.urdf\n{TWO}"),
        "speed",
        &["add `speed:", "--speed"],
    );
    assert_err(
        &format!("{HEAD}orientation_speed: -5\n{TWO}"),
        "orientation_speed",
        &["greater than 0", "deg/s"],
    );
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], speed: 0}}\n"),
            "waypoints[1].speed",
            &["greater than 0"],
        );
    assert_err(
        &format!("{HEAD}limits: {{tool_angular_speed: 0}}\n{TWO}"),
        "limits.tool_angular_speed",
        &["greater than 0"],
    );
    assert_err(
        &format!("{HEAD}limits: {{joint_speed_scale: 1.5}}\n{TWO}"),
        "limits.joint_speed_scale",
        &["above 1", "(0, 1]"],
    );
    assert_err(
        &format!("{HEAD}limits: {{joint_speed_scale: 0}}\n{TWO}"),
        "limits.joint_speed_scale",
        &["greater than 0"],
    );
    assert_err(
        &format!("{HEAD}limits: {{near_limit_margin: -1}}\n{TWO}"),
        "limits.near_limit_margin",
        &["0 or more"],
    );
    assert_err(
        &format!("{HEAD}limits: {{near_limit_margin: {{angle: -1}}}}\n{TWO}"),
        "limits.near_limit_margin.angle",
        &["0 or more", "deg"],
    );
    assert_err(
        &format!("{HEAD}sampling: {{step: 0}}\n{TWO}"),
        "sampling.step",
        &["greater than 0", "mm"],
    );
    assert_err(
        &format!("{HEAD}sampling: {{angle_step: -0.1}}\n{TWO}"),
        "sampling.angle_step",
        &["greater than 0"],
    );
    assert_err(
        &format!("{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_range: [10, -10]}}\n{TWO}"),
        "tool.spin_range",
        &["min > max"],
    );
    assert_err(
        &format!("{HEAD}tool: {{xyz: [0, 0, 1], free_spin: true, spin_rate: 0}}\n{TWO}"),
        "tool.spin_rate",
        &["greater than 0"],
    );
    assert_err(
        &format!("{HEAD}start_joints: []\n{TWO}"),
        "start_joints",
        &["empty"],
    );
    assert_err(&format!("{HEAD}tip: ''\n{TWO}"), "tip", &["empty"]);
    assert_err(&format!("robot: ''\nspeed: 1\n{TWO}"), "robot", &["empty"]);
    // joint_speed_scale exactly 1 is allowed.
    assert!(load_text(&format!("{HEAD}limits: {{joint_speed_scale: 1}}\n{TWO}")).is_ok());
}

#[test]
fn syntax_and_schema_errors_carry_the_line() {
    assert_line_err(
        &format!("{HEAD}speeed: 3\n{TWO}"),
        "line 3 column 1",
        &[
            "unknown field `speeed`",
            "`speed`",
            "`waypoints`",
            "spelling",
        ],
    );
    assert_line_err(
            &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], colour: red}}\n"),
            "line 5 column",
            &["unknown field `colour`", "`rotvec`"],
        );
    let (loc, _) = input_err(load_text(&format!(
            "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0], colour: red}}\n"
        )));
    assert!(loc.ends_with("waypoints[1]"), "{loc}");
    assert_line_err(
        &format!("robot: a.urdf\nspeed: fast\n{TWO}"),
        "line 2 column 8, speed",
        &["invalid type", "expected a number"],
    );
    assert_line_err(
        &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0], rpy: [0, 0, 0]}}\n"),
        "line 4 column 11, waypoints[0].xyz",
        &["invalid length 2", "length 3"],
    );
    assert_line_err(
        &format!("units: {{length: cm}}\n{HEAD}{TWO}"),
        "line 1 column 17, units.length",
        &["unknown variant `cm`", "`mm` or `m`"],
    );
    assert_line_err(
        &format!("units: {{angle: grad}}\n{HEAD}{TWO}"),
        "line 1",
        &["`deg` or `rad`"],
    );
    assert_line_err(
        &format!("{HEAD}config: {{elbow: sideways}}\n{TWO}"),
        "line 3",
        &["`up` or `down`"],
    );
    assert_line_err(
        &format!("{HEAD}limits: {{near_limit_margin: {{angle: 3, lenght: 2}}}}\n{TWO}"),
        "line 3",
        &["unknown field `lenght`", "`length`"],
    );
    assert_line_err(
        &format!("{HEAD}speed: 30\n{TWO}"),
        "line 1",
        &["duplicate field `speed`", "once"],
    );
    assert_line_err(
        &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0], process: yes}}\n"),
        "line 4",
        &["expected a boolean"],
    );
    assert_line_err(
        &format!("{HEAD}waypoints: 5\n"),
        "line 3",
        &["a list of waypoints, or the name of a CSV"],
    );
    assert_line_err(HEAD, "line 1", &["missing field `waypoints`"]);
    assert_line_err(
        "- a\n- b\n",
        "line 1",
        &["expected a path file: a YAML mapping"],
    );
    assert_line_err(&format!("{HEAD}waypoints: [\n"), "line", &["YAML syntax"]);
}

#[test]
fn waypoint_count_and_names() {
    assert_err(
        &format!("{HEAD}waypoints: []\n"),
        "waypoints",
        &["has 0 waypoints", "at least two"],
    );
    assert_err(
        &format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n"),
        "waypoints",
        &["has 1 waypoint:", "at least two"],
    );
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: a, xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: b, xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: a, xyz: [2, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[2]",
            &["`a`", "waypoints[0]", "waypoints[2]", "its own name"],
        );
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: wp2, xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[1]",
            &["`wp2`", "waypoints[0]", "no name", "default"],
        );
    assert_err(
            &format!("{HEAD}waypoints:\n  - {{name: '', xyz: [0, 0, 0], rpy: [0, 0, 0]}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n"),
            "waypoints[0].name",
            &["empty"],
        );
}

#[test]
fn turn_in_place_needs_orientation_speed() {
    let wps = |motion: &str| {
        format!("waypoints:\n  - {{name: a, xyz: [5, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: b, xyz: [5, 0, 0], rpy: [0, 0, 90]{motion}}}\n")
    };
    assert_err(
        &format!("{HEAD}{}", wps("")),
        "waypoints[1]",
        &[
            "`a` to `b`",
            // source: URDF spec / REP 103 (yaw 0° → 90° about the same z axis is a 90° turn)
            "turns the tool by 90 deg",
            "set orientation_speed or move the TCP",
        ],
    );
    assert!(load_text(&format!("{HEAD}orientation_speed: 30\n{}", wps(""))).is_ok());
    assert!(load_text(&format!("{HEAD}{}", wps(", motion: joint"))).is_ok());
    let ov = Overrides {
        orientation_speed: Some(30.0),
        ..Default::default()
    };
    assert!(load_with(&format!("{HEAD}{}", wps("")), &ov).is_ok());
}

#[test]
fn warnings_for_repeats_and_ignored_settings() {
    let job = load_text(&format!(
            "{HEAD}tool: {{xyz: [0, 0, 1], spin_range: [-90, 90], spin_rate: 10}}\nwaypoints:\n  - {{xyz: [0, 0, 0], rpy: [0, 0, 0], speed: 5}}\n  - {{xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: again, xyz: [1, 0, 0], quat: [1, 0, 0, 0]}}\n"
        ))
        .unwrap();
    let find = |loc: &str| {
        job.warnings
            .iter()
            .find(|w| w.location == loc)
            .unwrap_or_else(|| panic!("no warning at {loc}: {:?}", job.warnings))
    };
    let w = find("waypoints[2]");
    assert_eq!(w.waypoint, Some(2));
    assert!(w.message.contains("`again` repeats the pose of `wp2`"));
    assert_eq!(find("waypoints[0]").waypoint, Some(0));
    assert!(find("tool.spin_range").message.contains("free_spin: true"));
    assert!(find("tool.spin_rate").message.contains("free_spin: true"));
    assert_eq!(job.warnings.len(), 4);
}

#[test]
fn robot_resolution() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::create_dir(dir.path().join("paths")).unwrap();
    let p = dir.path().join("paths/job.yaml");
    std::fs::write(&p, format!("robot: ../robots/r.urdf\nspeed: 1\n{TWO}")).unwrap();
    let job = load(&p, &Overrides::default()).unwrap();
    assert_eq!(job.robot, dir.path().join("paths/../robots/r.urdf"));
    let ov = Overrides {
        robot: Some(PathBuf::from("given.urdf")),
        ..Default::default()
    };
    assert_eq!(load(&p, &ov).unwrap().robot, PathBuf::from("given.urdf"));
    assert_err(
        &format!("speed: 1\n{TWO}"),
        "robot",
        &["add `robot:", "--robot"],
    );
    let job = load_with(&format!("speed: 1\n{TWO}"), &ov).unwrap();
    assert_eq!(job.robot, PathBuf::from("given.urdf"));
}

#[test]
fn unusable_files() {
    let dir = tempfile::tempdir().unwrap();
    let none = Overrides::default();
    let (loc, msg) = input_err(load(&dir.path().join("missing.yaml"), &none));
    assert_eq!(loc, "file");
    assert!(msg.contains("does not exist"), "{msg}");
    let (_, msg) = input_err(load(dir.path(), &none));
    assert!(msg.contains("is a folder"), "{msg}");
    let (_, msg) = input_err(load(&dir.path().join("missing.csv"), &none));
    assert!(msg.contains("CSV waypoint file does not exist"), "{msg}");
    for empty in ["", "   \n\n", "# only a comment\n---\n"] {
        assert_err(empty, "file", &["is empty", "waypoints:"]);
    }
    let p = dir.path().join("garbage.yaml");
    std::fs::write(&p, [0x7f, 0x45, 0x4c, 0x46, 0xff, 0xfe, 0x00, 0x80, 0x81]).unwrap();
    let (loc, msg) = input_err(load(&p, &none));
    // source: common practice (bytes 0-3 are ASCII on line 1, so the bad byte 4 is column 5)
    assert_eq!(loc, "line 1 column 5");
    assert!(msg.contains("not UTF-8"), "{msg}");
    // Valid UTF-8 but control characters: refused at the first one, U+0001 at column 1.
    std::fs::write(&p, "\u{1}\u{2}\u{3}robot\u{0}").unwrap();
    let (loc, msg) = input_err(load(&p, &none));
    assert_eq!(loc, "line 1 column 1", "{msg}");
    assert!(msg.contains("U+0001"), "{msg}");
}

#[test]
fn oversized_files_are_refused_before_reading() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["big.yaml", "big.csv"] {
        let p = dir.path().join(name);
        // A sparse file: no disk space is used, only the size is set.
        let f = std::fs::File::create(&p).unwrap();
        f.set_len(MAX_FILE_BYTES + 1).unwrap();
        let start = Instant::now();
        let ov = Overrides {
            robot: Some("r.urdf".into()),
            speed: Some(1.0),
            ..Default::default()
        };
        let (loc, msg) = input_err(load(&p, &ov));
        assert!(start.elapsed() < Duration::from_secs(1));
        assert_eq!(loc, "file");
        assert!(
            msg.contains("536870913 bytes") && msg.contains("512 MiB"),
            "{msg}"
        );
    }
}

#[test]
fn alias_bomb_fails_fast() {
    // Nine levels of nine aliases would expand to 9^9 ≈ 3.9e8 scalars. Every key of a path
    // file has a concrete type, so the reader stops at the first alias of the wrong shape
    // (or at the unknown key) instead of expanding it; serde_yaml's own repetition limit
    // is a second line of defence that this schema never reaches.
    let mut bomb = String::from("[0, 0, 0, &a [lol, lol, lol, lol, lol, lol, lol, lol, lol]");
    let names = ["a", "b", "c", "d", "e", "f", "g", "h", "i"];
    for w in names.windows(2) {
        let refs = vec![format!("*{}", w[0]); 9].join(", ");
        bomb.push_str(&format!(", &{} [{refs}]", w[1]));
    }
    bomb.push_str(", *i]");
    let texts = [
        format!("{HEAD}waypoints:\n  - {{xyz: {bomb}, rpy: [0, 0, 0]}}\n"),
        format!("{HEAD}bomb: {bomb}\n{TWO}"),
        format!("{HEAD}start_joints: {bomb}\n{TWO}"),
        format!("{HEAD}waypoints: {bomb}\n"),
    ];
    let expected = [
        "invalid length 13",
        "unknown field `bomb`",
        "invalid type: sequence",
        "invalid type: integer",
    ];
    for (text, phrase) in texts.iter().zip(expected) {
        let start = Instant::now();
        let (loc, msg) = input_err(load_text(text));
        let took = start.elapsed();
        assert!(took < Duration::from_secs(5), "took {took:?}");
        assert!(loc.starts_with("line "), "{loc}");
        assert!(msg.contains(phrase), "`{phrase}` not in `{msg}`");
    }
}

#[test]
fn deep_nesting_fails_fast_without_stack_overflow() {
    for depth in [10_000, 200_000] {
        let seqs = format!("{}{}", "[".repeat(depth), "]".repeat(depth));
        let maps = format!("{}0{}", "{a: ".repeat(depth), "}".repeat(depth));
        // Quoted closing brackets must not hide real nesting from the pre-scan.
        let tricky = format!("{}{}", "[ \"]\", ".repeat(depth), "]".repeat(depth));
        let texts = [
            (
                format!("{HEAD}waypoints:\n  - {{xyz: [0, 0, 0, {seqs}], rpy: [0, 0, 0]}}\n"),
                4,
            ),
            (format!("{HEAD}waypoints: {seqs}\n"), 3),
            (format!("{HEAD}tool: {maps}\n{TWO}"), 3),
            (format!("{HEAD}{TWO}extra: {maps}\n"), 6),
            (format!("{HEAD}waypoints: {tricky}\n"), 3),
            (seqs.clone(), 1),
        ];
        for (text, line) in &texts {
            let start = Instant::now();
            let (loc, msg) = input_err(load_text(text));
            let took = start.elapsed();
            assert!(took < Duration::from_secs(2), "depth {depth} took {took:?}");
            assert_eq!(loc, format!("line {line}"), "{msg}");
            assert!(msg.contains("65 levels deep"), "{msg}");
        }
    }
    // Brackets in quotes, comments and mid-text are not nesting.
    let many = "[".repeat(100);
    let job = load_text(&format!(
            "{HEAD}# {many}\nwaypoints:\n  - name: a{many}\n    xyz: [0, 0, 0]\n    rpy: [0, 0, 0]\n  - {{name: 'it''s {many}', xyz: [1, 0, 0], rpy: [0, 0, 0]}}\n  - {{name: \"\\\"{many}\", xyz: [2, 0, 0], rpy: [0, 0, 0]}}\n"
        ))
        .unwrap();
    assert_eq!(job.waypoint_name(0), format!("a{many}"));
    assert_eq!(job.waypoint_name(1), format!("it's {many}"));
    assert_eq!(job.waypoint_name(2), format!("\"{many}"));
    // 64 levels pass the pre-scan and reach the reader, which reports the wrong shape.
    let deep64 = format!("{}{}", "[".repeat(63), "]".repeat(63));
    let (_, msg) = input_err(load_text(&format!("{HEAD}waypoints: [{deep64}]\n")));
    assert!(msg.contains("invalid type"), "{msg}");
}

#[test]
fn in_memory_text_loads_like_the_file() {
    // source: common practice (load = read the file, then load_bytes on its contents)
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("job.yaml");
    let text = format!("{HEAD}tool: {{xyz: [0, 0, 100], rpy: [0, 0, 0]}}\n{TWO}");
    std::fs::write(&p, &text).unwrap();
    let a = load(&p, &Overrides::default()).unwrap();
    let b = load_bytes(text.as_bytes(), &p, &Overrides::default()).unwrap();
    assert_eq!(a.robot, b.robot);
    assert_eq!(a.waypoints.len(), b.waypoints.len());
    assert_eq!(a.tool.tip_T_tcp, b.tool.tip_T_tcp);
    // The extension picks the format for in-memory text too.
    let ov = Overrides {
        robot: Some(PathBuf::from("arm.urdf")),
        speed: Some(20.0),
        ..Default::default()
    };
    let csv = b"x,y,z,roll,pitch,yaw\n0,0,0,180,0,0\n100,0,0,180,0,0\n";
    let job = load_bytes(csv, Path::new("seam.CSV"), &ov).unwrap();
    assert_eq!(job.waypoints.len(), 2);
}
