//! The path-file readers (YAML, CSV, the value flags) under hostile input, run through the
//! binary: exit code, the one error line (file, line or field, what to do) and the files left
//! behind. An input error must leave no report file; a warning must still give a report.
//!
//! The expected locations are those of the crafted input written beside each case (lines and
//! columns 1-based, counted by hand); the expected wording is armpath's own.

use assert_cmd::Command;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Longest a case may run: each takes well under a second; a blocked read would never end.
const TIMEOUT: Duration = Duration::from_secs(20);

fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// The settings every YAML case shares; the robot is copied next to the file. Lines 1-4.
const HEAD: &str =
    "robot: arm6.urdf\nspeed: 20\ntool: {xyz: [0, 0, 180]}\nwork_frame: {xyz: [900, 0, 250]}\n";

/// Two reachable waypoints, tool down, 900 mm in front of the base (a waypoint list, line 5 on
/// when it follows [`HEAD`]).
const TWO: &str = "waypoints:\n  - {xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}\n";

/// What a run left: exit code, standard output and error, and whether `report.json` exists.
struct Run {
    code: i32,
    stdout: String,
    stderr: String,
    report: Option<serde_json::Value>,
}

/// A temporary folder with arm6.urdf and the given files.
fn folder(files: &[(&str, &[u8])]) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(repo("robots/arm6.urdf"), dir.path().join("arm6.urdf")).unwrap();
    for (name, bytes) in files {
        std::fs::write(dir.path().join(name), bytes).unwrap();
    }
    dir
}

/// Runs `armpath ARGS --json report.json` in `dir`.
fn run_in(dir: &Path, args: &[&str]) -> Run {
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .current_dir(dir)
        .args(args)
        .args(["--json", "report.json"])
        .env("NO_COLOR", "1")
        .timeout(TIMEOUT)
        .output()
        .unwrap();
    let report = std::fs::read_to_string(dir.join("report.json"))
        .ok()
        .map(|t| serde_json::from_str(&t).unwrap());
    Run {
        code: out
            .status
            .code()
            .expect("armpath ended by a signal (timeout?)"),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
        report,
    }
}

/// Checks `path.yaml` with `text` and the extra args.
fn check_yaml(text: &[u8], extra: &[&str]) -> Run {
    let dir = folder(&[("path.yaml", text)]);
    let mut args = vec!["check", "path.yaml"];
    args.extend_from_slice(extra);
    run_in(dir.path(), &args)
}

/// Checks `wp.csv` with `text` directly.
fn check_csv(text: &[u8]) -> Run {
    let dir = folder(&[("wp.csv", text)]);
    run_in(
        dir.path(),
        &[
            "check",
            "wp.csv",
            "--robot",
            "arm6.urdf",
            "--speed",
            "20",
            "--work-frame",
            "900,0,250,0,0,0",
            "--tool",
            "0,0,180,0,0,0",
        ],
    )
}

/// An input error: exit 2, one `armpath: error:` line holding every phrase, no report file.
fn assert_refused(r: &Run, phrases: &[&str]) {
    assert_eq!(r.code, 2, "stderr: {}", r.stderr);
    let lines: Vec<&str> = r.stderr.lines().collect();
    assert_eq!(lines.len(), 1, "one error line: {}", r.stderr);
    assert!(lines[0].starts_with("armpath: error: "), "{}", r.stderr);
    for p in phrases {
        assert!(lines[0].contains(p), "`{p}` not in `{}`", lines[0]);
    }
    assert!(r.stdout.is_empty(), "{}", r.stdout);
    assert!(r.report.is_none(), "an input error must leave no report");
}

