//! Every finding kind of `armpath check`, each on a purpose-built path whose answer is derived
//! independently of the checker (derivation beside each test).
#![allow(non_snake_case)]

mod common;
use common::*;

#[test]
fn unreachable_starts_at_the_reach_boundary_from_link_lengths() {
    // Derivation: with the nozzle pointing straight down, the wrist centre sits
    // L_tool + c4 above the TCP. In the arm's vertical plane the wrist centre can be at most
    // c2 + sqrt(a2² + c3²) from the shoulder point (a1, c1) (elbow stretched), so along the
    // line z_tcp = 0.9 m the last reachable x is
    //   x_max = a1 + sqrt((c2 + sqrt(a2² + c3²))² − (z_tcp + L_tool + c4 − c1)²).
    // source: robots/arm6.urdf geometry; planar two-link reach (Craig 2005, ch. 4 workspace)
    let (z_tcp, l_tool) = (0.9, 0.18);
    let arm = C2 + (A2 * A2 + C3 * C3).sqrt();
    let dz = z_tcp + l_tool + C4 - C1;
    let x_max = A1 + (arm * arm - dz * dz).sqrt();
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 100\n\
         waypoints:\n  - {{name: near, xyz: [700, 0, 900], rpy: [180, 0, 0]}}\n  - {{name: far, xyz: [1500, 0, 900], rpy: [180, 0, 0]}}\n",
        arm6()
    );
    let (_d, file) = path_file(&yaml);
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1, "error findings exit 1");
    let unreachable = findings(&report, "unreachable");
    assert_eq!(unreachable.len(), 1, "{report:#}");
    let f = unreachable[0];
    assert_eq!(f["severity"], "error");
    assert_eq!(f["from"], "near");
    assert_eq!(f["to"], "far");
    let x_first = 0.7 + f64_of(&f["s_mm"][0]) / 1e3;
    let x_last = 0.7 + f64_of(&f["s_mm"][1]) / 1e3;
    // The first unreachable sample is the first 1 mm sample past x_max.
    assert!(
        x_first > x_max && x_first <= x_max + 0.001 + 1e-9,
        "first unreachable at x = {x_first}, boundary {x_max}"
    );
    assert!((x_last - 1.5).abs() < 1e-9, "stays unreachable to the end");
}

#[test]
fn tool_angular_speed_is_angle_over_time() {
    // Derivation: a 100 mm line at 10 mm/s takes 10 s; the tool turns 90° about its axis on
    // the way, at a constant rate along the geodesic: 90° / 10 s = 9 deg/s. With a limit of
    // 5 deg/s the speed that fixes it is 10 mm/s × 5/9 = 5.6 mm/s.
    // source: common practice (angular speed = angle / time on a constant-rate geodesic)
    let base = |limit: f64| {
        format!(
            "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\nlimits: {{tool_angular_speed: {limit}}}\n\
             waypoints:\n  - {{name: a, xyz: [900, -50, 600], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [900, 50, 600], rpy: [180, 0, 90]}}\n",
            arm6()
        )
    };
    let (_d, file) = path_file(&base(5.0));
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1);
    let f = findings(&report, "tool_angular_speed");
    assert_eq!(f.len(), 1, "{report:#}");
    assert!((f64_of(&f[0]["value"]) - 9.0).abs() < 1e-6);
    assert!((f64_of(&f[0]["limit"]) - 5.0).abs() < 1e-9);
    assert_eq!(f[0]["unit"], "deg/s");
    assert!(f[0]["message"].as_str().unwrap().contains("5.6 mm/s"));
    assert!((f64_of(&report["summary"]["max_tool_angular_speed_deg_s"]) - 9.0).abs() < 1e-6);
    let (_d2, file2) = path_file(&base(10.0));
    let (code2, report2) = check_json(&file2, &[]);
    assert!(findings(&report2, "tool_angular_speed").is_empty());
    assert_eq!(code2, 0, "{report2:#}");
}

/// Waypoints (base frame, mm / quaternion) that roll the tool about its own axis at the pose
/// FK(q0), in `steps` rolls of `step_deg` each.
fn roll_waypoints(q0_deg: &[f64], steps: usize, step_deg: f64) -> String {
    let mut out = String::from("waypoints:\n");
    for k in 0..=steps {
        out += &format!(
            "  - {{name: r{k}, {}}}\n",
            arm6_pose(q0_deg, [0.0; 3], step_deg * k as f64)
        );
    }
    out
}

