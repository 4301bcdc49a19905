//! `armpath fix` and `armpath place` on purpose-built paths whose fixes are known in advance
//! (derivation beside each test); every amended path is re-checked by `armpath check`.
#![allow(non_snake_case)]

mod common;
use common::*;
use std::path::Path;

/// Run `armpath ARGS`; returns (exit code, stdout, stderr).
fn run(args: &[&str]) -> (i32, String, String) {
    let out = armpath().args(args).output().unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn read_json(p: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(p).unwrap()).unwrap()
}

/// The start pose of the roll tests: arm in its vertical plane (j1 = j4 = 0), wrist bent
/// 45°, j6 near zero.
const Q0: [f64; 6] = [0.0, 30.0, -20.0, 0.0, 45.0, 0.2];

/// A 10 mm move along base x while the tool turns 90° about its own axis, then (optionally)
/// 10 mm more without turning; both segments marked `process` when asked.
/// The tool and joint accelerations are set out of the way (the tests are about speeds): the
/// TCP's 2000 mm/s² alone ramps u at 200 /s², so each segment cruises over its middle half
/// at 100 mm/s, and still at 46.6 mm/s.
fn roll_line(second: bool, process: bool) -> String {
    let p = if process { ", process: true" } else { "" };
    let mut y = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 100\n\
         limits: {{tool_angular_speed: 2000, joint_speed_scale: 1, tool_angular_acceleration: 100000, \
         joint_acceleration_scale: 1000}}\n\
         waypoints:\n  - {{name: a, {}}}\n  - {{name: b, {}{p}}}\n",
        arm6(),
        arm6_pose(&Q0, [0.0; 3], 0.0),
        arm6_pose(&Q0, [10.0, 0.0, 0.0], 90.0)
    );
    if second {
        y += &format!(
            "  - {{name: c, {}{p}}}\n",
            arm6_pose(&Q0, [20.0, 0.0, 0.0], 90.0)
        );
    }
    y
}

#[test]
fn roll_too_fast_for_j6_passes_at_the_speed_from_j6s_limit() {
    // Derivation: with j1 = j4 = 0 every other joint axis but j6 is parallel to base y, so a
    // move in the arm's vertical plane keeping the tool axis fixed leaves the product of the
    // first five joint rotations constant, and turning the tool about its own axis (the
    // flange axis, on which the tool sits) turns j6 alone, one to one. The segment turns 90°
    // in 10 mm; at 100 mm/s that is 0.1 s, so j6 runs at 900 deg/s against its 420 deg/s:
    // ratio 900/420 = 2.1429, largest speed 100 × 420/900 = 46.667 mm/s, proposed (rounded
    // down to 0.1 mm/s) 46.6 mm/s. j2, j3 and j5 move at about 0.1 m/s / 0.6 m ≈ 10 deg/s,
    // far inside their limits, so j6 sets the speed.
    // source: robots/arm6.urdf (j6 velocity 7.330383 rad/s = 420 deg/s, joint axes);
    // common practice (speed = angle / time at constant rate)
    let (dir, file) = path_file(&roll_line(false, false));
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 1, "{before:#}");
    let out = dir.path().join("fixed.yaml");
    let json = dir.path().join("fix.json");
    let (code, stdout, stderr) = run(&[
        "fix",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stdout}{stderr}");
    assert!(
        stdout.contains("before") && stdout.contains("after"),
        "{stdout}"
    );
    let r = read_json(&json);
    let s = &r["speeds"][0];
    assert_eq!(s["limited_by"], "j6", "{r:#}");
    assert!((f64_of(&s["ratio"]) - 900.0 / 420.0).abs() < 1e-3, "{s:#}");
    assert!((f64_of(&s["max_speed"]) - 100.0 * 420.0 / 900.0).abs() < 0.05);
    assert!((f64_of(&s["proposed"]) - 46.6).abs() < 1e-9, "{s:#}");
    assert_eq!(r["before"]["verdict"], "fail");
    assert_eq!(r["after"]["errors"], 0);
    // The amended file, re-checked by `check`, passes with j6 just inside its limit.
    let (code2, after) = check_json(&out, &[]);
    assert_eq!(code2, 0, "{after:#}");
    assert!(findings(&after, "joint_speed").is_empty(), "{after:#}");
    assert_eq!(after["summary"]["verdict"], "pass", "{after:#}");
    let ratio = f64_of(&after["summary"]["max_joint_speed_ratio"]);
    assert!(
        (ratio - 46.6 / (100.0 * 420.0 / 900.0)).abs() < 1e-3,
        "j6 at 46.6 mm/s: {ratio}"
    );
}

