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
fn a_blended_right_angle_saves_the_stop_and_slows_the_bead_to_v_over_root_two() {
    // a → b → c: 200 mm along x, then 200 mm along y, at 100 mm/s with 500 mm/s², blend 10 mm
    // at b. The blend window lasts 2r/v = 0.2 s. Each segment ramps from rest to cruise (or
    // back) over its 190 mm outside the window: 190/100 + 100/(2·500) = 2.0 s, plus half the
    // window: 2.1 s each, 4.2 s in all (4.4 s when stopping at b: 2 × (200/100 + 100/500)).
    // In the window the velocity moves linearly from v·x̂ to v·ŷ, so at b's sample (the window's
    // middle) the speed is |v·x̂ + v·ŷ|/2 = v/√2 = 70.71 mm/s, below 95 % of 100 mm/s.
    // source: trapezoidal profile (Biagiotti & Melchiorri 2008, §3.2.2; from memory);
    // common practice (the speed of a linear velocity blend)
    let corner = |blend: &str| {
        line_path(
            "tcp_acceleration: 500",
            &format!(
                "  - {{name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [50, -100, 0], rpy: [180, 0, 0], process: true{blend}}}\n  \
                 - {{name: c, xyz: [50, 100, 0], rpy: [180, 0, 0], process: true}}\n"
            ),
        )
    };
    let (_d, file) = path_file(&corner(", blend: 10"));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 0, "{report:#}");
    assert!(
        (f64_of(&report["summary"]["duration_s"]) - 4.2).abs() < 1e-9,
        "{report:#}"
    );
    let per = &report["path"]["segment_durations_s"];
    assert!((f64_of(&per[0]) - 2.1).abs() < 1e-9 && (f64_of(&per[1]) - 2.1).abs() < 1e-9);
    let dips = findings(&report, "process_speed");
    let at_b = dips
        .iter()
        .find(|f| f64_of(&f["s_mm"][0]) <= 200.0 && f64_of(&f["s_mm"][1]) >= 200.0)
        .unwrap_or_else(|| panic!("{report:#}"));
    assert!(
        (f64_of(&at_b["value"]) - 100.0 / 2f64.sqrt()).abs() < 1e-6,
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

#[test]
fn a_blended_right_angle_bottoms_out_at_v_cos_45_in_the_joint_csv() {
    // a → b → c: 200 mm along x, 200 mm along y at v = 100 mm/s, blend 10 mm at b, window
    // 2h = 2r/v = 0.2 s. Derivation: inside the window the velocity is
    // v(σ) = v_in + (v_out − v_in)·σ/(2h), σ ∈ [0, 2h], with v_in = v·x̂ and v_out = v·ŷ, so
    // |v(σ)|² = v²·((1 − λ)² + λ²), λ = σ/(2h): smallest at λ = ½, where it is v²/2, i.e. the
    // speed is v·cos 45° = 70.711 mm/s (generally v·cos(θ/2) for a turn θ); at the window's
    // edges it is v. The sample at b is the window's middle. Outside the window (and away
    // from the rests at a and c) the TCP cruises at v.
    // source: the velocity of a parabolic blend (a velocity changing linearly in time,
    // derived here); trapezoidal profile (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
    let yaml = line_path(
        "tcp_acceleration: 500",
        "  - {name: a, xyz: [-150, -100, 0], rpy: [180, 0, 0]}\n  - {name: b, xyz: [50, -100, 0], rpy: [180, 0, 0], blend: 10}\n  \
         - {name: c, xyz: [50, 100, 0], rpy: [180, 0, 0]}\n",
    );
    let (dir, file) = path_file(&yaml);
    let csv = dir.path().join("joints.csv");
    let (code, report) = check_json(&file, &["--joints", csv.to_str().unwrap()]);
    assert_eq!(code, 0, "{report:#}");
    let rows = std::fs::read_to_string(&csv).unwrap();
    let header: Vec<&str> = rows.lines().next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (tcp, s_col) = (col("tcp_mm_s"), col("s_mm"));
    let samples: Vec<(f64, f64)> = rows
        .lines()
        .skip(1)
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[s_col].parse().unwrap(), f[tcp].parse().unwrap())
        })
        .collect();
    // Path distance runs along the straight segments: the window spans 190 … 210 mm.
    let in_window: Vec<f64> = samples
        .iter()
        .filter(|(s, _)| (190.0..=210.0).contains(s))
        .map(|&(_, v)| v)
        .collect();
    assert!(in_window.len() >= 5, "{samples:?}");
    let lowest = in_window.iter().cloned().fold(f64::INFINITY, f64::min);
    // The CSV writes speeds with four decimals: half a unit of the last one is the tolerance.
    assert!(
        (lowest - 100.0 * 45f64.to_radians().cos()).abs() <= 5e-5,
        "{lowest}"
    );
    assert!(in_window.iter().all(|&v| v <= 100.0 + 1e-9));
    let cruising = samples
        .iter()
        .filter(|(s, _)| (50.0..=180.0).contains(s) || (220.0..=350.0).contains(s));
    assert!(cruising.clone().count() > 100);
    assert!(cruising.into_iter().all(|&(_, v)| (v - 100.0).abs() < 1e-9));
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
