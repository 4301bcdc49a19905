//! Check semantics through the binary: start joints that miss the first waypoint, one path
//! distance for joint moves, the half-turn warning, finding order, bounded work on
//! unreachable stretches (the walk's counters, through the library) and the placement grid
//! count.
#![allow(non_snake_case)]

mod common;
use armpath::check::{check, CheckOptions, CheckOutcome};
use armpath::solve::{RECOVER_EVERY, RESTARTS};
use common::*;
use std::path::Path;

/// The check of `file` through the library (`ik` as the `--ik` flag: `auto` or `numeric`),
/// for the walk's work counters, which the reports do not show.
fn outcome_of(file: &Path, ik: &str) -> CheckOutcome {
    let job = armpath::job::load(file, &armpath::job::Overrides::default()).unwrap();
    let robot = armpath::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    let options = CheckOptions {
        numeric_only: ik == "numeric",
        ..CheckOptions::default()
    };
    check(&job, &robot, &options, &mut []).unwrap()
}

/// A path over the arm's reach: a line, a joint move, then a line that leaves the reach.
const OUT_OF_REACH: &str = "tool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}\nspeed: 100\nwaypoints:\n\
  - {name: a, xyz: [900, 0, 600], rpy: [180, 0, 0]}\n\
  - {name: b, xyz: [900, 300, 600], rpy: [180, 0, 0]}\n\
  - {name: c, xyz: [600, -600, 400], rpy: [180, 0, 0], motion: joint}\n\
  - {name: d, xyz: [2500, -600, 400], rpy: [180, 0, 0]}\n";

fn out_of_reach() -> String {
    format!("robot: {}\n{OUT_OF_REACH}", arm6())
}

/// Joints (deg) of arm6 at which the TCP of a 180 mm tool stands 1.2 m out along x, tool
/// roughly down; the first waypoint of the start-joint tests is this pose.
const Q0: [f64; 6] = [0.0, 30.0, -20.0, 0.0, 80.0, 0.0];

fn start_path(extra: &str) -> String {
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 50\n{extra}waypoints:\n  - {{name: first, {}}}\n  - {{name: second, {}}}\n",
        arm6(),
        arm6_pose(&Q0, [0.0; 3], 0.0),
        arm6_pose(&Q0, [0.0, 40.0, 0.0], 0.0)
    )
}

/// A start-joint path file with `start_joints: q` (deg) and `extra` keys.
fn start_file(q: &[f64], extra: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let list: Vec<String> = q.iter().map(|v| v.to_string()).collect();
    path_file(&start_path(&format!(
        "start_joints: [{}]\n{extra}",
        list.join(", ")
    )))
}

