//! The timing model through the binary: speed ramps, corner blends, synchronised joint moves
//! and the findings they raise, on paths whose answers are worked out beside each test.
#![allow(non_snake_case)]

mod common;
use common::*;

/// A straight line 300 mm long in front of the demo arm with the nozzle pointing down, at
/// `speed` mm/s, then `extra` waypoint lines.
fn line_path(limits: &str, waypoints: &str) -> String {
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nwork_frame: {{xyz: [900, 0, 250], rpy: [0, 0, 0]}}\n\
         speed: 100\nlimits: {{{limits}}}\nwaypoints:\n{waypoints}",
        arm6()
    )
}

#[test]
fn a_rest_to_rest_line_takes_the_trapezoid_time() {
    // 300 mm at 100 mm/s with 500 mm/s²: v²/a = 20 mm < 300 mm, so the cruise speed is
    // reached and T = L/v + v/a = 3 + 0.2 = 3.2 s. The commanded TCP speed peaks at 100 mm/s.
    // source: trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2;
    // from memory)
    let yaml = line_path(
        "tcp_acceleration: 500",
        "  - {name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [150, -100, 0], rpy: [180, 0, 0]}\n",
    );
    let (dir, file) = path_file(&yaml);
    let csv = dir.path().join("joints.csv");
    let (code, report) = check_json(&file, &["--joints", csv.to_str().unwrap()]);
    assert_eq!(code, 0, "{report:#}");
    let t = f64_of(&report["summary"]["duration_s"]);
    assert!((t - 3.2).abs() < 1e-9, "{t}");
    let per = &report["path"]["segment_durations_s"];
    assert!((f64_of(&per[0]) - 3.2).abs() < 1e-9, "{per}");
    let rows = std::fs::read_to_string(&csv).unwrap();
    let header: Vec<&str> = rows.lines().next().unwrap().split(',').collect();
    let tcp = header.iter().position(|h| *h == "tcp_mm_s").unwrap();
    let peak = rows
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(tcp).unwrap().parse::<f64>().unwrap())
        .fold(0.0f64, f64::max);
    assert!((peak - 100.0).abs() < 1e-9, "{peak}");
}

#[test]
fn a_blended_right_angle_saves_the_stop_and_slows_the_bead_to_its_corner_speed() {
    // a → b → c: 200 mm along x, then 200 mm along y, at v = 100 mm/s with a = 500 mm/s²,
    // blend r = 10 mm at b. At cruise the blend would turn the velocity by |v·ŷ − v·x̂| = v√2
    // in 2r/v = 0.2 s: v²·sin 45°/r = 707 mm/s² > a, so the corner slows to
    // v_c = √(a·r/sin 45°) = √(500·10·√2) = 84.09 mm/s (k = v_c/v = 0.8409) and the window
    // lasts 2r/v_c: half h = 10/84.09 = 0.11892 s. Each segment covers its 190 mm outside the
    // window with a trapezoid from rest to v and down to v_c:
    // T = L/v + v/(2a) + (v − v_c)²/(2a·v) = 1.9 + 0.1 + 15.91²/(2·500·100) = 2.002531 s,
    // plus h: 2.121452 s each, 4.242904 s in all (4.4 s when stopping at b:
    // 2 × (200/100 + 100/500)). In the window the velocity moves linearly from v_c·x̂ to v_c·ŷ,
    // so at b's sample (the window's middle) the speed is v_c/√2 = 59.46 mm/s, below 95 % of
    // 100 mm/s.
    // source: trapezoidal profile T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2; from
    // memory), its deceleration to v_c derived here from constant-acceleration kinematics;
    // common practice (the speed of a linear velocity blend); the corner speed derived in
    // src/motion/corner.rs
    let corner = |blend: &str| {
        line_path(
            "tcp_acceleration: 500",
            &format!(
                "  - {{name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [50, -100, 0], rpy: [180, 0, 0], process: true{blend}}}\n  \
                 - {{name: c, xyz: [50, 100, 0], rpy: [180, 0, 0], process: true}}\n"
            ),
        )
    };
    let (v, a, r) = (100.0f64, 500.0f64, 10.0f64);
    let v_c = (a * r / 45f64.to_radians().sin()).sqrt();
    let segment = 190.0 / v + v / (2.0 * a) + (v - v_c).powi(2) / (2.0 * a * v) + r / v_c;
    assert!((segment - 2.121452).abs() < 1e-6, "{segment}");
    let (_d, file) = path_file(&corner(", blend: 10"));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 0, "{report:#}");
    assert!(
        (f64_of(&report["summary"]["duration_s"]) - 2.0 * segment).abs() < 1e-9,
        "{report:#}"
    );
    let per = &report["path"]["segment_durations_s"];
    assert!((f64_of(&per[0]) - segment).abs() < 1e-9 && (f64_of(&per[1]) - segment).abs() < 1e-9);
    let dips = findings(&report, "process_speed");
    let at_b = dips
        .iter()
        .find(|f| f64_of(&f["s_mm"][0]) <= 200.0 && f64_of(&f["s_mm"][1]) >= 200.0)
        .unwrap_or_else(|| panic!("{report:#}"));
    assert!(
        (f64_of(&at_b["value"]) - v_c / 2f64.sqrt()).abs() < 1e-6,
        "{at_b:#}"
    );
    assert!((f64_of(&at_b["limit"]) - 95.0).abs() < 1e-9);
    assert_eq!(at_b["severity"], "warning");
    let (_d2, file2) = path_file(&corner(""));
    let (_, stop) = check_json(&file2, &[]);
    assert!(
        (f64_of(&stop["summary"]["duration_s"]) - 4.4).abs() < 1e-9,
        "{stop:#}"
    );
    // Stopping at b drops the bead to 0 there.
    assert!(findings(&stop, "process_speed")
        .iter()
        .any(|f| f64_of(&f["value"]) == 0.0));
}

