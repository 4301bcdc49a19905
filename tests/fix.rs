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

/// `armpath fix FILE --out DIR/STEM.yaml --json DIR/STEM.json`, which must exit 0; returns
/// the amended file's path (written or not), the JSON report and the terminal text.
fn fix_into(
    file: &Path,
    dir: &Path,
    stem: &str,
) -> (std::path::PathBuf, serde_json::Value, String) {
    let (code, out, json, stdout) = fix_any(file, dir, stem);
    assert_eq!(code, 0, "{stdout}");
    (out, json, stdout)
}

/// As [`fix_into`], whatever the exit code (1 when the path still fails); returns the code
/// too. Standard error is appended to the terminal text.
fn fix_any(
    file: &Path,
    dir: &Path,
    stem: &str,
) -> (i32, std::path::PathBuf, serde_json::Value, String) {
    let out = dir.join(format!("{stem}.yaml"));
    let json = dir.join(format!("{stem}.json"));
    let (code, stdout, stderr) = run(&[
        "fix",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
        json.to_str().unwrap(),
    ]);
    (code, out, read_json(&json), stdout + &stderr)
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
    let (out, r, stdout) = fix_into(&file, dir.path(), "fixed");
    assert!(
        stdout.contains("before") && stdout.contains("after"),
        "{stdout}"
    );
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
    let (out, r, _) = fix_into(&file, dir.path(), "fixed");
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
    let (out, r, _) = fix_into(&file, dir.path(), "fixed");
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
    let (out, r, _) = fix_into(&file, dir.path(), "fixed");
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

/// A bead drawn as a polyline in front of the demo arm, nozzle down: from `home` a straight
/// travel move to `above`, a joint move down to the bead start `p0`, then twelve process
/// segments along a 100 mm arc (7.5° apart, chords of 13.08 mm) and a 4 mm tail `p13` that
/// turns 7.5° further, at 20 mm/s; then straight up 50 mm to `leave` and across to `last`.
/// TCP acceleration 500 mm/s². With `kink`, a 4 mm travel step along +x at 1000 mm/s comes
/// between `leave` and `last` (also at 1000 mm/s). Returns the YAML and the waypoints'
/// (name, x, y, z) in mm.
fn polyline_bead(kink: bool) -> (String, Vec<(String, [f64; 3])>) {
    let mut pts: Vec<(String, [f64; 3])> = vec![
        ("home".into(), [-100.0, -200.0, 100.0]),
        ("above".into(), [0.0, -100.0, 50.0]),
    ];
    let arc = |i: usize| {
        let phi = (-45.0 + 7.5 * i as f64).to_radians();
        [100.0 * phi.cos() - 100.0, 100.0 * phi.sin(), 0.0]
    };
    for i in 0..=12 {
        pts.push((format!("p{i}"), arc(i)));
    }
    // The tail continues along the next chord of the arc, 4 mm long.
    let (a, b) = (arc(12), arc(13));
    let chord = ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2)).sqrt();
    let tail = [
        a[0] + 4.0 * (b[0] - a[0]) / chord,
        a[1] + 4.0 * (b[1] - a[1]) / chord,
        0.0,
    ];
    pts.push(("p13".into(), tail));
    pts.push(("leave".into(), [tail[0], tail[1], 50.0]));
    if kink {
        pts.push(("kink".into(), [tail[0] + 4.0, tail[1], 50.0]));
    }
    pts.push(("last".into(), [0.0, 150.0, 100.0]));
    pts[1].1 = [arc(0)[0], arc(0)[1], 50.0];
    let mut y = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nwork_frame: {{xyz: [900, 0, 250], rpy: [0, 0, 0]}}\n\
         speed: 100\nlimits: {{tcp_acceleration: 500}}\nwaypoints:\n",
        arm6()
    );
    for (name, p) in &pts {
        let keys = match name.as_str() {
            "p0" => ", motion: joint",
            n if n.starts_with('p') => ", process: true, speed: 20",
            "kink" | "last" if kink => ", speed: 1000",
            _ => "",
        };
        y += &format!(
            "  - {{name: {name}, xyz: [{}, {}, {}], rpy: [180, 0, 0]{keys}}}\n",
            p[0], p[1], p[2]
        );
    }
    (y, pts)
}