fn stderr_of(args: &[&str]) -> (i32, String) {
    let out = armpath().args(args).output().unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// The first number after `key` in `text`.
fn number_after(text: &str, key: &str) -> f64 {
    let rest = &text[text
        .find(key)
        .unwrap_or_else(|| panic!("no '{key}' in {text}"))
        + key.len()..];
    let num: String = rest
        .trim_start()
        .chars()
        .take_while(|c| c.is_ascii_digit() || *c == '.')
        .collect();
    num.parse()
        .unwrap_or_else(|_| panic!("no number after '{key}' in {text}"))
}

#[test]
fn start_joints_off_the_first_waypoint_are_refused_with_the_pose_error() {
    // Derivation: turning j1 alone by δ = 0.1° swings the TCP about the vertical j1 axis
    // through the base origin: it moves by the chord 2·r·sin(δ/2), r its horizontal distance
    // from the axis, and the tool turns by δ.
    // source: robots/arm6.urdf (j1 axis = base z through the origin); common practice (chord)
    let q = [Q0[0] + 0.1, Q0[1], Q0[2], Q0[3], Q0[4], Q0[5]];
    let (_d, file) = start_file(&q, "");
    let (code, err) = stderr_of(&["check", file.to_str().unwrap(), "-q"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("start_joints:"), "{err}");
    assert!(err.contains("first waypoint 'first'"), "{err}");
    assert!(err.contains("start_joints_seed: true"), "{err}");
    let text = std::fs::read_to_string(&file).unwrap();
    let xyz = number_list(&text, "{name: first, xyz: [");
    let r_mm = (xyz[0] * xyz[0] + xyz[1] * xyz[1]).sqrt();
    let chord_mm = 2.0 * r_mm * (0.05f64).to_radians().sin();
    let got_mm = number_after(&err, "put the TCP");
    assert!(
        (got_mm - chord_mm).abs() < 1e-3,
        "{got_mm} mm vs {chord_mm} mm"
    );
    let got_deg = number_after(&err, "mm and");
    assert!((got_deg - 0.1).abs() < 1e-3, "{got_deg}°");

    // The same joints as a seed: the first pose is solved near them, the path runs.
    for (extra, args) in [
        ("", vec!["--start-joints-as-seed"]),
        ("start_joints_seed: true\n", vec![]),
    ] {
        let (_d, file) = start_file(&q, extra);
        let (code, report) = check_json(&file, &args);
        assert_ne!(code, 2, "{report:#}");
        assert_eq!(report["path"]["start"]["method"], "start_joints");
        let j1 = f64_of(&report["path"]["start"]["joints"][0]);
        assert!(j1.abs() < 1e-6, "j1 solved back onto the waypoint: {j1}");
    }

    // The exact joints need no option.
    let (_d, file) = start_file(&Q0, "");
    let (code, report) = check_json(&file, &[]);
    assert_ne!(code, 2, "{report:#}");
    assert_eq!(report["path"]["start"]["method"], "start_joints");
}

#[test]
fn start_joints_read_off_a_display_are_accepted_and_solved_onto_the_waypoint() {
    // Derivation: a controller display shows joints to 0.001°, so a copied value is off by
    // at most 0.0005°. With every joint off by 0.0004° the TCP moves by at most
    // Σ|Δq|·(lever ≤ 2 m) = 6 · 0.0004° · π/180 · 2 m ≈ 0.084 mm and turns by at most
    // 6 · 0.0004° = 0.0024°: inside the start tolerance (0.5 mm, 0.05°), beyond the IK
    // tolerance (0.01 mm, 0.001°). The check must take them and solve the first pose exactly
    // next to them.
    // source: common practice (three decimals on joint displays); triangle inequality for
    // the TCP displacement of a serial chain
    let q: Vec<f64> = Q0.iter().map(|v| v + 0.0004).collect();
    let (_d, file) = start_file(&q, "");
    let (code, report) = check_json(&file, &[]);
    assert_ne!(code, 2, "{report:#}");
    assert_eq!(report["path"]["start"]["method"], "start_joints");
    for (i, want) in Q0.iter().enumerate() {
        let got = f64_of(&report["path"]["start"]["joints"][i]);
        // Solved back within the display rounding of the given joints.
        assert!((got - want).abs() < 0.01, "j{}: {got} vs {want}", i + 1);
    }
}

/// The numbers of the `[...]` list that follows `key` in `text`.
fn number_list(text: &str, key: &str) -> Vec<f64> {
    let rest = &text[text.find(key).unwrap() + key.len()..];
    rest[..rest.find(']').unwrap()]
        .split(',')
        .map(|v| v.trim().parse().unwrap())
        .collect()
}

#[test]
fn start_joints_contradicting_config_are_refused() {
    // Derivation: Q0 has the elbow bent one way only (j3 = −20° with j2 = 30°, wrist centre in
    // front of the shoulder), so it is one configuration; asking for the opposite elbow
    // contradicts it. The configuration name comes from armpath's own table for Q0.
    // source: common practice (elbow up/down are the two signs of the elbow angle)
    let (_d, file) = start_file(&Q0, "");
    let (_code, report) = check_json(&file, &[]);
    let config = report["path"]["start"]["config"]
        .as_str()
        .unwrap()
        .to_string();
    let elbow = config.split('/').nth(1).unwrap();
    let other = if elbow == "up" { "down" } else { "up" };
    let (_d, file) = start_file(&Q0, &format!("config: {{elbow: {other}}}\n"));
    let (code, err) = stderr_of(&["check", file.to_str().unwrap(), "-q"]);
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("start_joints:"), "{err}");
    assert!(err.contains(&format!("configuration {config}")), "{err}");
    assert!(err.contains(&format!("elbow {other}")), "{err}");
    // Agreeing request: accepted.
    let (_d, file) = start_file(&Q0, &format!("config: {{elbow: {elbow}}}\n"));
    let (code, _) = stderr_of(&["check", file.to_str().unwrap(), "-q"]);
    assert_ne!(code, 2);
}

#[test]
fn path_distance_counts_a_joint_move_as_its_straight_line() {
    // Derivation: a → b is 300 mm; the joint move b → c counts as the straight line
    // |c − b| = sqrt(300² + 900² + 200²) mm; c → d is 1900 mm. Every configuration's walk,
    // the findings, the JSON and the joints CSV use these waypoint distances.
    // source: common practice (Euclidean distance)
    let s_b = 300.0;
    let s_c = s_b + (300.0f64 * 300.0 + 900.0 * 900.0 + 200.0 * 200.0).sqrt();
    let s_d = s_c + 1900.0;
    let (dir, file) = path_file(&out_of_reach());
    let csv = dir.path().join("joints.csv");
    let (code, report) = check_json(&file, &["--joints", csv.to_str().unwrap()]);
    assert_eq!(code, 1, "{report:#}");
    assert!((f64_of(&report["summary"]["length_mm"]) - s_d).abs() < 1e-6);
    // Joints CSV: segment 2 (c → d) runs from s_c to s_d.
    let text = std::fs::read_to_string(&csv).unwrap();
    let seg2: Vec<f64> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').collect::<Vec<_>>())
        .filter(|c| c[2] == "2")
        .map(|c| c[1].parse().unwrap())
        .collect();
    let (lo, hi) = (seg2[0], seg2[seg2.len() - 1]);
    assert!(
        lo > s_c && lo < s_c + 1.01,
        "first sample of seg 2 at {lo}, c at {s_c}"
    );
    assert!((hi - s_d).abs() < 1e-3, "{hi} vs {s_d}");
    // The unreachable finding and every configuration row that stops there agree.
    let f = findings(&report, "unreachable");
    assert_eq!(f.len(), 1, "{report:#}");
    assert_eq!(f[0]["segment"], 2);
    let range = [f64_of(&f[0]["s_mm"][0]), f64_of(&f[0]["s_mm"][1])];
    assert!(range[0] >= lo && (range[1] - s_d).abs() < 1e-6, "{range:?}");
    let mut rows = 0;
    for row in report["configurations"].as_array().unwrap() {
        let stop = &row["first_failure"];
        if stop["kind"] == "unreachable" && stop["segment"] == 2 {
            let s = f64_of(&stop["s_mm"]);
            assert!(s >= lo && s <= hi, "{row} outside seg 2 [{lo}, {hi}]");
            assert!((s - range[0]).abs() < 1e-6, "{row} vs finding {range:?}");
            rows += 1;
        }
    }
    assert!(rows > 0, "{report:#}");
}

fn turn_path(yaw_deg: f64, motion: &str) -> String {
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\norientation_speed: 30\nwaypoints:\n\
         \x20 - {{name: a, xyz: [900, 0, 600], rpy: [180, 0, 0]}}\n\
         \x20 - {{name: b, xyz: [900, 20, 600], rpy: [180, 0, {yaw_deg}]{motion}}}\n",
        arm6()
    )
}