/// Path distance (mm) and commanded TCP speed (mm/s) of every sample of a → b → c (200 mm
/// along x, 200 mm along y) at `speed` mm/s with `tcp_acceleration` mm/s² and a blend of
/// `blend` mm at b, read from the `--joints` CSV.
fn right_angle_speeds(speed: f64, tcp_acceleration: f64, blend: f64) -> Vec<(f64, f64)> {
    let yaml = line_path(
        &format!("tcp_acceleration: {tcp_acceleration}"),
        &format!(
            "  - {{name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0], speed: {speed}}}\n  \
             - {{name: b, xyz: [50, -100, 0], rpy: [180, 0, 0], speed: {speed}, blend: {blend}}}\n  \
             - {{name: c, xyz: [50, 100, 0], rpy: [180, 0, 0], speed: {speed}}}\n"
        ),
    );
    let (dir, file) = path_file(&yaml);
    let csv = dir.path().join("joints.csv");
    let (code, report) = check_json(&file, &["--joints", csv.to_str().unwrap()]);
    assert_eq!(code, 0, "{report:#}");
    let rows = std::fs::read_to_string(&csv).unwrap();
    let header: Vec<&str> = rows.lines().next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (tcp, s_col) = (col("tcp_mm_s"), col("s_mm"));
    rows.lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[s_col].parse().unwrap(), f[tcp].parse().unwrap())
        })
        .collect()
}

/// Speeds of the samples whose path distance lies in `range` (mm).
fn speeds_in(samples: &[(f64, f64)], range: std::ops::RangeInclusive<f64>) -> Vec<f64> {
    samples
        .iter()
        .filter(|(s, _)| range.contains(s))
        .map(|&(_, v)| v)
        .collect()
}

/// The 20 mm window of [`right_angle_speeds`] run at corner speed `v_c` (mm/s): the path
/// distance runs along the straight segments, so the window spans 180 … 220 mm; its speeds
/// never exceed `v_c` and bottom out at `v_c·cos 45°` (derived in the test below). The CSV
/// writes speeds with four decimals: half a unit of the last one is the tolerance.
fn assert_window_speeds(samples: &[(f64, f64)], v_c: f64) {
    let in_window = speeds_in(samples, 180.0..=220.0);
    assert!(in_window.len() >= 5, "{samples:?}");
    let lowest = in_window.iter().cloned().fold(f64::INFINITY, f64::min);
    assert!(
        (lowest - v_c * 45f64.to_radians().cos()).abs() <= 5e-5,
        "{lowest}"
    );
    assert!(in_window.iter().all(|&s| s <= v_c + 5e-5), "{in_window:?}");
}

