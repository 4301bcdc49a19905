//! Regression cases for the URDF reader and the numeric ranges, run through the binary: each
//! refusal ends with exit code 2 and one `armpath: error:` line naming the file, the joint or
//! link, the line and what to change, and leaves no output behind.

mod common;

use assert_cmd::Command;
use common::repo;
use std::time::Duration;

use common::{arm6_text as arm6, arm6_text_with as arm6_with};

/// arm6 with extra elements on a line of their own before `</robot>`.
fn arm6_plus(extra: &str) -> String {
    arm6_with("</robot>", &format!("{extra}\n</robot>"))
}

/// 1-based line of the first `needle` in `text` (known by construction of the case).
fn line_of(text: &str, needle: &str) -> usize {
    let at = text.find(needle).unwrap_or_else(|| panic!("no `{needle}`"));
    1 + text[..at].matches('\n').count()
}

/// 1-based line of the `n`-th (0-based) `needle` in `text`.
fn nth_line_of(text: &str, needle: &str, n: usize) -> usize {
    let at = text.match_indices(needle).nth(n).expect("needle").0;
    1 + text[..at].matches('\n').count()
}

fn armpath() -> Command {
    let mut c = Command::cargo_bin("armpath").unwrap();
    c.timeout(Duration::from_secs(20));
    c
}

/// Run `armpath robot r.urdf --json out.json` on `urdf` in a fresh folder: exit code 2, no
/// output on stdout, no out.json, one error line naming r.urdf and containing every `expect`.
fn refused(urdf: &str, expect: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("r.urdf"), urdf).unwrap();
    let out = armpath()
        .current_dir(dir.path())
        .args(["robot", "r.urdf", "--json", "out.json"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "stderr: {err}");
    assert!(
        out.stdout.is_empty(),
        "stdout: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.starts_with("armpath: error: r.urdf: "), "{err}");
    for e in expect {
        assert!(err.contains(e), "missing `{e}` in: {err}");
    }
    assert!(
        !dir.path().join("out.json").exists(),
        "out.json left behind"
    );
}

/// `armpath fk` on arm6 with `urdf` and `joints` (deg): (exit code, stdout, stderr).
fn fk(urdf: &str, joints: &str) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("r.urdf"), urdf).unwrap();
    let out = armpath()
        .current_dir(dir.path())
        .args(["fk", "r.urdf", "--joints", joints])
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

const J1_AXIS: &str = "<axis xyz=\"0 0 1\"/>";
const J1_ORIGIN: &str = "<origin xyz=\"0 0 0\" rpy=\"0 0 0\"/>";

#[test]
fn axis_with_huge_components_keeps_its_direction() {
    // source: common practice (a direction scaled by a positive factor is the same direction;
    // before, the norm of 1e200 1e200 0 overflowed and the axis became z)
    let huge = arm6_with(J1_AXIS, "<axis xyz=\"1e200 1e200 0\"/>");
    let plain = arm6_with(J1_AXIS, "<axis xyz=\"1 1 0\"/>");
    let (code_h, out_h, err_h) = fk(&huge, "30,10,-20,40,50,60");
    let (code_p, out_p, _) = fk(&plain, "30,10,-20,40,50,60");
    assert_eq!((code_h, code_p), (0, 0), "{err_h}");
    assert_eq!(out_h, out_p);
    let (_, out_z, _) = fk(&arm6(), "30,10,-20,40,50,60");
    assert_ne!(
        out_h, out_z,
        "the huge axis must not turn into the file's z axis"
    );
}

#[test]
fn axis_with_two_or_four_numbers_is_refused_naming_joint_and_line() {
    // source: URDF specification (axis xyz holds three numbers); line by construction
    for xyz in ["0 1", "0 0 1 0"] {
        let text = arm6_with(J1_AXIS, &format!("<axis xyz=\"{xyz}\"/>"));
        let line = format!("(line {})", line_of(&text, &format!("xyz=\"{xyz}\"")));
        let count = format!("has {} numbers", xyz.split(' ').count());
        refused(&text, &["joint 'j1' <axis xyz>:", &count, "three", &line]);
    }
}

