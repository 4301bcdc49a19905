//! Closed-form IK through the binary: all solutions with their configurations, the arm's
//! parameters, and the configuration table of `check`.

mod common;
use common::*;

#[test]
fn robot_reports_the_closed_form_parameters() {
    // source: robots/arm6.urdf header (a1 0.15, a2 0.12, b 0, c1 0.45, c2 0.60, c3 0.68,
    // c4 0.10 m)
    let (_, j) = json_of(&["robot", &arm6(), "--json", "-"]);
    let p = &j["closed_form"]["parameters"];
    for (k, v) in [
        ("a1", 0.15),
        ("a2", 0.12),
        ("b", 0.0),
        ("c1", 0.45),
        ("c2", 0.60),
        ("c3", 0.68),
        ("c4", 0.10),
    ] {
        assert!((f64_of(&p[k]) - v).abs() < 1e-9, "{k}");
    }
    let offset = repo("robots/arm6_offset.urdf").display().to_string();
    let (_, j) = json_of(&["robot", &offset, "--json", "-"]);
    assert!(j["closed_form"]["family"].is_null());
    assert!(j["closed_form"]["reason"]
        .as_str()
        .unwrap()
        .contains("spherical wrist"));
}

#[test]
fn ik_all_lists_every_configuration_with_the_true_joints_among_them() {
    // Joints chosen away from every limit and singularity; the six-joint arm then has eight
    // closed-form solutions (Pieper 1968; Brandstötter et al. 2014: up to eight), of which
    // those inside the ranges are listed, j6 (±360°) with both of its windings.
    // source: Brandstötter, Angerer & Hofbaur 2014 (up to eight solutions); robots/arm6.urdf
    let q = "20,30,-40,50,60,70";
    let (_, pose) = json_of(&["fk", &arm6(), "--joints", q, "--json", "-"]);
    let p: Vec<String> = pose["xyz_mm"]
        .as_array()
        .unwrap()
        .iter()
        .chain(pose["quat_wxyz"].as_array().unwrap())
        .map(|v| format!("{}", f64_of(v)))
        .collect();
    let (code, ik) = json_of(&[
        "ik",
        &arm6(),
        "--pose",
        &p.join(","),
        "--all",
        "--json",
        "-",
    ]);
    assert_eq!(code, 0);
    let sols = ik["solutions"].as_array().unwrap();
    assert!(sols.len() >= 2, "{ik:#}");
    let truth = [20.0, 30.0, -40.0, 50.0, 60.0, 70.0];
    let found = sols.iter().any(|s| {
        s["joints_deg"]
            .as_array()
            .unwrap()
            .iter()
            .zip(truth)
            .all(|(a, b)| (f64_of(a) - b).abs() < 1e-6)
    });
    assert!(found, "true joints missing: {ik:#}");
    for s in sols {
        assert!(f64_of(&s["residual_mm"]) < 1e-6);
        assert!(s["config"].as_str().unwrap().split('/').count() == 3);
        // j6 windings come in pairs 360° apart.
        let j6 = f64_of(&s["joints_deg"][5]);
        assert!(sols
            .iter()
            .any(|o| ((f64_of(&o["joints_deg"][5]) - j6).abs() - 360.0).abs() < 1e-6));
    }
    // An arm outside the family says so.
    let offset = repo("robots/arm6_offset.urdf").display().to_string();
    armpath()
        .args(["ik", &offset, "--pose", &p.join(","), "--all"])
        .assert()
        .code(2);
}

#[test]
fn configuration_table_and_its_suggestion_hold_on_recheck() {
    // The panel raster asked for in the noflip wrist configuration: the table says which
    // configurations run it; re-checking the path in the suggested configuration must pass,
    // and the first stop of the requested one must match its own check's first error.
    // source: common practice (a suggested fix is verified by running the check again)
    let panel = std::fs::read_to_string(repo("paths/panel_raster.yaml")).unwrap();
    let panel = panel.replace("../robots/arm6.urdf", &arm6());
    let asked = panel.replace("speed: 300\n", "speed: 300\nconfig: {wrist: noflip}\n");
    let (_d, file) = path_file(&asked);
    let (code, report) = check_json(&file, &[]);
    let rows = report["configurations"].as_array().unwrap();
    assert_eq!(rows.len(), 8);
    let used = report["path"]["start"]["config"]
        .as_str()
        .unwrap()
        .to_string();
    assert!(used.ends_with("/noflip"));
    let used_row = rows.iter().find(|r| r["config"] == used.as_str()).unwrap();
    let runs: Vec<&str> = rows
        .iter()
        .filter(|r| r["runs"] == true)
        .map(|r| r["config"].as_str().unwrap())
        .collect();
    assert!(!runs.is_empty());
    if used_row["runs"] == false {
        assert_eq!(code, 1);
        let stop = &used_row["first_failure"];
        let kind = stop["kind"].as_str().unwrap();
        let first = findings(&report, kind)[0];
        assert!((f64_of(&first["s_mm"][0]) - f64_of(&stop["s_mm"])).abs() < 1e-9);
        assert!(first["message"].as_str().unwrap().contains(runs[0]));
    }
    let parts: Vec<&str> = runs[0].split('/').collect();
    let fixed = panel.replace(
        "speed: 300\n",
        &format!(
            "speed: 300\nconfig: {{shoulder: {}, elbow: {}, wrist: {}}}\n",
            parts[0], parts[1], parts[2]
        ),
    );
    let (_d2, file2) = path_file(&fixed);
    let (code2, report2) = check_json(&file2, &[]);
    assert_eq!(report2["path"]["start"]["config"], runs[0]);
    assert_eq!(code2, 0, "{report2:#}");
}

#[test]
fn numeric_mode_and_arms_outside_the_family_have_no_table() {
    // source: common practice (the table needs every configuration, i.e. the closed form)
    let (_, report) = check_json(&repo("paths/bracket_fillet.yaml"), &["--ik", "numeric"]);
    assert!(report["configurations"].is_null());
    assert!(report["path"]["start"]["config"].is_null());
    let (_, report) = check_json(&repo("paths/bracket_fillet.yaml"), &[]);
    assert_eq!(report["configurations"].as_array().unwrap().len(), 8);
}