#[test]
fn a_fast_blended_right_angle_slows_to_its_corner_speed_in_the_joint_csv() {
    // a → b → c at v = 500 mm/s, a = 2000 mm/s², blend r = 20 mm at b (turn θ = 90°).
    // Derivation: run at corner speed v_c on both sides, the blend's velocity changes
    // linearly from v_c·x̂ to v_c·ŷ over 2h = 2r/v_c, so its acceleration is
    // |v_c·ŷ − v_c·x̂|/(2h) = v_c·√2·v_c/(2r) = v_c²·sin(θ/2)/r (√2/2 = sin 45°). At cruise that
    // is 500²·sin 45°/20 = 8839 mm/s² > a; equal to a for v_c = √(a·r/sin 45°) = 237.84 mm/s.
    // Inside the window |v(σ)|² = v_c²·((1 − λ)² + λ²), λ = σ/(2h), smallest at λ = ½ (b's
    // sample): v_c·cos 45° = 168.18 mm/s; at the window's edges v_c. Before the window the
    // TCP reaches v from rest after v²/(2a) = 62.5 mm and brakes to v_c over
    // (v² − v_c²)/(2a) = 48.4 mm, so it cruises at v from 62.5 to 131.6 mm.
    // source: the velocity of a parabolic blend (a velocity changing linearly in time,
    // derived here); constant-acceleration kinematics (common practice)
    let (v, a, r) = (500.0f64, 2000.0f64, 20.0f64);
    let v_c = (a * r / 45f64.to_radians().sin()).sqrt();
    assert!((v_c - 237.84).abs() < 0.01, "{v_c}");
    let samples = right_angle_speeds(v, a, r);
    assert_window_speeds(&samples, v_c);
    let cruising = speeds_in(&samples, 70.0..=125.0);
    assert!(cruising.len() > 20);
    assert!(
        cruising.iter().all(|&s| (s - v).abs() < 1e-9),
        "{cruising:?}"
    );
    // Braking towards the window: between cruise and v_c, never below v_c.
    let braking = speeds_in(&samples, 135.0..=179.0);
    assert!(
        braking.iter().all(|&s| s >= v_c - 5e-5 && s < v),
        "{braking:?}"
    );
}

#[test]
fn a_slow_blended_right_angle_keeps_the_cruise_speed_through_the_window() {
    // The same corner at v = 10 mm/s: at cruise the blend needs v²·sin 45°/r = 3.5 mm/s²,
    // far below a = 2000 mm/s², so the corner speed is v itself and the window's middle
    // runs at v·cos 45° = 7.0711 mm/s, its edges and the lines outside at v.
    // source: the velocity of a parabolic blend (derived in the test above); the corner speed
    // v_c = min(v, √(a·r/sin(θ/2))) of src/motion/corner.rs
    let (v, a, r) = (10.0f64, 2000.0f64, 20.0f64);
    let samples = right_angle_speeds(v, a, r);
    assert_window_speeds(&samples, v);
    let cruising: Vec<f64> = speeds_in(&samples, 1.0..=179.0)
        .into_iter()
        .chain(speeds_in(&samples, 221.0..=399.0))
        .collect();
    assert!(cruising.len() > 100);
    assert!(
        cruising.iter().all(|&s| (s - v).abs() < 1e-9),
        "{cruising:?}"
    );
}

/// The roll tests' start: arm in its vertical plane, wrist bent 45°, j6 near zero; the tool
/// sits on the flange axis, so rolling it about its own axis turns j6 alone, one to one.
const Q0: [f64; 6] = [0.0, 30.0, -20.0, 0.0, 45.0, 0.2];

fn roll(head: &str, second: &str) -> String {
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\n{head}\
         start_joints: [0, 30, -20, 0, 45, 0.2]\nwaypoints:\n  - {{name: r0, {}}}\n  - {{name: r1, {}{second}}}\n",
        arm6(),
        arm6_pose(&Q0, [0.0; 3], 0.0),
        arm6_pose(&Q0, [0.0; 3], 90.0)
    )
}

#[test]
fn a_joint_move_at_half_speed_runs_j6_at_half_its_limit() {
    // A joint move that rolls the tool 90° turns j6 alone by 90°. At `speed: 50%` j6 cruises
    // at 210 deg/s (half of 420) and accelerates at its default 2 × 420 = 840 deg/s²:
    // T = 90/210 + 210/840 = 0.678571 s. The busiest joint runs at 50 % of its allowed speed
    // and 100 % of its allowed acceleration, which is within the limit.
    // source: robots/arm6.urdf (j6 velocity 420 deg/s); trapezoidal profile T = L/v + v/a
    // (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
    let (_d, file) = path_file(&roll("", ", motion: joint, speed: 50%"));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 0, "{report:#}");
    let s = &report["summary"];
    let t = f64_of(&s["duration_s"]);
    assert!((t - (90.0 / 210.0 + 210.0 / 840.0)).abs() < 1e-6, "{t}");
    assert_eq!(s["max_joint_speed_joint"], "j6");
    assert!(
        (f64_of(&s["max_joint_speed_ratio"]) - 0.5).abs() < 1e-6,
        "{s:#}"
    );
    assert!(
        (f64_of(&s["max_joint_acceleration_ratio"]) - 1.0).abs() < 1e-6,
        "{s:#}"
    );
}