#[test]
fn axis_with_a_word_among_three_numbers_is_refused() {
    // source: URDF specification (three numbers); the XML reader alone skipped the word
    let text = arm6_with(J1_AXIS, "<axis xyz=\"0 0 1 x\"/>");
    let line = format!("(line {})", line_of(&text, "0 0 1 x"));
    refused(
        &text,
        &["joint 'j1' <axis xyz>:", "'x'", "not a number", &line],
    );
}

#[test]
fn zero_and_non_finite_axes_are_refused_with_their_line() {
    // source: URDF specification (the axis is a direction); line by construction
    for xyz in ["0 0 0", "0 0 inf", "NaN 0 1", "1e-12 0 0"] {
        let text = arm6_with(J1_AXIS, &format!("<axis xyz=\"{xyz}\"/>"));
        let line = format!("(line {})", line_of(&text, &format!("<axis xyz=\"{xyz}\"")));
        refused(&text, &["joint 'j1' <axis>:", "zero or not finite", &line]);
    }
}

#[test]
fn vector_of_a_link_geometry_is_checked_too() {
    // source: URDF specification (box size holds three numbers)
    let text = arm6_plus(
        "<link name=\"camera\"><visual><geometry><box size=\"0.1 0.1\"/></geometry></visual></link>",
    );
    let line = format!("(line {})", line_of(&text, "size=\"0.1 0.1\""));
    refused(
        &text,
        &["link 'camera' <box size>:", "has 2 numbers", &line],
    );
}

#[test]
fn limit_value_that_is_not_a_number_is_refused_naming_the_field() {
    // source: URDF specification (limit attributes are numbers)
    let text = arm6_with("velocity=\"2.9670597283903604\"", "velocity=\"fast\"");
    let line = format!("(line {})", line_of(&text, "velocity=\"fast\""));
    refused(
        &text,
        &[
            "joint 'j1' <limit velocity>:",
            "'fast' is not a number",
            &line,
        ],
    );
}

#[test]
fn quaternion_origin_with_three_numbers_is_refused_with_its_line() {
    // source: URDF 1.1 (origin quat_xyzw holds four numbers)
    let text = arm6_with(J1_ORIGIN, "<origin xyz=\"0 0 0\" quat_xyzw=\"0 0 1\"/>").replacen(
        "<robot name=\"armpath_arm6\">",
        "<robot name=\"armpath_arm6\" version=\"1.1\">",
        1,
    );
    let line = format!("(line {})", line_of(&text, "quat_xyzw"));
    refused(
        &text,
        &[
            "joint 'j1' <origin quat_xyzw>:",
            "has 3 numbers",
            "four, x y z w",
            &line,
        ],
    );
}

#[test]
fn joint_without_parent_and_element_without_name_are_located() {
    // source: URDF specification (a joint has parent and child; links and joints are named)
    let text = arm6_with("<parent link=\"base_link\"/>", "");
    let line = format!("(line {})", line_of(&text, "<joint name=\"j1\""));
    refused(&text, &["joint 'j1':", "no <parent> element", &line]);
    let text = arm6_with("<child link=\"link1\"/>", "<child/>");
    let line = format!("(line {})", line_of(&text, "<child/>"));
    refused(&text, &["joint 'j1' <child>:", "no link attribute", &line]);
    let text = arm6_with("<link name=\"link1\">", "<link>");
    let line = format!("r.urdf: line {}:", line_of(&text, "<link>"));
    refused(&text, &[&line, "<link> has no name attribute"]);
}

