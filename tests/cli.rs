//! The small commands and the exit-code contract, through the binary.

mod common;
use common::*;

#[test]
fn robot_lists_joints_and_wrist() {
    // source: robots/arm6.urdf (six joints j1..j6, j6 range ±360°, spherical wrist) and
    // robots/arm6_offset.urdf (offset wrist)
    let (code, j) = json_of(&["robot", &arm6(), "--json", "-"]);
    assert_eq!(code, 0);
    assert_eq!(j["name"], "armpath_arm6");
    assert_eq!(j["dof"], 6);
    assert_eq!(j["spherical_wrist"], true);
    assert_eq!(j["joints"].as_array().unwrap().len(), 6);
    assert_eq!(j["joints"][5]["name"], "j6");
    assert!((f64_of(&j["joints"][5]["upper"]) - 360.0).abs() < 1e-6);
    let offset = repo("robots/arm6_offset.urdf").display().to_string();
    let (_, j) = json_of(&["robot", &offset, "--json", "-"]);
    assert_eq!(j["spherical_wrist"], false);
    for r in [
        "robots/arm6.urdf",
        "robots/arm6_offset.urdf",
        "robots/arm7.urdf",
    ] {
        armpath()
            .args(["robot", &repo(r).display().to_string()])
            .assert()
            .success();
    }
}

#[test]
fn fk_at_the_zero_pose() {
    // source: robots/arm6.urdf header: at zero the flange is at (930, 0, 930) mm facing +x
    // (flange z = base +x, flange x = base −z), i.e. R = Ry(90°), quaternion (cos 45°, 0,
    // sin 45°, 0), rpy (0, 90°, 0)
    let (code, j) = json_of(&["fk", &arm6(), "--joints", "0,0,0,0,0,0", "--json", "-"]);
    assert_eq!(code, 0);
    let xyz: Vec<f64> = j["xyz_mm"].as_array().unwrap().iter().map(f64_of).collect();
    for (a, b) in xyz.iter().zip([930.0, 0.0, 930.0]) {
        assert!((a - b).abs() < 1e-9, "{xyz:?}");
    }
    let q: Vec<f64> = j["quat_wxyz"]
        .as_array()
        .unwrap()
        .iter()
        .map(f64_of)
        .collect();
    let h = std::f64::consts::FRAC_1_SQRT_2;
    for (a, b) in q.iter().zip([h, 0.0, h, 0.0]) {
        assert!((a - b).abs() < 1e-12, "{q:?}");
    }
    assert!((f64_of(&j["rpy_deg"][1]) - 90.0).abs() < 1e-6);
    // A 100 mm tool along the flange z moves the TCP to x = 1030 mm.
    let (_, j) = json_of(&[
        "fk",
        &arm6(),
        "--joints",
        "0,0,0,0,0,0",
        "--tool",
        "0,0,100,0,0,0",
        "--json",
        "-",
    ]);
    assert!((f64_of(&j["xyz_mm"][0]) - 1030.0).abs() < 1e-9);
}

#[test]
fn ik_round_trips_through_fk_on_every_robot() {
    // source: common practice (FK of the IK solution must reproduce the pose within the
    // 0.01 mm / 0.001° tolerance)
    for (r, q) in [
        ("robots/arm6.urdf", "10,20,-30,40,50,60"),
        ("robots/arm6_offset.urdf", "10,-60,70,-40,50,60"),
        ("robots/arm7.urdf", "10,20,-30,40,50,60,-20"),
    ] {
        let urdf = repo(r).display().to_string();
        let (_, pose) = json_of(&["fk", &urdf, "--joints", q, "--json", "-"]);
        let p: Vec<String> = pose["xyz_mm"]
            .as_array()
            .unwrap()
            .iter()
            .chain(pose["quat_wxyz"].as_array().unwrap())
            .map(|v| format!("{}", f64_of(v)))
            .collect();
        let (code, ik) = json_of(&["ik", &urdf, "--pose", &p.join(","), "--json", "-"]);
        assert_eq!(code, 0, "{r}: {ik}");
        let sol = &ik["solutions"][0];
        assert!(f64_of(&sol["residual_mm"]) < 0.01);
        assert!(f64_of(&sol["residual_deg"]) < 0.001);
        let joints: Vec<String> = sol["joints_deg"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| format!("{}", f64_of(v)))
            .collect();
        let (_, back) = json_of(&["fk", &urdf, "--joints", &joints.join(","), "--json", "-"]);
        for k in 0..3 {
            assert!((f64_of(&back["xyz_mm"][k]) - f64_of(&pose["xyz_mm"][k])).abs() < 0.01);
        }
    }
}