#[test]
fn a_fast_roll_start_is_a_joint_acceleration_error() {
    // A straight-line roll of 90° at 60 deg/s with the tool accelerating at 1000 deg/s²
    // turns j6 alone, so j6 accelerates at 1000 deg/s². With joint_acceleration_scale 0.5
    // j6 may accelerate at 2 × 420 × 0.5 = 420 deg/s²: an error of 1000 against 420; with
    // 1.25 (1050 deg/s²) the roll is within it.
    // source: robots/arm6.urdf (j6 velocity 420 deg/s, axis = flange z); common practice
    // (constant acceleration; speed differences over midpoint spacing are exact for it)
    let head = |scale: f64| {
        format!(
            "orientation_speed: 60\nlimits: {{tool_angular_acceleration: 1000, joint_acceleration_scale: {scale}}}\n"
        )
    };
    let (_d, file) = path_file(&roll(&head(0.5), ""));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1, "{report:#}");
    let f = findings(&report, "joint_acceleration");
    assert!(
        !f.is_empty() && f.iter().all(|f| f["joint"] == "j6"),
        "{report:#}"
    );
    assert!((f64_of(&f[0]["value"]) - 1000.0).abs() < 1e-6, "{:#}", f[0]);
    assert!((f64_of(&f[0]["limit"]) - 420.0).abs() < 1e-9);
    assert_eq!(f[0]["unit"], "deg/s²");
    // The message says what, how much and what to try; where the default limit comes from is
    // said once, on the summary's acceleration line, not in every finding.
    // source: common practice (one explanation per report, not per finding)
    let message = f[0]["message"].as_str().unwrap_or_default();
    assert!(
        message.contains("1000 deg/s²")
            && message.contains("2.38× its allowed 420 deg/s², the default rule")
            && message.contains("blend the corner")
            && !message.contains("URDF")
            && !message.contains("joint_acceleration_scale"),
        "{message}"
    );
    let text = armpath().arg("check").arg(&file).output().unwrap();
    let text = String::from_utf8_lossy(&text.stdout);
    assert!(
        text.contains("joints 2 × speed limit per s × 0.5 (the default rule)")
            && text.contains(
                "URDF has none, so the default rule above applies: set \
                 limits.joint_acceleration_scale or limits.joint_accelerations"
            ),
        "{text}"
    );
    let (_d2, file2) = path_file(&roll(&head(1.25), ""));
    let (code2, report2) = check_json(&file2, &[]);
    assert!(
        findings(&report2, "joint_acceleration").is_empty(),
        "{report2:#}"
    );
    assert_eq!(code2, 0);
}

