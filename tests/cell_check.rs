//! The collision and clearance check through the binary: the demo rib weld and its colliding
//! twin, a thin wall between two samples, a process contact's depth bound, the `--cell` flag,
//! the cost-free check without a cell, and the amended file of `fix` carrying the cell.
//! Answers derived beside each test.
#![allow(non_snake_case)]

mod common;
use common::*;

#[test]
fn the_rib_weld_passes_and_its_twin_drives_the_torch_into_the_rib() {
    // paths/rib_weld_collides.yaml leans the torch 45° from the rib's far side: the torch
    // neck (radius 15 mm, from 30 mm behind the TCP) points down at 45° toward +x with the
    // TCP on the rib's near face foot (x = 0; the rib spans x = −20 … 0 mm). The neck's near
    // end disc is centred 30 mm up the axis, at x = −30/√2; its rim reaches 15/√2 further
    // toward +x, to x = −15/√2 = −10.61 mm, i.e. 20 − 10.61 = 9.39 mm inside the rib's far
    // face (x = −20), and pushing it back out along −x is the shortest way out (the rib's top
    // is 80 mm up). Along the weld that depth is the same at every sample.
    // source: common practice (support of a tilted disc; slab penetration along its normal)
    let (code, good) = check_json(&repo("paths/rib_weld.yaml"), &[]);
    assert_eq!(code, 0, "{good:#}");
    assert!(findings(&good, "collision").is_empty(), "{good:#}");
    assert_eq!(good["cell"]["bodies"], 16);
    let caution = good["cautions"][3].as_str().unwrap();
    assert!(caution.starts_with("Collisions are checked only against the modelled geometry"));

    let (code, bad) = check_json(&repo("paths/rib_weld_collides.yaml"), &[]);
    assert_eq!(code, 1);
    let weld: Vec<_> = findings(&bad, "collision")
        .into_iter()
        .filter(|f| f["bodies"][0] == "torch" && f["bodies"][1] == "rib" && f["segment"] == 2)
        .collect();
    assert_eq!(weld.len(), 1, "{bad:#}");
    let depth = -f64_of(&weld[0]["value"]);
    assert!(
        (depth - (20.0 - 15.0 / 2f64.sqrt())).abs() < 0.05,
        "{depth}"
    );
    assert_eq!(weld[0]["severity"], "error");
    assert_eq!(weld[0]["from"], "seam_start");
    assert_eq!(weld[0]["to"], "seam_end");
}

#[test]
fn a_thin_wall_between_two_samples_5_mm_apart_is_found() {
    // A 1 mm ball on the TCP moves along x in 5 mm samples (900, 905, … mm). A 2 mm wall
    // spans x = 951.5 … 953.5 mm: the samples at 950 and 955 clear it by 0.5 mm, so only the
    // between-samples rule can see the ball pass through. Halfway the ball sits in the
    // middle of the wall: depth 1 mm (half the wall) + 1 mm (radius) = 2 mm.
    // source: common practice (slab–ball overlap along the slab normal)
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("wall.yaml"),
        "bodies:\n  - {name: wall, frame: base, box: [2, 200, 200], xyz: [952.5, 0, 500]}\n",
    )
    .unwrap();
    let yaml = format!(
        "robot: {}\ncell: wall.yaml\ntool: {{xyz: [0, 0, 180], geometry: [{{name: ball, sphere: {{radius: 1}}, xyz: [0, 0, 180]}}]}}\n\
         speed: 50\nsampling: {{step: 5}}\nlimits: {{clearance: 0.1}}\n\
         waypoints:\n  - {{name: a, xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [1000, 0, 500], rpy: [180, 0, 0]}}\n",
        arm6()
    );
    let file = dir.path().join("path.yaml");
    std::fs::write(&file, yaml).unwrap();
    let (code, report) = check_json(&file, &[]);
    assert_eq!(code, 1, "{report:#}");
    let hits = findings(&report, "collision");
    assert_eq!(hits.len(), 1, "{report:#}");
    let f = hits[0];
    assert_eq!(f["bodies"], serde_json::json!(["ball", "wall"]));
    // The sample at 955 mm is sample 11 (900 mm is sample 0).
    assert_eq!(f["samples"], serde_json::json!([11, 11]));
    assert!((f64_of(&f["value"]) + 2.0).abs() < 0.01, "{f:#}");
    assert!(f["message"]
        .as_str()
        .unwrap()
        .contains("found between two samples"));
    // No clearance warning: at every sample the ball is at least 0.5 mm from the wall.
    assert!(findings(&report, "clearance").is_empty(), "{report:#}");
}