#[test]
fn duplicate_link_and_joint_names_are_refused_with_both_lines() {
    // source: URDF specification (link and joint names are unique); lines by construction
    let text = arm6_plus("<link name=\"link1\"/>");
    let lines = format!(
        "on lines {} and {}",
        line_of(&text, "<link name=\"link1\""),
        nth_line_of(&text, "<link name=\"link1\"", 1)
    );
    refused(
        &text,
        &["link 'link1':", "defined twice", &lines, "own name"],
    );

    let text = arm6_plus(
        "<link name=\"x\"/><joint name=\"j2\" type=\"fixed\"><parent link=\"flange\"/><child link=\"x\"/></joint>",
    );
    let lines = format!(
        "on lines {} and {}",
        line_of(&text, "<joint name=\"j2\""),
        nth_line_of(&text, "<joint name=\"j2\"", 1)
    );
    refused(&text, &["joint 'j2':", "defined twice", &lines]);
}

#[test]
fn joint_whose_parent_is_its_child_is_refused() {
    // source: URDF specification (a joint connects two links)
    let text = arm6_plus(
        "<joint name=\"js\" type=\"fixed\"><parent link=\"link3\"/><child link=\"link3\"/></joint>",
    );
    let line = format!("(line {})", line_of(&text, "name=\"js\""));
    refused(
        &text,
        &["joint 'js':", "both parent and child", "link3", &line],
    );
}

#[test]
fn loop_detached_from_the_root_is_refused_naming_its_joints() {
    // source: URDF specification (the links form a tree); before, the loop was ignored
    let text = arm6_plus(
        "<link name=\"p\"/><link name=\"q\"/>\n\
         <joint name=\"jp\" type=\"fixed\"><parent link=\"p\"/><child link=\"q\"/></joint>\n\
         <joint name=\"jq\" type=\"fixed\"><parent link=\"q\"/><child link=\"p\"/></joint>",
    );
    let jp = format!("'jp' on line {}", line_of(&text, "name=\"jp\""));
    let jq = format!("'jq' on line {}", line_of(&text, "name=\"jq\""));
    refused(
        &text,
        &[
            "robot 'armpath_arm6':",
            "detached from the root link 'base_link'",
            &jp,
            &jq,
            "loop",
            "must be a tree",
        ],
    );
}

#[test]
fn loop_through_the_whole_arm_names_its_joints() {
    // source: URDF specification (the links form a tree)
    let text = arm6_plus(
        "<joint name=\"jx\" type=\"fixed\"><parent link=\"flange\"/><child link=\"base_link\"/></joint>",
    );
    let jx = format!("'jx' on line {}", line_of(&text, "name=\"jx\""));
    refused(
        &text,
        &[
            "robot 'armpath_arm6':",
            "no root link",
            "'j1' on line",
            &jx,
            "form a loop",
        ],
    );
}

#[test]
fn link_joined_to_nothing_is_refused_with_its_line() {
    // source: URDF specification (one tree of links); line by construction
    let text = arm6_plus("<link name=\"lonely\"/>");
    let lonely = format!("lonely on line {}", line_of(&text, "name=\"lonely\""));
    let base = format!("base_link on line {}", line_of(&text, "name=\"base_link\""));
    refused(
        &text,
        &[
            "robot 'armpath_arm6':",
            "several root links",
            &base,
            &lonely,
            "join them",
        ],
    );
}

#[test]
fn unknown_or_missing_joint_type_is_refused_with_its_line() {
    // source: URDF specification (joint types revolute, continuous, prismatic, fixed,
    // floating, planar)
    let text = arm6_with("type=\"revolute\"", "type=\"rotary\"");
    let line = format!("(line {})", line_of(&text, "rotary"));
    refused(
        &text,
        &[
            "joint 'j1':",
            "type 'rotary'",
            "revolute, continuous, prismatic or fixed",
            &line,
        ],
    );
    let text = arm6_with(" type=\"revolute\"", "");
    let line = format!("(line {})", line_of(&text, "<joint name=\"j1\""));
    refused(&text, &["joint 'j1':", "no type attribute", &line]);
}