/// The messages of the report's `input` findings.
fn input_messages(r: &Run) -> Vec<String> {
    let report = r.report.as_ref().expect("a report");
    report["findings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["kind"] == "input")
        .map(|f| f["message"].as_str().unwrap().to_string())
        .collect()
}

// ---------------------------------------------------------------- first-waypoint segment keys

#[test]
fn first_waypoint_motion_is_reported_by_the_key_given() {
    // The first waypoint ends no segment, so `motion: joint` there has no effect: the warning
    // must name that key, and not keys that were not given.
    // source: common practice (a key without effect is reported, not dropped silently)
    let text = format!(
        "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [180, 0, 0], motion: joint}}\n  - {{xyz: [100, 0, 0], rpy: [180, 0, 0]}}\n"
    );
    let r = check_yaml(text.as_bytes(), &[]);
    assert_eq!(r.code, 0, "a warning only: {}", r.stderr);
    let msgs = input_messages(&r);
    assert_eq!(msgs.len(), 1, "{msgs:?}");
    assert!(msgs[0].contains("`motion: joint`"), "{}", msgs[0]);
    assert!(msgs[0].contains("start waypoint"), "{}", msgs[0]);
    assert!(
        !msgs[0].contains("speed") && !msgs[0].contains("process"),
        "{}",
        msgs[0]
    );
}

#[test]
fn first_waypoint_speed_and_process_are_reported_without_motion() {
    // source: common practice (the warning names exactly the keys given)
    let text = format!(
        "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0], rpy: [180, 0, 0], speed: 5, process: true}}\n  - {{xyz: [100, 0, 0], rpy: [180, 0, 0]}}\n"
    );
    let r = check_yaml(text.as_bytes(), &[]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    let msgs = input_messages(&r);
    assert_eq!(msgs.len(), 1, "{msgs:?}");
    assert!(
        msgs[0].contains(": `speed` and `process: true` describe"),
        "{}",
        msgs[0]
    );
    assert!(!msgs[0].contains("motion"), "{}", msgs[0]);
}

#[test]
fn first_csv_row_motion_is_reported() {
    // source: common practice (CSV and YAML waypoints follow the same rules)
    let r = check_csv(b"x,y,z,roll,pitch,yaw,motion\n0,0,0,180,0,0,joint\n100,0,0,180,0,0,\n");
    assert_eq!(r.code, 0, "{}", r.stderr);
    let msgs = input_messages(&r);
    assert_eq!(msgs.len(), 1, "{msgs:?}");
    assert!(
        msgs[0].contains("line 2: `motion: joint` describes"),
        "{}",
        msgs[0]
    );
}

#[test]
fn demos_reach_their_approach_by_a_joint_move_and_keep_their_verdicts() {
    // Each YAML demo now starts from a parked pose and moves to its first working point with
    // a joint move (the second waypoint's `motion: joint`), so nothing is ignored and no input
    // warning is raised; the verdicts are those written in the files' headers.
    // source: the expected results in each demo file's header comment
    for (file, first_work_point, verdict) in [
        ("paths/bracket_fillet.yaml", "approach", "pass"),
        ("paths/panel_raster.yaml", "pass1_in", "warn"),
    ] {
        let text = std::fs::read_to_string(repo(file)).unwrap();
        let line = text
            .lines()
            .find(|l| l.contains(&format!("name: {first_work_point}")))
            .unwrap();
        assert!(line.contains("motion: joint"), "{file}: {line}");
        let dir = folder(&[]);
        let r = run_in(dir.path(), &["check", repo(file).to_str().unwrap()]);
        assert_eq!(r.code, 0, "{file}: {}", r.stderr);
        let report = r.report.as_ref().unwrap();
        assert_eq!(report["summary"]["verdict"], verdict, "{file}");
        assert_eq!(report["path"]["waypoints"][0], "home", "{file}");
        assert_eq!(report["path"]["waypoints"][1], first_work_point, "{file}");
        assert!(
            input_messages(&r).is_empty(),
            "{file}: {:?}",
            input_messages(&r)
        );
    }
}

// ---------------------------------------------------------------- encodings and YAML features

#[test]
fn yaml_with_a_byte_order_mark_is_read() {
    // source: Unicode Standard §23.8 (U+FEFF at the start of UTF-8 text is a signature, not
    // content)
    let mut text = b"\xef\xbb\xbf".to_vec();
    text.extend_from_slice(format!("{HEAD}{TWO}").as_bytes());
    let r = check_yaml(&text, &[]);
    assert_eq!(r.code, 0, "{}", r.stderr);
    assert!(r.report.is_some());
}

#[test]
fn yaml_merge_key_is_refused_where_it_stands() {
    // Line 6 is `  - <<: {rpy: [180, 0, 0]}`: the key starts at column 5.
    // source: common practice (YAML 1.1 merge keys are not part of the path-file format)
    let text = format!(
        "{HEAD}waypoints:\n  - <<: {{rpy: [180, 0, 0]}}\n    xyz: [0, 0, 0]\n  - {{xyz: [100, 0, 0], rpy: [180, 0, 0]}}\n"
    );
    let r = check_yaml(text.as_bytes(), &[]);
    assert_refused(
        &r,
        &[
            "path.yaml: line 6 column 5:",
            "merge key",
            "write the merged keys out",
        ],
    );
}

#[test]
fn non_utf8_yaml_names_line_and_column() {
    // Line 6 is `  - {name: a\xff, ...`: `a` is column 12, the bad byte column 13.
    // source: common practice (locations count characters, 1-based)
    let mut text = format!("{HEAD}waypoints:\n  - {{name: a").into_bytes();
    text.extend_from_slice(
        b"\xff, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}\n",
    );
    let r = check_yaml(&text, &[]);
    assert_refused(
        &r,
        &[
            "path.yaml: line 6 column 13:",
            "not UTF-8",
            "saved as UTF-8",
        ],
    );
    assert!(!r.stderr.contains("byte"), "{}", r.stderr);
}

#[test]
fn nul_byte_in_yaml_names_line_and_column() {
    // source: YAML 1.2 §5.1 (NUL is outside the printable character set)
    let mut text = format!("{HEAD}waypoints:\n  - {{name: a").into_bytes();
    text.extend_from_slice(
        b"\x00, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}\n",
    );
    let r = check_yaml(&text, &[]);
    assert_refused(&r, &["path.yaml: line 6 column 13:", "NUL byte"]);
    assert!(!r.stderr.contains("line 1 "), "{}", r.stderr);
}

#[test]
fn hex_number_is_refused_with_its_decimal_value() {
    // Line 6: `  - {xyz: [0, 0, 0x14], ...`: `0x14` starts at column 18; 0x14 = 1·16 + 4 = 20.
    // source: from memory (hexadecimal place values)
    let text = format!(
        "{HEAD}waypoints:\n  - {{xyz: [0, 0, 0x14], rpy: [180, 0, 0]}}\n  - {{xyz: [100, 0, 0], rpy: [180, 0, 0]}}\n"
    );
    let r = check_yaml(text.as_bytes(), &[]);
    assert_refused(
        &r,
        &[
            "path.yaml: line 6 column 18:",
            "`0x14` is a hexadecimal integer",
            "decimal, `20`",
        ],
    );
    assert!(!r.stderr.contains("expected a number"), "{}", r.stderr);
}

#[test]
fn csv_unclosed_quote_names_its_line_and_the_quote() {
    // Line 3's last field opens a quote that is never closed; the reader would take line 4 into
    // it and report nothing.
    // source: RFC 4180 §2 (a quoted field ends at the closing double quote)
    let r = check_csv(
        b"x,y,z,roll,pitch,yaw,name\n0,0,0,180,0,0,a\n100,0,0,180,0,0,\"b\n200,0,0,180,0,0,c\n",
    );
    assert_refused(
        &r,
        &["wp.csv: line 3, column 7:", "quote `\"`", "not closed"],
    );
}

#[test]
fn nul_byte_in_csv_names_line_and_column() {
    // source: common practice (a NUL in a text file means a binary file or a bad export)
    let r = check_csv(b"x,y,z,roll,pitch,yaw,name\n0,0,0,180,0,0,a\x00\n100,0,0,180,0,0,b\n");
    assert_refused(&r, &["wp.csv: line 2, column 7:", "NUL byte"]);
}

// ---------------------------------------------------------------- value ranges

#[test]
fn absurd_finite_values_are_refused_with_their_range() {
    // Each value is finite but far outside the documented ranges (armpath::job::*_RANGE_* and
    // MAX_ABS_*): refused at the field or option that gave it, with the range in the file's
    // units (mm, deg, mm/s).
    // source: the range constants' own documentation (src/job/units.rs)
    let wp = |extra: &str| {
        format!("waypoints:\n  - {{xyz: [0, 0, 0], rpy: [180, 0, 0]{extra}}}\n  - {{xyz: [100, 0, 0], rpy: [180, 0, 0]}}\n")
    };
    let head_without_speed = HEAD.replace("speed: 20\n", "");
    let cases: Vec<(String, Vec<&str>, Vec<&str>)> = vec![
        (
            format!("{head_without_speed}speed: 1e-320\n{TWO}"),
            vec![],
            vec!["path.yaml: speed:", "1e-320", "0.001 to 1000000 mm/s"],
        ),
        (
            format!(
                "{HEAD}{}",
                wp(", speed: 1e308").replace(
                    "rpy: [180, 0, 0], speed: 1e308}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0]}",
                    "rpy: [180, 0, 0]}\n  - {xyz: [100, 0, 0], rpy: [180, 0, 0], speed: 1e308}"
                )
            ),
            vec![],
            vec!["waypoints[1].speed:", "1e308", "mm/s"],
        ),
        (
            format!(
                "{HEAD}{}",
                wp("").replace(
                    "rpy: [180, 0, 0]}\n  - {xyz: [100",
                    "rpy: [1e308, 0, 0]}\n  - {xyz: [100"
                )
            ),
            vec![],
            vec!["waypoints[0].rpy:", "1e308", "±36000 deg"],
        ),
        (
            format!(
                "{HEAD}{}",
                wp("").replace("{xyz: [100, 0, 0]", "{xyz: [100, 0, 1e308]")
            ),
            vec![],
            vec!["waypoints[1].xyz:", "1e308", "±1e7 mm"],
        ),
        (
            format!("{HEAD}sampling: {{step: 1e-320}}\n{TWO}"),
            vec![],
            vec!["sampling.step:", "1e-320", "1e-9 to 1e7 mm"],
        ),
        (
            format!("{HEAD}start_joints: [0, 1e308, 0, 0, 0, 0]\n{TWO}"),
            vec![],
            vec!["start_joints:", "value 2 (1e308)", "±36000 deg"],
        ),
        (
            format!("{HEAD}{TWO}"),
            vec!["--tool", "0,0,1e308,0,0,0"],
            vec!["--tool:", "1e308", "±1e7 mm"],
        ),
        (
            format!("{HEAD}{TWO}"),
            vec!["--work-frame", "1e308,0,0,0,0,0"],
            vec!["--work-frame:", "1e308", "±1e7 mm"],
        ),
        (
            format!("{HEAD}{TWO}"),
            vec!["--speed", "1e-320"],
            vec!["--speed:", "1e-320", "mm/s"],
        ),
        (
            format!("{HEAD}{TWO}"),
            vec!["--step", "1e-320"],
            vec!["--step:", "1e-320", "mm"],
        ),
        (
            format!("{HEAD}{TWO}"),
            vec!["--joint-speed-scale", "1e-320"],
            vec!["--joint-speed-scale:", "below 0.001"],
        ),
        (
            HEAD.replace("tool: {xyz: [0, 0, 180]}", "tool: {xyz: [0, 0, 1e308]}") + TWO,
            vec![],
            vec!["tool.xyz:", "±1e7 mm"],
        ),
        (
            HEAD.replace(
                "work_frame: {xyz: [900, 0, 250]}",
                "work_frame: {xyz: [900, 0, 250], quat: [1e308, 0, 0, 0]}",
            ) + TWO,
            vec![],
            vec!["work_frame.quat:", "quaternion component"],
        ),
        (
            format!("{HEAD}orientation_speed: 1e-320\n{TWO}"),
            vec![],
            vec!["orientation_speed:", "deg/s"],
        ),
        (
            format!("{HEAD}limits: {{near_limit_margin: 1e308}}\n{TWO}"),
            vec![],
            vec!["limits.near_limit_margin:", "±36000 deg"],
        ),
    ];
    for (text, extra, phrases) in &cases {
        let r = check_yaml(text.as_bytes(), extra);
        assert_refused(&r, phrases);
    }
}

#[test]
fn absurd_csv_speed_is_refused_with_its_range() {
    // source: the range constants' own documentation (SPEED_RANGE_M_S = 1e-6..1e3 m/s)
    let r = check_csv(b"x,y,z,roll,pitch,yaw,speed\n0,0,0,180,0,0,\n100,0,0,180,0,0,1e-320\n");
    assert_refused(
        &r,
        &[
            "wp.csv: line 3, column speed:",
            "1e-320",
            "0.001 to 1000000 mm/s",
        ],
    );
}

#[test]
fn slowest_accepted_speed_keeps_every_duration_finite() {
    // At the lowest accepted speed, 0.001 mm/s, a 100 mm line takes 100 / 0.001 = 1e5 s: long
    // but finite, and the report carries that number.
    // source: from memory (duration = length / speed)
    let text = format!("{HEAD}{TWO}").replace("speed: 20", "speed: 0.001");
    let r = check_yaml(text.as_bytes(), &[]);
    assert!(r.code == 0 || r.code == 1, "{}", r.stderr);
    let d = r.report.as_ref().unwrap()["summary"]["duration_s"]
        .as_f64()
        .unwrap();
    assert!((d - 1e5).abs() < 1e-6, "{d}");
}

// ---------------------------------------------------------------- non-regular files

/// Makes a named pipe at `path` with the system's `mkfifo`.
fn mkfifo(path: &Path) {
    let ok = std::process::Command::new("mkfifo")
        .arg(path)
        .status()
        .unwrap()
        .success();
    assert!(ok, "mkfifo failed");
}

#[test]
fn named_pipes_are_refused_instead_of_read() {
    // Opening a FIFO for reading blocks until a writer appears; armpath must refuse it at once.
    // source: POSIX open(2) (a read-only open of a FIFO blocks until it is opened for writing)
    let dir = folder(&[]);
    mkfifo(&dir.path().join("path.yaml"));
    mkfifo(&dir.path().join("wp.csv"));
    let r = run_in(dir.path(), &["check", "path.yaml"]);
    assert_refused(&r, &["path.yaml: file:", "not a regular file", "path file"]);
    let r = run_in(
        dir.path(),
        &["check", "wp.csv", "--robot", "arm6.urdf", "--speed", "20"],
    );
    assert_refused(
        &r,
        &["wp.csv: file:", "not a regular file", "CSV waypoint file"],
    );
    // A CSV file named by `waypoints:` in a YAML file.
    std::fs::write(
        dir.path().join("job.yaml"),
        format!("{HEAD}waypoints: wp.csv\n"),
    )
    .unwrap();
    let r = run_in(dir.path(), &["check", "job.yaml"]);
    assert_refused(
        &r,
        &[
            "wp.csv: file:",
            "not a regular file",
            "named by `waypoints:`",
        ],
    );
}

// ---------------------------------------------------------------- the CSV demo

#[test]
fn csv_demo_runs_with_the_readme_command() {
    // Derivation of no errors: the nozzle keeps one orientation (rpy 180, 0, 0 on every row),
    // so the tool turns at 0 deg/s; the bead corners lie 720-1080 mm in front of the base and
    // at most 120 mm to the side, with the TCP 250-500 mm up and the flange 180 mm above it:
    // well inside the 1862 mm reach and well away from the base axis (no shoulder
    // singularity); at 10-50 mm/s the joints turn a few percent of their rated speed.
    // The warnings: the three 5 mm blends join perpendicular sides at 10 mm/s, so the bead's
    // speed dips to 10/√2 = 7.07 mm/s at each corner, below 95 % of 10 mm/s.
    // source: robots/arm6.urdf geometry and the rows of paths/seam.csv; common practice (the
    // speed of a linear velocity blend, |v_in + v_out|/2 at its middle)
    let dir = folder(&[]);
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .current_dir(repo(""))
        .args([
            "check",
            "paths/seam.csv",
            "--robot",
            "robots/arm6.urdf",
            "--speed",
            "10",
        ])
        .args(["--tool", "0,0,180,0,0,0", "--work-frame", "900,0,250,0,0,0"])
        .arg("--json")
        .arg(dir.path().join("report.json"))
        .env("NO_COLOR", "1")
        .timeout(TIMEOUT)
        .output()
        .unwrap();
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("verdict  WARN  0 errors"), "{text}");
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(dir.path().join("report.json")).unwrap())
            .unwrap();
    // 8 rows of waypoints, the first the parked pose.
    assert_eq!(report["path"]["waypoints"].as_array().unwrap().len(), 8);
    assert_eq!(report["path"]["waypoints"][0], "home");
    assert_eq!(
        report["summary"]["max_tool_angular_speed_deg_s"].as_f64(),
        Some(0.0)
    );
    let corners: Vec<f64> = report["findings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|f| f["kind"] == "process_speed")
        .map(|f| f["value"].as_f64().unwrap())
        .filter(|v| (v - 10.0 / 2f64.sqrt()).abs() < 1e-6)
        .collect();
    // One dip per corner, at the sample standing at the corner waypoint (the blend's middle).
    assert_eq!(corners.len(), 3, "{report:#}");
}