/// Check the bead of [`polyline_bead`] (which passes with warnings) and fix it: the
/// temporary folder, the waypoints, the check before, the amended file, the fix report and
/// its text.
#[allow(clippy::type_complexity)]
fn fix_bead(
    kink: bool,
) -> (
    tempfile::TempDir,
    Vec<(String, [f64; 3])>,
    serde_json::Value,
    std::path::PathBuf,
    serde_json::Value,
    String,
) {
    let (yaml, pts) = polyline_bead(kink);
    let (dir, file) = path_file(&yaml);
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 0, "{before:#}");
    let (out, r, stdout) = fix_into(&file, dir.path(), "fixed");
    (dir, pts, before, out, r, stdout)
}

/// The blends of a fix report: (waypoint, radius in the file's unit).
fn blends_of(r: &serde_json::Value) -> Vec<(String, f64)> {
    r["blends"]
        .as_array()
        .unwrap()
        .iter()
        .map(|b| {
            (
                b["waypoint"].as_str().unwrap().to_string(),
                f64_of(&b["radius"]),
            )
        })
        .collect()
}

#[test]
fn fix_blends_a_polyline_bead_and_keeps_the_stops_it_needs() {
    // The bead turns 7.5° at p1 … p12: blended, its speed in the middle of each corner is
    // 20·cos(3.75°) = 19.96 mm/s, within 5 % of 20, so every inner bead waypoint gets a blend:
    // 5 mm (the process cap; half a 13.08 mm chord is 6.54 mm) at p1 … p11, 2 mm at p12 (half
    // the 4 mm tail). `leave` (travel, up 50 mm then across) gets the 20 mm travel cap. No
    // blend at home and last (the path's ends), above and p0 (a joint move's start and end),
    // p13 (the process ends there).
    // Cycle: a stop between two segments cruising at v costs v/a over blending them (each
    // trapezoid adds v/(2a) per ramp, a blend keeps the cruise rate): 12 bead stops at 20 mm/s
    // and one at leave at 100 mm/s with a = 500 mm/s²: 12 × 0.04 + 0.2 = 0.68 s saved.
    // source: the speed of a blend whose velocity changes linearly in time (v·cos(θ/2), see
    // src/fix/blend.rs); trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008,
    // §3.2.2; from memory); common practice (the 5 mm and 20 mm caps, the 5 % tolerance)
    let (_dir, pts, before, out, r, stdout) = fix_bead(false);
    let dips_before = findings(&before, "process_speed").len();
    assert!(dips_before >= 12, "{before:#}");
    assert!(stdout.contains("Corner blends proposed (mm):"), "{stdout}");
    let blends = r["blends"].as_array().unwrap();
    let got = blends_of(&r);
    let mut want: Vec<(String, f64)> = (1..=11).map(|i| (format!("p{i}"), 5.0)).collect();
    want.push(("p12".into(), 2.0));
    want.push(("leave".into(), 20.0));
    assert_eq!(got, want, "{:#}", r["blends"]);
    // Never wider than half a neighbouring segment or the cap.
    let at = |name: &str| pts.iter().position(|(n, _)| n == name).unwrap();
    let dist = |i: usize, j: usize| {
        let (p, q) = (pts[i].1, pts[j].1);
        ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2) + (p[2] - q[2]).powi(2)).sqrt()
    };
    for b in blends {
        let k = at(b["waypoint"].as_str().unwrap());
        let radius = f64_of(&b["radius"]);
        let cap = if b["process"] == true { 5.0 } else { 20.0 };
        assert!(radius <= cap + 1e-12, "{b:#}");
        assert!(radius <= 0.5 * dist(k - 1, k) + 1e-12, "{b:#}");
        assert!(radius <= 0.5 * dist(k, k + 1) + 1e-12, "{b:#}");
        assert!(
            b["why"].as_str().unwrap().contains("radius set by"),
            "{b:#}"
        );
    }
    let p1 = &blends[0];
    assert!((f64_of(&p1["turn"]) - 7.5).abs() < 1e-6, "{p1:#}");
    assert!(
        (f64_of(&p1["lowest_speed_percent"]) - 100.0 * 3.75f64.to_radians().cos()).abs() < 1e-6,
        "{p1:#}"
    );
    // The amended file carries them, and only them.
    let text = std::fs::read_to_string(&out).unwrap();
    let amended: serde_yaml::Value = serde_yaml::from_str(&text).unwrap();
    for w in amended["waypoints"].as_sequence().unwrap() {
        let name = w["name"].as_str().unwrap();
        let wanted = want.iter().find(|(n, _)| n == name).map(|(_, r)| *r);
        assert_eq!(w["blend"].as_f64(), wanted, "{name}: {text}");
    }
    let (code1, after) = check_json(&out, &[]);
    assert_eq!(code1, 0, "{after:#}");
    let dips_after = findings(&after, "process_speed").len();
    assert!(dips_after < dips_before && dips_after <= 1, "{after:#}");
    let (t0, t1) = (
        f64_of(&before["summary"]["duration_s"]),
        f64_of(&after["summary"]["duration_s"]),
    );
    assert!((t0 - t1 - 0.68).abs() < 1e-6, "{t0} → {t1}");
    assert!(findings(&after, "input").is_empty(), "{after:#}");
}