#[test]
fn a_given_joint_acceleration_replaces_the_default_rule_for_that_joint_only() {
    // The roll above accelerates j6 alone at 1000 deg/s². Given j6: 500 deg/s², the limit is
    // 500 whatever joint_acceleration_scale says (0.5 would make the default 420), so the
    // finding reads 1000 against 500; given 1200 the roll passes although the scale-0.5
    // default (420) would refuse it. Naming a joint the robot lacks is refused with the
    // robot's joint names.
    // source: robots/arm6.urdf (j6 velocity 420 deg/s, joints j1..j6); common practice
    // (constant acceleration)
    let head = |given: &str| {
        format!(
            "orientation_speed: 60\nlimits: {{tool_angular_acceleration: 1000, \
             joint_acceleration_scale: 0.5, joint_accelerations: {{{given}}}}}\n"
        )
    };
    let (_d, file) = path_file(&roll(&head("j6: 500"), ""));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1, "{report:#}");
    let f = findings(&report, "joint_acceleration");
    assert!(!f.is_empty() && f.iter().all(|f| f["joint"] == "j6"));
    assert!((f64_of(&f[0]["value"]) - 1000.0).abs() < 1e-6, "{:#}", f[0]);
    assert!((f64_of(&f[0]["limit"]) - 500.0).abs() < 1e-9, "{:#}", f[0]);
    let message = f[0]["message"].as_str().unwrap_or_default();
    assert!(
        message.contains("given in limits.joint_accelerations"),
        "{message}"
    );
    assert_eq!(report["path"]["joint_accelerations_given"][0], "j6");
    let text = armpath().arg("check").arg(&file).output().unwrap();
    let text = String::from_utf8_lossy(&text.stdout);
    assert!(
        text.contains("given in the path file for j6; the default above for the others"),
        "{text}"
    );

    let (_d2, file2) = path_file(&roll(&head("j6: 1200"), ""));
    let (code2, report2) = check_json(&file2, &[]);
    assert!(
        findings(&report2, "joint_acceleration").is_empty(),
        "{report2:#}"
    );
    assert_eq!(code2, 0);

    let (_d3, file3) = path_file(&roll(&head("j7: 100"), ""));
    let out = armpath().arg("check").arg(&file3).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("limits.joint_accelerations.j7")
            && err.contains("no movable joint 'j7'")
            && err.contains("j1, j2, j3, j4, j5, j6"),
        "{err}"
    );
}

#[test]
fn the_html_report_plots_tcp_speed_and_joint_acceleration_over_time() {
    // The trapezoid line of the first test: its TCP speed plot runs against t up to 3.2 s
    // with the job speed drawn as a rule; the acceleration plot labels each joint with its
    // peak, and the hardest joint's label is the summary's ratio.
    // source: the JSON summary of the same run; trapezoid time as in the first test
    let yaml = line_path(
        "tcp_acceleration: 500",
        "  - {name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [150, -100, 0], rpy: [180, 0, 0]}\n",
    );
    let (dir, file) = path_file(&yaml);
    let page = dir.path().join("r.html");
    let (code, report) = check_json(&file, &["--html", page.to_str().unwrap()]);
    assert_eq!(code, 0, "{report:#}");
    let html = std::fs::read_to_string(&page).unwrap();
    let figure = |id: &str| {
        let start = html.find(&format!("<figure id=\"{id}\">")).unwrap();
        let end = html[start..].find("</figure>").unwrap() + start;
        html[start..end].to_string()
    };
    let texts = |fig: &str| -> Vec<String> {
        fig.split("<text")
            .skip(1)
            .filter_map(|t| {
                Some(
                    t.split_once('>')?
                        .1
                        .split("</text>")
                        .next()?
                        .trim()
                        .to_string(),
                )
            })
            .collect()
    };
    let tcp = texts(&figure("time-tcp"));
    assert!(
        tcp.iter().any(|t| t == "t (s)") && tcp.iter().any(|t| t == "mm/s"),
        "{tcp:?}"
    );
    assert!(tcp.iter().any(|t| t == "job speed 100 mm/s"), "{tcp:?}");
    let acc = texts(&figure("time-acc"));
    let hardest = report["summary"]["max_joint_acceleration_joint"]
        .as_str()
        .unwrap();
    let ratio = f64_of(&report["summary"]["max_joint_acceleration_ratio"]);
    let label = format!("{hardest} {:.0} %", ratio * 100.0);
    assert!(acc.contains(&label), "{label} not in {acc:?}");
}

#[test]
fn blends_that_cannot_apply_are_cut_or_ignored_with_a_warning() {
    // a → b → c → d: 200 mm along x, 200 mm along y, then a joint move to d. A 150 mm blend at
    // b is cut to half of the 200 mm neighbours, 100 mm; a blend at c (next to the joint
    // move) and one at d (the last waypoint, where the path stops) are ignored.
    // source: common practice (two blends on one segment must not overlap; a blend joins two
    // straight-line moves)
    let yaml = line_path(
        "",
        "  - {name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [50, -100, 0], rpy: [180, 0, 0], blend: 150}\n  \
         - {name: c, xyz: [50, 100, 0], rpy: [180, 0, 0], blend: 5}\n  - {name: d, xyz: [0, 0, 50], rpy: [180, 0, 0], motion: joint, blend: 5}\n",
    );
    let (_d, file) = path_file(&yaml);
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 0, "{report:#}");
    let notes: Vec<&str> = findings(&report, "input")
        .iter()
        .map(|f| f["message"].as_str().unwrap())
        .collect();
    let has = |parts: &[&str]| notes.iter().any(|m| parts.iter().all(|p| m.contains(p)));
    assert!(
        has(&["waypoints[1]", "blend 150.00 mm cut to 100.00 mm"]),
        "{notes:#?}"
    );
    assert!(
        has(&["waypoints[2]", "ignored next to a joint move"]),
        "{notes:#?}"
    );
    assert!(
        has(&["waypoints[3]", "on the last waypoint ignored"]),
        "{notes:#?}"
    );
    // The cut blend still rounds the corner: its window lasts 2r/v = 2 s, and each side ramps
    // over the other 100 mm of its segment at the default 2000 mm/s²: 100/100 + 100/(2·2000)
    // = 1.025 s, so a → b and b → c take 1.025 + 1 = 2.025 s each, 4.05 s against
    // 2 × (200/100 + 100/2000) = 4.1 s with a stop at b.
    // source: trapezoidal profile (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
    let per = &report["path"]["segment_durations_s"];
    assert!((f64_of(&per[0]) - 2.025).abs() < 1e-9, "{per}");
    assert!((f64_of(&per[1]) - 2.025).abs() < 1e-9, "{per}");
}