#[test]
fn unreachable_ik_exits_1_and_bad_usage_exits_2() {
    // source: common practice (exit codes documented in README: 1 findings, 2 bad input)
    armpath()
        .args(["ik", &arm6(), "--pose", "5000,0,0,1,0,0,0"])
        .assert()
        .code(1);
    for args in [
        vec!["fk", arm6().as_str(), "--joints", "1,2,3"],
        vec!["fk", arm6().as_str(), "--joints", "1,2,3,x,5,6"],
        vec!["ik", arm6().as_str(), "--pose", "0,0,0,0,0,0,0"],
        vec!["fk", "/nonexistent/robot.urdf", "--joints", "0,0,0,0,0,0"],
        vec!["check", "/nonexistent/path.yaml"],
        vec!["frobnicate"],
    ] {
        let out = armpath().args(&args).output().unwrap();
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(!err.contains("panicked"), "{err}");
        assert!(!err.is_empty());
    }
}

#[test]
fn demo_paths_give_their_documented_verdicts() {
    // source: the expected results written in each demo file's header comment
    for (file, code, verdict) in [
        ("paths/bracket_fillet.yaml", 0, "pass"),
        ("paths/panel_raster.yaml", 0, "warn"),
        ("paths/wrist_crossing.yaml", 1, "fail"),
        ("paths/beyond_reach.yaml", 1, "fail"),
    ] {
        let (c, report) = check_json(&repo(file), &[]);
        assert_eq!(c, code, "{file}");
        assert_eq!(report["summary"]["verdict"], verdict, "{file}");
        assert_eq!(report["cautions"].as_array().unwrap().len(), 5);
        assert!(report["cautions"][2].as_str().unwrap().contains("250 mm/s"));
    }
    let beyond = check_json(&repo("paths/beyond_reach.yaml"), &[]).1;
    assert!(!findings(&beyond, "unreachable").is_empty());
    let wrist = check_json(&repo("paths/wrist_crossing.yaml"), &[]).1;
    assert!(!findings(&wrist, "singularity").is_empty());
    assert!(!findings(&wrist, "joint_speed").is_empty());
}

#[test]
fn text_report_and_joint_csv() {
    // source: common practice (one CSV row per sample plus a header; text carries cautions)
    let dir = tempfile::tempdir().unwrap();
    let csv = dir.path().join("joints.csv");
    let out = armpath()
        .args([
            "check",
            &repo("paths/bracket_fillet.yaml").display().to_string(),
        ])
        .arg("--joints")
        .arg(&csv)
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("verdict  PASS"));
    assert!(text.contains("not a safety assessment"));
    assert!(!text.contains('\x1b'), "no colour when not a terminal");
    let rows = std::fs::read_to_string(&csv).unwrap();
    let mut lines = rows.lines();
    assert_eq!(
        lines.next().unwrap(),
        "t_s,s_mm,segment,j1_deg,j2_deg,j3_deg,j4_deg,j5_deg,j6_deg,\
         j1_deg_s,j2_deg_s,j3_deg_s,j4_deg_s,j5_deg_s,j6_deg_s,\
         j1_deg_s2,j2_deg_s2,j3_deg_s2,j4_deg_s2,j5_deg_s2,j6_deg_s2,tcp_mm_s"
    );
    let (_, report) = check_json(&repo("paths/bracket_fillet.yaml"), &[]);
    assert_eq!(
        lines.count() as u64,
        report["summary"]["samples"].as_u64().unwrap()
    );
}

#[test]
fn absurd_sample_counts_are_refused_with_the_option_that_raises_the_cap() {
    // Derivation: the demo path is 877 mm long; a 1 nm step implies 8.77e8 samples, above
    // the 1e8 cap; with --max-samples 1e9 the plan is accepted (checked here on a shorter
    // cap only, to keep the test fast: 1 µm step = 8.77e5 samples, between 1e5 and 1e6).
    // source: common practice (refuse runaway work with a named override)
    let demo = repo("paths/bracket_fillet.yaml").display().to_string();
    let out = armpath()
        .args(["check", &demo, "--step", "0.000001"])
        .timeout(std::time::Duration::from_secs(10))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--max-samples") && err.contains("sampling"),
        "{err}"
    );
    let out = armpath()
        .args(["check", &demo, "--step", "0.001", "--max-samples", "100000"])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(2));
    armpath()
        .args([
            "check",
            &demo,
            "--step",
            "0.001",
            "--max-samples",
            "1000000",
            "-q",
        ])
        .assert()
        .code(0);
}