#[test]
fn a_process_contact_deeper_than_its_depth_is_a_collision() {
    // A 1 mm ball on the TCP runs along x at z = 500 mm on a process segment over a plate
    // whose top face is at z = 500.5 mm: its centre is 0.5 mm under the face, so it sinks
    // 1 + 0.5 = 1.5 mm. Allowed 2 mm deep it passes; allowed 1 mm deep it is a collision of
    // 1.5 mm.
    // source: common practice (ball–slab overlap along the slab normal)
    let dir = tempfile::tempdir().unwrap();
    let run = |depth: f64| {
        std::fs::write(
            dir.path().join("plate.yaml"),
            format!(
                "bodies:\n  - {{name: plate, frame: base, box: [400, 200, 20], xyz: [950, 0, 490.5]}}\n\
                 allowed_contacts:\n  - {{between: [ball, plate], when: process, depth: {depth}}}\n"
            ),
        )
        .unwrap();
        let yaml = format!(
            "robot: {}\ncell: plate.yaml\ntool: {{xyz: [0, 0, 180], geometry: [{{name: ball, sphere: {{radius: 1}}, xyz: [0, 0, 180]}}]}}\n\
             speed: 50\nsampling: {{step: 5}}\nlimits: {{clearance: 0.1}}\n\
             waypoints:\n  - {{name: a, xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{name: b, xyz: [1000, 0, 500], rpy: [180, 0, 0], process: true}}\n",
            arm6()
        );
        let file = dir.path().join("path.yaml");
        std::fs::write(&file, yaml).unwrap();
        check_json(&file, &[])
    };
    let (code, report) = run(2.0);
    assert_eq!(code, 0, "{report:#}");
    assert!(findings(&report, "collision").is_empty(), "{report:#}");
    let (code, report) = run(1.0);
    assert_eq!(code, 1, "{report:#}");
    let hits = findings(&report, "collision");
    assert_eq!(hits.len(), 1, "{report:#}");
    assert_eq!(hits[0]["bodies"], serde_json::json!(["ball", "plate"]));
    assert!(
        (f64_of(&hits[0]["value"]) + 1.5).abs() < 0.01,
        "{:#}",
        hits[0]
    );
}

#[test]
fn the_cell_flag_adds_a_cell_and_without_one_nothing_changes() {
    // bracket_fillet.yaml has no cell: its report has no `cell` section and keeps the
    // caution that collisions are ignored. With --cell the rib cell is placed in its work
    // frame and the check measures it.
    // source: common practice
    let demo = repo("paths/bracket_fillet.yaml");
    let (_, plain) = check_json(&demo, &[]);
    assert!(plain.get("cell").is_none());
    assert!(plain["cautions"][3]
        .as_str()
        .unwrap()
        .starts_with("The model ignores collisions"));
    let dir = tempfile::tempdir().unwrap();
    let cell = dir.path().join("cell.yaml");
    std::fs::write(
        &cell,
        "bodies:\n  - {name: floor, frame: base, box: [4000, 4000, 20], xyz: [0, 0, -10]}\n  - {name: post, frame: base, cylinder: {radius: 50, length: 500}, xyz: [-900, 0, 250]}\nallowed_contacts:\n  - {between: [base_link, floor], when: always}\n",
    )
    .unwrap();
    let (code, with) = check_json(&demo, &["--cell", cell.to_str().unwrap()]);
    // Seven links with geometry (all but the flange) and the two cell bodies; the floor
    // touches only the pedestal (allowed) and the post stands far behind the robot.
    assert_eq!(
        with["cell"]["bodies"].as_u64(),
        Some(7 + 2),
        "{:#}",
        with["cell"]
    );
    assert!(findings(&with, "collision").is_empty(), "{with:#}");
    assert_eq!(code, 0);
}