#[test]
fn a_process_run_keeps_one_speed() {
    // Derivation: as above the first segment allows 46.667 mm/s (j6); the second moves 10 mm
    // without turning, its joints far below their limits at 100 mm/s. Both are process
    // segments, so the run keeps one speed: the smallest allowed, 46.6 mm/s, on both.
    // source: robots/arm6.urdf; common practice (constant travel speed on a process seam)
    let (dir, file) = path_file(&roll_line(true, true));
    let out = dir.path().join("fixed.yaml");
    let json = dir.path().join("fix.json");
    let (code, stdout, stderr) = run(&[
        "fix",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stdout}{stderr}");
    let r = read_json(&json);
    assert!(f64_of(&r["speeds"][1]["ratio"]) < 1.0, "{r:#}");
    for k in 0..2 {
        assert!(
            (f64_of(&r["speeds"][k]["proposed"]) - 46.6).abs() < 1e-9,
            "{r:#}"
        );
    }
    let (code2, after) = check_json(&out, &[]);
    assert_eq!(code2, 0, "{after:#}");
    let text = std::fs::read_to_string(&out).unwrap();
    assert_eq!(text.matches("speed: 46.6").count(), 2, "{text}");
}

#[test]
fn beyond_reach_passes_once_the_work_frame_moves_the_derived_distance_closer() {
    // Derivation: the nozzle points straight down along a line at z_tcp = 0.5 m from x = 1.1
    // to 1.8 m (the near end stays well inside the reach after every shift of the grid; at
    // this height the stretched arm needs j5 ≈ 105°, clear of its 125° limit). The wrist centre sits L_tool + c4 above the TCP and at most
    // c2 + sqrt(a2² + c3²) from the shoulder point (a1, c1), so the last reachable x is
    //   x_max = a1 + sqrt((c2 + sqrt(a2² + c3²))² − (z_tcp + L_tool + c4 − c1)²) ≈ 1.3976 m,
    // and the path runs only when the work frame moves at least 1.8 − x_max ≈ 402.4 mm
    // towards the robot (−x). The grid's placements at or beyond that shift must be free of
    // errors, those short of it must fail. 20 mm/s keeps the joint speeds near the stretched
    // elbow low.
    // source: robots/arm6.urdf geometry; planar two-link reach (Craig 2005, ch. 4 workspace)
    let (z_tcp, l_tool) = (0.5, 0.18);
    let arm = C2 + (A2 * A2 + C3 * C3).sqrt();
    let dz = z_tcp + l_tool + C4 - C1;
    let x_max = A1 + (arm * arm - dz * dz).sqrt();
    let needed_mm = (1.8 - x_max) * 1e3;
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nwork_frame: {{xyz: [1100, 0, 500], rpy: [0, 0, 0]}}\nspeed: 20\n\
         waypoints:\n  - {{name: near, xyz: [0, 0, 0], rpy: [180, 0, 0]}}\n  - {{name: far, xyz: [700, 0, 0], rpy: [180, 0, 0]}}\n",
        arm6()
    );
    let (dir, file) = path_file(&yaml);
    let from = -((needed_mm / 10.0).ceil() * 10.0) - 30.0;
    let to = -((needed_mm / 10.0).floor() * 10.0) + 30.0;
    let csv = dir.path().join("grid.csv");
    let map = dir.path().join("grid.svg");
    let x = format!("{from}:{to}:10");
    let (code, stdout, stderr) = run(&[
        "place",
        file.to_str().unwrap(),
        "--x",
        &x,
        "--y",
        "-20:20:20",
        "--csv",
        csv.to_str().unwrap(),
        "--map",
        map.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stdout}{stderr}");
    let text = std::fs::read_to_string(&csv).unwrap();
    let mut rows = 0;
    let mut closest_passing = f64::NEG_INFINITY;
    for line in text.lines().skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let dx: f64 = f[0].parse().unwrap();
        let errors: usize = f[5].parse().unwrap();
        assert!(
            (dx + needed_mm).abs() > 1.0,
            "grid too close to the boundary"
        );
        if dx < -needed_mm {
            assert_eq!(errors, 0, "dx {dx} is beyond the needed shift: {line}");
            closest_passing = closest_passing.max(dx);
        } else {
            assert!(errors > 0, "dx {dx} is short of the needed shift: {line}");
            assert_eq!(f[4], "fail");
        }
        rows += 1;
    }
    assert_eq!(rows, (((to - from) / 10.0).round() as usize + 1) * 3);
    let svg = std::fs::read_to_string(&map).unwrap();
    assert!(svg.starts_with("<svg") && svg.contains("pass (ring)"));
    // Re-check the closest passing placement with `check`.
    let wf = format!("{},0,500,0,0,0", 1100.0 + closest_passing);
    let (code2, report) = check_json(&file, &["--work-frame", &wf]);
    assert_eq!(code2, 0, "{report:#}");
    assert!(findings(&report, "unreachable").is_empty());
}

#[test]
fn invalid_grids_are_usage_errors() {
    // source: common practice (usage errors exit 2 with the option named)
    let file = repo("paths/bracket_fillet.yaml");
    for (x, what) in [
        ("0:100", "2 parts"),
        ("0:100:0", "step that is not positive"),
        ("100:0:10", "larger to a smaller"),
        ("a:1:1", "not a finite number"),
    ] {
        let (code, _out, err) = run(&["place", file.to_str().unwrap(), "--x", x, "--y", "0"]);
        assert_eq!(code, 2, "{x}: {err}");
        assert!(err.contains("--x") && err.contains(what), "{x}: {err}");
    }
}