#[test]
fn unmodelled_joint_type_names_its_line() {
    // source: URDF specification (planar is a URDF type armpath does not model)
    let text = arm6_with("type=\"revolute\"", "type=\"planar\"");
    let line = format!("(line {})", line_of(&text, "planar"));
    refused(&text, &["joint 'j1':", "Planar", "does not model", &line]);
}

#[test]
fn absurd_speed_limits_are_refused_with_the_range() {
    // source: armpath's MIN_JOINT_SPEED and MAX_JOINT_SPEED (1e-4 … 100 rad/s)
    for v in ["1e308", "1e-320"] {
        let text = arm6_with(
            "velocity=\"2.9670597283903604\"",
            &format!("velocity=\"{v}\""),
        );
        let line = format!("(line {})", line_of(&text, &format!("velocity=\"{v}\"")));
        refused(
            &text,
            &[
                "joint 'j1' <limit velocity>:",
                &format!("is {v} rad/s"),
                "0.0001 … 100 rad/s",
                &line,
            ],
        );
    }
}

#[test]
fn absurd_position_limits_and_efforts_are_refused() {
    // source: armpath's MAX_REVOLUTE_TURNS (32 turns = 201.06 rad) and MAX_EFFORT (1e6)
    let text = arm6_with("upper=\"2.9670597283903604\"", "upper=\"1e308\"");
    let line = format!("(line {})", line_of(&text, "1e308"));
    refused(
        &text,
        &[
            "joint 'j1' <limit>:",
            "upper = 1e308",
            "±201.06 rad (32 turns)",
            "continuous",
            &line,
        ],
    );
    for e in ["1e308", "-5"] {
        let text = arm6_with("effort=\"2400.0\"", &format!("effort=\"{e}\""));
        refused(
            &text,
            &[
                "joint 'j1' <limit effort>:",
                &format!("is {e},"),
                "0 … 1000000",
            ],
        );
    }
}

#[test]
fn absurd_origins_are_refused_before_they_reach_kinematics() {
    // source: armpath's MAX_LENGTH_M (100 m) and MAX_ORIGIN_ANGLE_RAD (two turns); before,
    // xyz 1e308 gave an infinite wrist centre
    let text = arm6_with(J1_ORIGIN, "<origin xyz=\"1e308 0 0\" rpy=\"0 0 0\"/>");
    let line = format!("(line {})", line_of(&text, "1e308"));
    refused(&text, &["joint 'j1' <origin>:", "1e308 m", "±100 m", &line]);
    for rpy in ["1e308 0 0", "0 0 90"] {
        let text = arm6_with(J1_ORIGIN, &format!("<origin xyz=\"0 0 0\" rpy=\"{rpy}\"/>"));
        refused(
            &text,
            &["joint 'j1' <origin>:", "more than two turns", "radians"],
        );
    }
}

#[test]
fn fk_refuses_joint_values_beyond_the_range_instead_of_printing_nan() {
    // source: armpath's MAX_REVOLUTE_TURNS (32 turns = 11520°); before, 1e308 printed NaN
    let (code, out, err) = fk(&arm6(), "1e308,0,0,0,0,0");
    assert_eq!(code, 2, "{out}");
    assert!(out.is_empty() && !out.contains("NaN"), "{out}");
    assert!(
        err.starts_with("armpath: error: --joints: value 1 (joint 'j1')")
            && err.contains("±11520 deg"),
        "{err}"
    );
    // On the bound the pose is computed; a whole number of turns changes nothing.
    let xyz = |joints: &str| {
        let out = armpath()
            .args(["fk", &repo("robots/arm6.urdf").display().to_string()])
            .args(["--joints", joints, "--json", "-"])
            .output()
            .unwrap();
        assert_eq!(out.status.code(), Some(0));
        let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let v: Vec<f64> = json["xyz_mm"]
            .as_array()
            .unwrap()
            .iter()
            .map(|c| c.as_f64().unwrap())
            .collect();
        v
    };
    for (a, b) in xyz("11520,0,0,0,0,0").iter().zip(xyz("0,0,0,0,0,0")) {
        assert!((a - b).abs() < 1e-9, "{a} vs {b}");
    }
}