#[test]
fn fixing_the_blended_bead_again_proposes_nothing_more() {
    // Every waypoint the rule allows carries a blend in the amended file, and the rest must
    // stop: a second fix of it has no blend to propose and nothing to amend (the bead still
    // starts from rest after the joint move, which no blend changes).
    // source: common practice (a fix applied twice changes nothing the second time)
    let (yaml, _) = polyline_bead(false);
    let (dir, file) = path_file(&yaml);
    let (out, first, _) = fix_into(&file, dir.path(), "fixed");
    assert!(!first["blends"].as_array().unwrap().is_empty(), "{first:#}");
    let (out2, r, _) = fix_into(&out, dir.path(), "fixed2");
    assert!(r["blends"].as_array().unwrap().is_empty(), "{r:#}");
    assert!(r["blend_note"].is_null(), "{r:#}");
    assert!(r["amended_file"].is_null(), "{r:#}");
    assert!(!out2.exists());
}

#[test]
fn fix_keeps_fast_travel_blends_once_their_corners_slow_to_the_acceleration_limit() {
    // The bead above with a 4 mm travel step at 1000 mm/s after `leave`. Blending `leave` and
    // `kink` (2 mm each, half the step) at cruise would turn the TCP's velocity by about
    // 1 m/s within a window of 2h₁ = 2·2 mm / 1000 mm/s = 4 ms, near 250 m/s² where the stops
    // ramp at 500 mm/s². The corners slow instead: at `leave` (in: 100 mm/s up, out: 1000 mm/s
    // along x, |Δv| = √(1000² + 100²) = 1005 mm/s) the rates scale by
    // k = √(2h₁·a/|Δv|) = √(0.004·500/1005) = 0.0446, so the blend accelerates the TCP by
    // k²·|Δv|/(2h₁) = 500 mm/s², no more than the stops do; `kink` likewise stays
    // within it (its rates are also bound by what the 4 mm step reaches from rest within its
    // half). The joints follow within their limits, so the whole set passes the re-check and all fourteen blends are
    // kept, with no note of blends left out.
    // source: the corner speed k = √(2h₁·a_max/|v_out − v_in|) (src/motion/corner.rs, derived
    // there); common practice (the 5 mm and 20 mm caps, half a neighbouring segment)
    let k = (2.0 * 0.002 * 500.0 / (1000.0f64.powi(2) + 100.0f64.powi(2)).sqrt()).sqrt();
    assert!((k - 0.0446).abs() < 1e-4, "{k}");
    let (_dir, _, before, out, r, _) = fix_bead(true);
    let mut want: Vec<(String, f64)> = (1..=12)
        .map(|i| (format!("p{i}"), if i < 12 { 5.0 } else { 2.0 }))
        .collect();
    want.push(("leave".into(), 2.0));
    want.push(("kink".into(), 2.0));
    assert_eq!(blends_of(&r), want, "{r:#}");
    assert!(r["blend_note"].is_null(), "{r:#}");
    let (code1, after) = check_json(&out, &[]);
    assert_eq!(code1, 0, "{after:#}");
    assert_eq!(after["summary"]["errors"], 0, "{after:#}");
    assert!(
        findings(&after, "process_speed").len() < findings(&before, "process_speed").len(),
        "{after:#}"
    );
}