#[test]
fn half_turn_warning_on_linear_moves_within_five_degrees_only() {
    // Derivation: rpy [180, 0, 0] → [180, 0, ψ] is a turn by |ψ| about the base z axis. The
    // warning covers turns above 180° − 5°; a joint move does not follow the geodesic.
    // source: common practice (yaw composes about the fixed z axis, REP 103)
    let input_count = |yaml: String| {
        let (_d, file) = path_file(&yaml);
        let (_code, report) = check_json(&file, &[]);
        findings(&report, "input").len()
    };
    assert_eq!(input_count(turn_path(178.0, "")), 1, "178° linear");
    assert_eq!(input_count(turn_path(180.0, "")), 1, "180° linear");
    assert_eq!(input_count(turn_path(170.0, "")), 0, "170° linear");
    assert_eq!(
        input_count(turn_path(180.0, ", motion: joint")),
        0,
        "joint move"
    );
}

#[test]
fn findings_are_listed_in_path_order() {
    // Input warnings at later waypoints (a quaternion that needs normalising at e, a
    // near-half turn on the last segment) sit among the walk's findings by where they are
    // on the path: the list is ordered by segment and, within one, by first sample.
    // source: common practice (path order = increasing path distance)
    let yaml = format!(
        "{}\
  - {{name: e, xyz: [2500, -500, 400], quat: [0, 2, 0, 0]}}\n\
  - {{name: f, xyz: [2500, -400, 400], rpy: [180, 0, 178]}}\n",
        out_of_reach()
    );
    let (_d, file) = path_file(&yaml);
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1, "{report:#}");
    let list = report["findings"].as_array().unwrap();
    let segments: Vec<u64> = list
        .iter()
        .map(|f| {
            f["segment"]
                .as_u64()
                .expect("every finding here is on a segment")
        })
        .collect();
    assert!(segments.windows(2).all(|w| w[0] <= w[1]), "{segments:?}");
    let input: Vec<u64> = findings(&report, "input")
        .iter()
        .map(|f| f["segment"].as_u64().unwrap())
        .collect();
    assert_eq!(input, vec![3, 4], "{report:#}");
    assert_ne!(
        list[0]["kind"], "input",
        "the first finding is on segment 2, not a warning"
    );
    let firsts: Vec<u64> = list
        .iter()
        .filter_map(|f| f["samples"].as_array().map(|s| s[0].as_u64().unwrap()))
        .collect();
    assert!(firsts.windows(2).all(|w| w[0] <= w[1]), "{firsts:?}");
}