#[test]
fn joint_wound_past_its_range_by_repeated_rolls() {
    // Derivation: the tool sits on the flange axis, so rolling it about its own z axis at a
    // fixed TCP turns joint 6 alone, one to one: j6 = 0.2° + roll. Five rolls of 120° ask
    // for 600.2°, beyond j6's +360°. With samples every 0.5° of roll (the default angle
    // step) j6 first exceeds 360° at roll 360.0°, the end of the third roll, and first comes
    // within the 5° margin at roll 355.0°, 115° into the third roll. Each roll runs from rest
    // to rest at ω = 30 deg/s with the default tool angular acceleration α = 720 deg/s²:
    // T = θ/ω + ω/α = 4 + 1/24 s, so the third roll ends at t = 3T = 12.125 s; its ramp up
    // takes ω/α = 1/24 s over ω²/2α = 0.625°, and it cruises at 115° (the ramp down is the
    // last 0.625°), so t = 2T + 1/24 + (115 − 0.625)/30 = 11.9375 s.
    // source: robots/arm6.urdf (j6 range ±360°, j6 axis = flange z); trapezoidal profile
    // T = L/v + v/a (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
    let q0 = [0.0, 30.0, -20.0, 0.0, 45.0, 0.2];
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\norientation_speed: 30\n\
         start_joints: [0, 30, -20, 0, 45, 0.2]\n{}",
        arm6(),
        roll_waypoints(&q0, 5, 120.0)
    );
    let (_d, file) = path_file(&yaml);
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1);
    let limit: Vec<_> = findings(&report, "joint_limit");
    assert!(!limit.is_empty(), "{report:#}");
    assert!(limit.iter().all(|f| f["joint"] == "j6"));
    let first = limit[0];
    assert!(
        (f64_of(&first["t_s"][0]) - 12.125).abs() < 1e-9,
        "{first:#}"
    );
    assert!((f64_of(&first["limit"]) - 360.0).abs() < 1e-9);
    let worst = limit
        .iter()
        .map(|f| f64_of(&f["value"]))
        .fold(0.0f64, f64::max);
    assert!((worst - 600.2).abs() < 1e-3, "worst j6 {worst}");
    let near = findings(&report, "near_joint_limit");
    assert_eq!(near[0]["joint"], "j6");
    assert_eq!(near[0]["severity"], "warning");
    assert!(
        (f64_of(&near[0]["t_s"][0]) - 11.9375).abs() < 1e-9,
        "{:#}",
        near[0]
    );
}

#[test]
fn joint_speed_of_a_pure_roll_equals_the_roll_rate() {
    // Derivation: as above, a roll about the tool axis turns j6 one to one, so at a
    // programmed reorientation speed of 500 deg/s j6 runs at 500 deg/s against its 420 deg/s
    // (robots/arm6.urdf): ratio 1.19, speed factor 420/500 = 0.84. The accelerations are set
    // out of the way (1e5 deg/s², joints × 1000): at the default 720 deg/s² a 90° roll would
    // peak at √(720 · 90) ≈ 255 deg/s and never reach the programmed speed.
    // source: robots/arm6.urdf j6 velocity 7.330383 rad/s (420 deg/s); triangular profile
    // peak √(a·L) (Biagiotti & Melchiorri 2008, §3.2.2; from memory)
    let q0 = [0.0, 30.0, -20.0, 0.0, 45.0, 0.2];
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\norientation_speed: 500\n\
         limits: {{tool_angular_speed: 1000, tool_angular_acceleration: 100000, joint_acceleration_scale: 1000}}\n\
         start_joints: [0, 30, -20, 0, 45, 0.2]\n{}",
        arm6(),
        roll_waypoints(&q0, 1, 90.0)
    );
    let (_d, file) = path_file(&yaml);
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1);
    let f = findings(&report, "joint_speed");
    assert_eq!(f.len(), 1, "{report:#}");
    assert_eq!(f[0]["joint"], "j6");
    assert!((f64_of(&f[0]["value"]) - 500.0).abs() < 0.01, "{:#}", f[0]);
    assert!((f64_of(&f[0]["limit"]) - 420.0).abs() < 0.01);
    assert!(f[0]["message"]
        .as_str()
        .unwrap()
        .contains("speed factor 0.84"));
    // At 400 deg/s the roll is within j6's speed.
    let yaml_ok = yaml.replace("orientation_speed: 500", "orientation_speed: 400");
    let (_d2, file2) = path_file(&yaml_ok);
    let (code2, report2) = check_json(&file2, &[]);
    assert!(findings(&report2, "joint_speed").is_empty());
    assert_eq!(code2, 0, "{report2:#}");
}

fn wrist_line(z_mm: f64, end_rpy: &str) -> String {
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 120], rpy: [0, 0, 0]}}\nwork_frame: {{xyz: [1050, 0, {z_mm}], rpy: [0, 0, 0]}}\nspeed: 25\n\
         waypoints:\n  - {{name: left, xyz: [0, -200, 0], rpy: [0, 90, 0]}}\n  - {{name: right, xyz: [0, 200, 0], rpy: {end_rpy}}}\n",
        arm6()
    )
}