#[test]
fn robot_lists_collision_shapes_and_tested_pairs() {
    // arm6.urdf gives every link but the flange a collision shape; neighbouring links never
    // count, so link4 (on joint 4) is tested against link2 but not against link3 or link5.
    // source: robots/arm6.urdf
    let (code, info) = json_of(&[
        "robot",
        repo("robots/arm6.urdf").to_str().unwrap(),
        "--json",
        "-",
    ]);
    assert_eq!(code, 0);
    let pairs = info["collision"]["self_pairs"].as_array().unwrap();
    let has = |a: &str, b: &str| pairs.iter().any(|p| p[0] == a && p[1] == b);
    assert!(has("link2", "link4"));
    assert!(!has("link3", "link4") && !has("link4", "link5"));
    assert!(info["collision"]["notes"][0]
        .as_str()
        .unwrap()
        .contains("flange"));
}

#[test]
fn the_amended_file_keeps_the_cell_tool_geometry_and_clearance() {
    // The amended path file is written from the job: reading it back must give the same cell
    // file, the same tool bodies (sizes and poses) and the same clearance.
    // source: common practice (write → read round trip)
    let dir = tempfile::tempdir().unwrap();
    let job = armpath::job::load(&repo("paths/rib_weld.yaml"), &Default::default()).unwrap();
    let text = armpath::fix::emit::path_file(&job, &[]).unwrap();
    let out = dir.path().join("amended.yaml");
    std::fs::write(&out, text).unwrap();
    let back = armpath::job::load(&out, &Default::default()).unwrap();
    assert_eq!(
        std::fs::canonicalize(&back.cell.as_ref().unwrap().path).unwrap(),
        std::fs::canonicalize(repo("paths/cells/rib_cell.yaml")).unwrap()
    );
    assert!((back.limits.clearance - job.limits.clearance).abs() < 1e-12);
    assert_eq!(back.tool.geometry.len(), 2);
    for (a, b) in job.tool.geometry.iter().zip(&back.tool.geometry) {
        assert_eq!(a.name, b.name);
        assert!(
            (a.anchor_T_body.translation.vector - b.anchor_T_body.translation.vector).norm() < 1e-9
        );
        assert!(a.anchor_T_body.rotation.angle_to(&b.anchor_T_body.rotation) < 1e-9);
        assert_eq!(format!("{:?}", a.primitive), format!("{:?}", b.primitive));
    }
}

#[test]
fn robot_still_describes_an_arm_whose_collision_mesh_cannot_be_read() {
    // A collision mesh named by a ROS package cannot be resolved; `armpath robot` still
    // gives the kinematic facts (exit 0) and says why the geometry cannot be used, while a
    // check with tool geometry stops on it (exit 2).
    // source: common practice (an unusable optional part does not hide the rest)
    let dir = tempfile::tempdir().unwrap();
    let urdf = dir.path().join("arm.urdf");
    std::fs::write(
        &urdf,
        arm6_text_with(
            "<sphere radius=\"0.05\"/>",
            "<mesh filename=\"package://arm/wrist.stl\"/>",
        ),
    )
    .unwrap();
    let (code, info) = json_of(&["robot", urdf.to_str().unwrap(), "--json", "-"]);
    assert_eq!(code, 0);
    assert_eq!(info["dof"], 6);
    let note = info["collision"]["notes"][0].as_str().unwrap();
    assert!(
        note.contains("link 'link5' <collision> 1") && note.contains("ROS package"),
        "{note}"
    );
    let path = dir.path().join("p.yaml");
    std::fs::write(
        &path,
        "robot: arm.urdf\nspeed: 20\ntool: {xyz: [0, 0, 100], geometry: [{sphere: {radius: 5}}]}\n\
         waypoints:\n  - {xyz: [900, 0, 500], rpy: [180, 0, 0]}\n  - {xyz: [900, 100, 500], rpy: [180, 0, 0]}\n",
    )
    .unwrap();
    let out = armpath().arg("check").arg(&path).output().unwrap();
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("ROS package"));
}