#[test]
fn a_ten_km_unreachable_stretch_costs_solves_only_inside_the_reach_sphere() {
    // Derivation: with the tool straight down the wrist centre sits L_tool + c4 above the TCP;
    // it is at most c2 + sqrt(a2² + c3²) from the shoulder point (a1, c1), so on the line
    // z = 0.9 m, y = 0 the last reachable x is
    //   x_max = a1 + sqrt((c2 + sqrt(a2² + c3²))² − (z + L_tool + c4 − c1)²);
    // every sample after it, out to the 10 km position bound of path files, is unreachable.
    // source: robots/arm6.urdf geometry; planar two-link reach (Craig 2005, ch. 4 workspace)
    let (z_tcp, l_tool, step) = (0.9, 0.18, 0.1);
    let arm = C2 + (A2 * A2 + C3 * C3).sqrt();
    let dz = z_tcp + l_tool + C4 - C1;
    let x_max = A1 + (arm * arm - dz * dz).sqrt();
    for ik in ["auto", "numeric"] {
        let yaml = format!(
            "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 1000\nsampling: {{step: 100}}\n\
             waypoints:\n  - {{name: near, xyz: [700, 0, 900], rpy: [180, 0, 0]}}\n  - {{name: far, xyz: [9999000, 0, 900], rpy: [180, 0, 0]}}\n",
            arm6()
        );
        let (_d, file) = path_file(&yaml);
        // Work, not time: the line crosses the reach sphere ([`Robot::reach_bound`]) along a
        // chord no longer than its diameter, so at most 2r/step + 1 samples lie inside it and
        // may be solved; every sample beyond is settled by the sphere alone. Each solved
        // sample may add at most 16 jump-test midpoint solves (the walk's halving depth), and
        // inside an unreachable stretch a full search runs on its first sample, every
        // RECOVER_EVERY samples after it and at the segment's end.
        // source: common practice (a chord is at most the diameter); the walk's documented
        // search schedule (solve::RECOVER_EVERY, solve::RESTARTS)
        let outcome = outcome_of(&file, ik);
        let w = outcome.totals;
        let (_, radius) = outcome.robot.reach_bound();
        let inside = (2.0 * radius / step).ceil() as usize + 1;
        eprintln!("{ik}: {w:?}, {inside} samples inside the sphere at most");
        assert!(w.samples > 99_000, "{ik}: {w:?}");
        assert!(
            w.beyond_reach + inside >= w.samples,
            "{ik}: {w:?}, {inside} inside"
        );
        assert!(
            w.ik_solves <= inside * (1 + 16),
            "{ik}: {w:?}, {inside} inside"
        );
        assert!(w.full_searches <= inside / RECOVER_EVERY + 2, "{ik}: {w:?}");
        assert!(w.restarts <= w.full_searches * RESTARTS, "{ik}: {w:?}");
        let (code, report) = check_json(&file, &["--ik", ik]);
        assert_eq!(code, 1);
        let f = findings(&report, "unreachable");
        assert_eq!(f.len(), 1, "{ik}: {report:#}");
        let x_first = 0.7 + f64_of(&f[0]["s_mm"][0]) / 1e3;
        let x_last = 0.7 + f64_of(&f[0]["s_mm"][1]) / 1e3;
        assert!(
            x_first > x_max && x_first <= x_max + step + 1e-9,
            "{ik}: first unreachable at x = {x_first}, boundary {x_max}"
        );
        assert!(
            (x_last - 9_999.0).abs() < 1e-6,
            "{ik}: to the end, {x_last}"
        );
    }
}