#[test]
fn fix_slows_a_segment_whose_joint_accelerates_too_hard_and_scales_the_accelerations() {
    // 10 mm along base x at 40 mm/s while the tool rolls 90° (j6 alone, one to one, as in the
    // roll tests), the tool allowed 100000 deg/s²: u accelerates at the TCP's 2000/10 = 200 /s²
    // (the tool would allow 100000/90 = 1111 /s²), so j6 accelerates at 200 × 90 = 18000 deg/s²
    // against its 840: a = 21.43. Cruising, j6 turns at 4 /s × 90° = 360 deg/s, within 420.
    // Running the path 1/f = √a slower passes: speed 40/√a = 8.64 → 8.6 mm/s, accelerations
    // × 1/a: TCP 2000 → 93.3 mm/s², tool 100000 → 4660 deg/s² (three digits, rounded down);
    // then j6 accelerates at 9.33 /s² × 90° = 839.7 deg/s².
    // source: robots/arm6.urdf (j6 velocity 420 deg/s); common practice (time scaling of a
    // trajectory: speeds × f, accelerations × f²)
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 40\n\
         limits: {{tool_angular_speed: 2000, tool_angular_acceleration: 100000}}\n\
         waypoints:\n  - {{name: a, {}}}\n  - {{name: b, {}}}\n",
        arm6(),
        arm6_pose(&Q0, [0.0; 3], 0.0),
        arm6_pose(&Q0, [10.0, 0.0, 0.0], 90.0)
    );
    let (dir, file) = path_file(&yaml);
    let (code0, before) = check_json(&file, &[]);
    assert_eq!(code0, 1, "{before:#}");
    let f = findings(&before, "joint_acceleration");
    assert!(f.iter().any(|f| f["joint"] == "j6"), "{before:#}");
    assert!(findings(&before, "joint_speed").is_empty(), "{before:#}");
    let out = dir.path().join("fixed.yaml");
    let res = armpath()
        .args([
            "fix",
            file.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--json",
            "-",
        ])
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&res.stdout);
    assert_eq!(
        res.status.code(),
        Some(0),
        "{stdout}{}",
        String::from_utf8_lossy(&res.stderr)
    );
    let r: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    let s = &r["speeds"][0];
    assert!(
        (f64_of(&s["acceleration_ratio"]) - 18000.0 / 840.0).abs() < 1e-6,
        "{s:#}"
    );
    assert_eq!(s["limited_by"], "j6 acceleration");
    assert_eq!(s["proposed"].as_f64(), Some(8.6), "{s:#}");
    let text = std::fs::read_to_string(&out).unwrap();
    let amended: serde_yaml::Value = serde_yaml::from_str(&text).unwrap();
    assert_eq!(
        amended["limits"]["tcp_acceleration"].as_f64(),
        Some(93.3),
        "{text}"
    );
    assert_eq!(
        amended["limits"]["tool_angular_acceleration"].as_f64(),
        Some(4660.0),
        "{text}"
    );
    let (code, after) = check_json(&out, &[]);
    assert_eq!(code, 0, "{after:#}");
    assert!(findings(&after, "joint_acceleration").is_empty());
    let worst = f64_of(&after["summary"]["max_joint_acceleration_ratio"]);
    assert!(worst <= 1.0 && worst > 0.99, "{worst}");
}