#[test]
fn a_line_through_a_wrist_singularity_passes_after_a_modest_tool_spin() {
    // Derivation: at the zero joint pose of arm6 the forearm (axis 4) and the flange axis
    // (axis 6) both point along base +x: θ5 = 0, a wrist singularity (Siciliano et al. 2009,
    // §3.3). The tool here is tilted 20° about its y axis on the flange, 120 mm out, so the
    // TCP at the zero pose is at (1050, 0, 930) mm with rpy (180, 70, 180) (the same pose as
    // `armpath fk robots/arm6.urdf --joints 0,0,0,0,0,0 --tool 0,0,120,0,20,0`). The line
    // runs through that pose along y at constant orientation, so at its midpoint the arm is
    // exactly singular and the check fails (the wrist has to turn half a turn at once).
    // Spinning the tool by φ about its own axis swings the flange axis round a 20° cone
    // about the tool axis: the angle between flange axis and base x becomes
    // α = acos(cos²20° + sin²20°·cos φ) (spherical law of cosines), e.g. 28° at φ = 90°, so a
    // spin within ±90° already keeps the wrist bent by tens of degrees along the whole line.
    // source: robots/arm6.urdf geometry; Siciliano et al. 2009 §3.3 (wrist singularity);
    // spherical law of cosines (common practice)
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 120], rpy: [0, 20, 0], free_spin: true}}\nspeed: 25\n\
         waypoints:\n  - {{name: left, xyz: [1050, -200, 930], rpy: [180, 70, 180]}}\n  - {{name: right, xyz: [1050, 200, 930], rpy: [180, 70, 180]}}\n",
        arm6()
    );
    let (dir, file) = path_file(&yaml);
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 1, "{before:#}");
    assert!(f64_of(&before["summary"]["min_singularity"]) < 1e-3);
    let out = dir.path().join("fixed.yaml");
    let json = dir.path().join("fix.json");
    let (code, stdout, stderr) = run(&[
        "fix",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stdout}{stderr}");
    let r = read_json(&json);
    let spin = &r["spin"];
    assert_eq!(spin["applied"], true, "{r:#}");
    for k in ["min_spin", "max_spin"] {
        assert!(
            f64_of(&spin[k]).abs() <= 90.0 + 1e-9,
            "modest spin: {spin:#}"
        );
    }
    assert!(
        f64_of(&spin["min_spin"]) != 0.0 || f64_of(&spin["max_spin"]) != 0.0,
        "a spin was needed: {spin:#}"
    );
    // Re-checked by `check`: passes, the wrist well away from the singularity.
    let (code2, after) = check_json(&out, &[]);
    assert_eq!(code2, 0, "{after:#}");
    assert!(findings(&after, "singularity").is_empty(), "{after:#}");
    assert!(f64_of(&after["summary"]["min_singularity"]) > 0.01);
    let text = std::fs::read_to_string(&out).unwrap();
    let yaml: serde_yaml::Mapping = serde_yaml::from_str(&text).unwrap();
    assert!(yaml["config"]["shoulder"].is_string(), "{text}");
}

#[test]
fn without_free_spin_fix_asks_for_a_configuration_that_runs_the_path() {
    // The demo panel raster, its spray gun declared not free to spin and the first pose
    // forced onto the noflip wrist: the check follows that wrist and fails. `fix` must ask
    // for a configuration that its own configuration table lists as running the whole path,
    // write it as `config:`, and the amended file must pass `check`.
    // source: internal consistency of the check's configuration table (no independent value)
    let text = std::fs::read_to_string(repo("paths/panel_raster.yaml"))
        .unwrap()
        .replace("robot: ../robots/arm6.urdf", &format!("robot: {}", arm6()))
        .replace(", free_spin: true", "")
        .replace("speed: 300\n", "speed: 300\nconfig: {wrist: noflip}\n");
    let (dir, file) = path_file(&text);
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 1, "{before:#}");
    let out = dir.path().join("fixed.yaml");
    let json = dir.path().join("fix.json");
    let (code, stdout, stderr) = run(&[
        "fix",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{stdout}{stderr}");
    let r = read_json(&json);
    let chosen = r["configuration"]["chosen"].as_str().unwrap().to_string();
    let running: Vec<&str> = before["configurations"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|row| row["runs"] == true)
        .map(|row| row["config"].as_str().unwrap())
        .collect();
    assert!(
        running.contains(&chosen.as_str()),
        "{chosen} not in {running:?}"
    );
    assert!(r["spin"].is_null());
    let (code2, after) = check_json(&out, &[]);
    assert_eq!(code2, 0, "{after:#}");
    assert_eq!(after["path"]["start"]["config"], chosen.as_str());
}