#[test]
fn mm_values_under_units_m_are_settled_by_the_reach_sphere_with_a_unit_hint() {
    // Derivation: read as metres every waypoint lies hundreds of metres out, far beyond an
    // arm whose link lengths add up to about 2 m (robots/arm6.urdf); read as mm they are
    // the reachable demo poses.
    // source: robots/arm6.urdf link lengths; common practice (1 m = 1000 mm)
    let yaml = format!(
        "units: {{length: m, angle: deg}}\nsampling: {{step: 10}}\n{}",
        out_of_reach()
    );
    let (_d, file) = path_file(&yaml);
    // Work, not time: every waypoint lies 400 m or more from the base, far outside the reach
    // sphere, so no sample after the first (the start choice) is solved.
    // source: robots/arm6.urdf link lengths (about 2 m in all)
    let w = outcome_of(&file, "auto").totals;
    assert!(w.samples > 1, "{w:?}");
    assert_eq!(w.ik_solves, 0, "{w:?}");
    assert_eq!(w.beyond_reach, w.samples - 1, "{w:?}");
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1);
    let hint = findings(&report, "input");
    assert_eq!(hint.len(), 1, "{report:#}");
    let message = hint[0]["message"].as_str().unwrap();
    assert!(message.contains("look like mm"), "{message}");
    assert!(message.contains("units: {length: mm}"), "{message}");
    assert!(!findings(&report, "unreachable").is_empty());
}

#[test]
fn place_grid_count_beyond_usize_is_refused_at_once() {
    // Derivation: four axes of 65,536 values make 65,536⁴ = 2⁶⁴ = 18446744073709551616
    // placements, one more than usize can hold on a 64-bit machine.
    // source: common practice (arithmetic)
    let (_d, file) = path_file(&out_of_reach());
    let axis = "0:65535:1";
    // Hang guard only: a count taken by enumerating the grid would never end.
    let out = armpath()
        .timeout(std::time::Duration::from_secs(60))
        .args([
            "place",
            file.to_str().unwrap(),
            "--x",
            axis,
            "--y",
            axis,
            "--z",
            axis,
            "--yaw",
            axis,
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("18446744073709551616 placements"), "{err}");
    assert!(err.contains("more than 100000"), "{err}");
}

#[test]
fn place_keeps_working_with_start_joints_as_a_seed() {
    // Moving the part moves the first waypoint off the given start joints; the placement
    // search then uses them as a guess instead of refusing every placement.
    // source: common practice (a moved part changes the TCP pose the joints must reach)
    let (_d, file) = start_file(&Q0, "");
    let (code, err) = stderr_of(&[
        "place",
        file.to_str().unwrap(),
        "--x",
        "-20:20:20",
        "--y",
        "0",
    ]);
    assert_ne!(code, 2, "{err}");
}