/// Run `armpath ARGS --json out.json` on arm6 in a fresh folder: exit code 2, nothing on
/// stdout, no out.json, one error line containing `expect`.
fn refused_command(args: &[&str], expect: &str) {
    let dir = tempfile::tempdir().unwrap();
    let robot = repo("robots/arm6.urdf").display().to_string();
    let out = armpath()
        .current_dir(dir.path())
        .args([args[0], robot.as_str()])
        .args(&args[1..])
        .args(["--json", "out.json"])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(out.stdout.is_empty());
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains(expect), "missing `{expect}` in: {err}");
    assert!(!dir.path().join("out.json").exists());
}

#[test]
fn ik_refuses_poses_and_seeds_beyond_the_range() {
    // source: armpath's MAX_LENGTH_M (100 m) and the unit quaternion (components within ±1)
    refused_command(
        &["ik", "--pose", "1e308,0,0,1,0,0,0"],
        "--pose: x = 1e308 mm",
    );
    refused_command(
        &["ik", "--pose", "900,0,500,1e308,0,0,0"],
        "--pose: qw = 1e308",
    );
    refused_command(
        &[
            "ik",
            "--pose",
            "900,0,500,0,1,0,0",
            "--seed",
            "1e308,0,0,0,0,0",
        ],
        "--seed: value 1 (joint 'j1')",
    );
}

#[test]
fn tool_offset_beyond_the_range_is_refused() {
    // source: armpath's MAX_LENGTH_M (100 m) and MAX_ORIGIN_ANGLE_RAD (two turns); before,
    // --tool 1e308,... printed a 300-digit TCP position
    for (tool, expect) in [
        ("1e308,0,0,0,0,0", "--tool: x = 1e308 mm"),
        ("0,0,180,0,0,1e308", "--tool: yaw = 1e308 deg"),
    ] {
        refused_command(&["fk", "--joints", "0,0,0,0,0,0", "--tool", tool], expect);
    }
}

#[cfg(unix)]
#[test]
fn fifo_as_urdf_is_refused_without_blocking() {
    // source: POSIX (a FIFO read blocks until a writer opens it)
    let dir = tempfile::tempdir().unwrap();
    let fifo = dir.path().join("r.urdf");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    let out = armpath()
        .current_dir(dir.path())
        .args(["robot", "r.urdf"])
        .timeout(Duration::from_secs(10))
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.starts_with("armpath: error: r.urdf: file:") && err.contains("not a regular file"),
        "{err}"
    );
}

#[test]
fn bad_robot_given_to_check_leaves_an_older_report_untouched() {
    // source: common practice (a refused input writes nothing)
    let dir = tempfile::tempdir().unwrap();
    let text = arm6_with("velocity=\"2.9670597283903604\"", "velocity=\"1e-320\"");
    std::fs::write(dir.path().join("r.urdf"), text).unwrap();
    std::fs::write(
        dir.path().join("path.yaml"),
        "robot: r.urdf\nspeed: 20\nwaypoints:\n  - {xyz: [900, 0, 500], rpy: [180, 0, 0]}\n  - {xyz: [900, 100, 500], rpy: [180, 0, 0]}\n",
    )
    .unwrap();
    std::fs::write(dir.path().join("old.json"), "older report").unwrap();
    let out = armpath()
        .current_dir(dir.path())
        .args([
            "check",
            "path.yaml",
            "--json",
            "old.json",
            "--joints",
            "j.csv",
        ])
        .output()
        .unwrap();
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("r.urdf: joint 'j1' <limit velocity>:"),
        "{err}"
    );
    assert_eq!(
        std::fs::read_to_string(dir.path().join("old.json")).unwrap(),
        "older report"
    );
    assert!(!dir.path().join("j.csv").exists());
}