#[test]
fn fix_does_not_apply_a_tool_spin_that_drives_the_tool_into_the_cell() {
    // The line of tests/fix.rs's spin test (arm6 straight through a wrist singularity, tool
    // 120 mm out and tilted 20° about its y axis, free to spin), with a camera on the tool: a
    // 20 mm ball 150 mm to the side of the TCP along its y axis. fix's spin search (which
    // ignores the cell) turns the tool by φ between −90° and −65° about its z axis. The TCP
    // frame at rpy (180, 70, 180) deg has x = (−cos 70°, 0, −sin 70°), y = (0, 1, 0),
    // z = (sin 70°, 0, −cos 70°) in the base frame (R = Rz(180°)·Ry(70°)·Rx(180°)), so the
    // camera centre sits at the TCP plus 150·(−sin φ·x + cos φ·y):
    //   φ = 0 (as programmed):  (0, +150, 0) mm from the TCP, at z = 930 mm;
    //   φ = −65° … −90°:         (−46.5 … −51.3, +63.4 … 0, −127.7 … −141.0) mm.
    // A 50 × 480 × 50 mm post centred at (1000, 30, 795) mm (x 975…1025, y −210…270,
    // z 770…820) holds every spun camera centre (TCP x 1050, y −200…200, z 930) but stays
    // 113 mm − 20 mm = 93 mm from the programmed camera (x 1050 − 1025 = 25, z 930 − 820 =
    // 110). So the spin that clears the singularity drives the camera into the post: fix
    // must keep the programmed orientations and say why.
    // source: rotation matrices from rpy (common practice); robots/arm6.urdf geometry
    let yaml = format!(
        "robot: {}\ncell: post.yaml\ntool:\n  xyz: [0, 0, 120]\n  rpy: [0, 20, 0]\n  free_spin: true\n  \
         geometry:\n    - {{name: camera, sphere: {{radius: 20}}, xyz: [0, 150, 120]}}\nspeed: 25\n\
         waypoints:\n  - {{name: left, xyz: [1050, -200, 930], rpy: [180, 70, 180]}}\n  - {{name: right, xyz: [1050, 200, 930], rpy: [180, 70, 180]}}\n",
        arm6()
    );
    let (dir, file) = path_file(&yaml);
    std::fs::write(
        dir.path().join("post.yaml"),
        "units: {length: mm, angle: deg}\nbodies:\n  - {name: post, frame: base, box: [50, 480, 50], xyz: [1000, 30, 795]}\n",
    )
    .unwrap();
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 1, "{before:#}");
    assert!(findings(&before, "collision").is_empty(), "{before:#}");
    // The path still fails after fix (exit 1): the spin was its only lever.
    let (code, _out, r, stdout) = fix_any(&file, dir.path(), "fixed");
    assert_eq!(code, 1, "{stdout}");
    let spin = &r["spin"];
    // The search did find the spin (so the test exercises the collision rule) ...
    assert!(f64_of(&spin["min_spin"]) <= -60.0, "{r:#}");
    // ... and fix refused it because of the collision.
    assert_eq!(spin["applied"], false, "{r:#}");
    assert_eq!(spin["collides"][0], "camera ⟷ post", "{r:#}");
    assert!(
        stdout.contains("not applied: the spun tool collides (camera ⟷ post)"),
        "{stdout}"
    );
}