#[test]
fn wrist_singularity_is_closest_at_the_symmetric_point() {
    // Derivation: the spindle points along +x; the line runs along y, 10 mm above the height
    // of axis 4 at the zero pose (c1 + c2 − a2 = 0.93 m, so z = 0.94 m). The arm and the
    // path are mirror-symmetric about the x–z plane, so the measure is symmetric in y and the
    // closest approach to the wrist singularity (forearm pointing along the spindle: axes 4
    // and 6 nearly aligned) is at y = 0, s = 200 mm.
    // source: Siciliano et al. 2009, §3.3 (wrist singularity: axes 4 and 6 aligned);
    // robots/arm6.urdf geometry
    let z = (C1 + C2 - A2) * 1e3 + 10.0;
    let (_d, file) = path_file(&wrist_line(z, "[0, 90, 0]"));
    let (_code, report) = check_json(&file, &[]);
    let f = findings(&report, "singularity");
    assert_eq!(f.len(), 1, "{report:#}");
    assert_eq!(f[0]["severity"], "warning");
    assert!(f[0]["message"]
        .as_str()
        .unwrap()
        .contains("wrist singularity"));
    let s = &f[0]["s_mm"];
    assert!(f64_of(&s[0]) < 200.0 && f64_of(&s[1]) > 200.0);
    assert!((f64_of(&report["summary"]["min_singularity_s_mm"]) - 200.0).abs() <= 1.0);
    assert_eq!(report["summary"]["min_singularity_class"], "wrist");
}

#[test]
fn jump_through_an_exact_wrist_singularity_keeps_j4_plus_j6() {
    // Derivation: the line passes exactly through the height of axis 4 while the tool rolls
    // about its x axis. Where axes 4 and 6 coincide (θ5 = 0) only θ4 + θ6 sets the tool's
    // orientation, and the solutions on the two sides of that point meet with different θ4:
    // the joint path is discontinuous there, and across the jump θ4 and θ6 change by equal
    // and opposite amounts.
    // source: Siciliano et al. 2009, §3.3 (at θ5 = 0 only θ4 + θ6 is determined)
    // The numerical tracker follows the motion by continuity through the singular point.
    let z = (C1 + C2 - A2) * 1e3;
    let (_d, file) = path_file(&wrist_line(z, "[30, 90, 0]"));
    let (code, report) = check_json(&file, &["--ik", "numeric"]);
    assert_eq!(code, 1);
    let jumps = findings(&report, "joint_jump");
    assert_eq!(jumps.len(), 1, "{report:#}");
    let d = &jumps[0]["joint_deltas"];
    let (d4, d6) = (f64_of(&d["j4"]), f64_of(&d["j6"]));
    assert!(d4.abs() > 5.0, "j4 jumps: {d4}");
    assert!((d4 + d6).abs() < 0.5, "θ4 + θ6 kept: {d4} {d6}");
    assert!(jumps[0]["limit"].is_null());
    // The jump lies where the arm is at the wrist singularity.
    let sing = findings(&report, "singularity");
    let at = f64_of(&jumps[0]["s_mm"][0]);
    assert!(sing
        .iter()
        .any(|f| f64_of(&f["s_mm"][0]) <= at && at <= f64_of(&f["s_mm"][1])));

    // The closed-form solver stays on the first pose's wrist branch, so at the singular
    // point j4 and j6 turn by equal and opposite amounts within one sample step: equal
    // speeds, far beyond their limits, at the same place.
    let (_code, report) = check_json(&file, &[]);
    let speeds = findings(&report, "joint_speed");
    let j4 = speeds
        .iter()
        .find(|f| f["joint"] == "j4")
        .expect("j4 too fast");
    let j6 = speeds
        .iter()
        .find(|f| f["joint"] == "j6")
        .expect("j6 too fast");
    assert_eq!(j4["s_mm"], j6["s_mm"]);
    let (v4, v6) = (f64_of(&j4["value"]), f64_of(&j6["value"]));
    assert!((v4 - v6).abs() < 1e-6 * v4, "{v4} vs {v6}");
    assert!(v4 > 10.0 * 330.0, "a jump-like swing: {v4} deg/s");
}

#[test]
fn a_half_turn_between_waypoints_is_an_input_warning() {
    // Derivation: a 180° relative rotation has two shortest arcs (q and −q are equidistant).
    // source: Lynch & Park 2017, §3.2.3.3 (log of a rotation by π is not unique)
    let yaml = format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 10\norientation_speed: 30\n\
         waypoints:\n  - {{name: a, xyz: [900, 0, 600], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [900, 20, 600], rpy: [180, 0, 180]}}\n",
        arm6()
    );
    let (_d, file) = path_file(&yaml);
    let (_code, report) = check_json(&file, &[]);
    let input = findings(&report, "input");
    assert_eq!(input.len(), 1, "{report:#}");
    assert_eq!(input[0]["severity"], "warning");
    assert!(input[0]["message"].as_str().unwrap().contains("half turn"));
}