#[test]
fn fix_leaves_out_a_blend_whose_cut_corner_runs_into_the_cell() {
    // The bead of the tests above (no kink), with a 1 mm ball on the TCP and a 15.2 mm knob
    // inside the travel corner at `leave`. There the path turns from straight up,
    // d_in = (0, 0, 1), toward `last`, d_out = (0.3328, 0.7898, 0.5152) (from the waypoints:
    // leave = (−32.297, 73.348, 50), last = (0, 150, 100) mm), a turn of θ = 58.99°. fix
    // proposes the 20 mm travel cap there; at 100 mm/s (v_c = v: 2h₁·a/|Δv| =
    // 0.4·500/98.47 > 1) the parabolic blend's middle lies |Δv|·h/4 = 98.47·0.2/4 = 4.92 mm
    // from the corner along the inner bisector u = (d_out − d_in)/|d_out − d_in|. The knob
    // sits 20 mm from the corner along u: the sharp path passes it at 20·sin(60.5°) =
    // 17.41 mm from its centre (a clearance of 17.41 − 15.2 − 1 = 1.21 mm, a warning), the
    // blended one at 20 − 4.92 = 15.08 mm (1.12 mm deep: a collision; the parabola's radius
    // of curvature at its middle, v²/|a| = 100²/246 = 40.6 mm, is larger than 15.08 mm, so
    // the middle is its nearest point). So the full set of blends is refused, the blend at
    // `leave` is left out, and the bead's blends are kept.
    // source: the blend geometry of src/motion/corner.rs (parabola A + v_in·σ + Δv·σ²/(4h));
    // point-to-line distance (common practice)
    let (yaml, _) = polyline_bead(false);
    let yaml = yaml.replace(
        "tool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}",
        "cell: knob.yaml\ntool: {xyz: [0, 0, 180], rpy: [0, 0, 0], geometry: [{name: ball, sphere: {radius: 1}, xyz: [0, 0, 180]}]}",
    );
    let (dir, file) = path_file(&yaml);
    std::fs::write(
        dir.path().join("knob.yaml"),
        "units: {length: mm, angle: deg}\nbodies:\n  - {name: knob, frame: work, sphere: {radius: 15.2}, xyz: [-25.5374, 89.3903, 40.1532]}\n",
    )
    .unwrap();
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 0, "{before:#}");
    assert!(findings(&before, "collision").is_empty(), "{before:#}");
    let near: Vec<_> = findings(&before, "clearance")
        .into_iter()
        .filter(|f| f["bodies"][1] == "knob" || f["bodies"][0] == "knob")
        .collect();
    assert!(!near.is_empty(), "{before:#}");
    for f in &near {
        assert!((f64_of(&f["value"]) - 1.21).abs() < 0.05, "{f:#}");
    }
    // The blend at `leave` alone drives the ball into the knob (the scenario is real).
    let blended = yaml.replace("name: leave, xyz: [", "name: leave, blend: 20, xyz: [");
    assert_ne!(blended, yaml);
    let (_d2, file2) = path_file(&blended);
    std::fs::copy(dir.path().join("knob.yaml"), _d2.path().join("knob.yaml")).unwrap();
    let (code2, hit) = check_json(&file2, &[]);
    assert_eq!(code2, 1, "{hit:#}");
    let depth = -f64_of(&findings(&hit, "collision")[0]["value"]);
    assert!((depth - 1.12).abs() < 0.05, "{depth}");

    let (out, r, _stdout) = fix_into(&file, dir.path(), "fixed");
    let names: Vec<String> = blends_of(&r).into_iter().map(|(n, _)| n).collect();
    let want: Vec<String> = (1..=12).map(|i| format!("p{i}")).collect();
    assert_eq!(names, want, "{r:#}");
    let note = r["blend_note"].as_str().unwrap_or_default();
    assert!(note.contains("left out at leave"), "{r:#}");
    let (code1, after) = check_json(&out, &[]);
    assert_eq!(code1, 0, "{after:#}");
    assert!(findings(&after, "collision").is_empty(), "{after:#}");
    assert!(
        f64_of(&after["summary"]["warnings"]) < f64_of(&before["summary"]["warnings"]),
        "{after:#}"
    );
}
