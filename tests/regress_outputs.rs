//! Outputs never destroy data: no output replaces an input or another output, a signal or a
//! failed write leaves no temporary file and keeps an older report, a closed or full standard
//! output ends cleanly, amended files cannot be injected through names, and `fix` and `place`
//! take the same setting flags as `check`.

mod common;
use common::*;
use std::path::{Path, PathBuf};
use std::process::{Command as Std, Stdio};
use std::time::{Duration, Instant};

/// Run `armpath ARGS` in `dir`; returns (exit code, stdout, stderr).
fn run_in(dir: &Path, args: &[&str]) -> (i32, String, String) {
    let out = armpath().current_dir(dir).args(args).output().unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

fn bin() -> PathBuf {
    assert_cmd::cargo::cargo_bin("armpath")
}

/// Every file in `dir` (names only, sorted).
fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn temps(dir: &Path) -> Vec<String> {
    listing(dir)
        .into_iter()
        .filter(|n| n.ends_with(".tmp"))
        .collect()
}

/// Exactly one line on stderr, an `armpath: error:` line containing every word of `words`.
fn assert_one_error(stderr: &str, words: &[&str]) {
    let lines: Vec<&str> = stderr.lines().collect();
    assert_eq!(lines.len(), 1, "one error line expected: {stderr}");
    assert!(lines[0].starts_with("armpath: error: "), "{stderr}");
    for w in words {
        assert!(lines[0].contains(w), "missing {w:?} in: {stderr}");
    }
}

const CSV_WAYPOINTS: &str =
    "name,x,y,z,roll,pitch,yaw\nstart,800,-100,500,180,0,0\nend,800,100,500,180,0,0\n";

/// A folder with the robot (`arm.urdf`), a path file that names a CSV waypoint file
/// (`path.yaml`, `seam.csv`), and a path file with its waypoints inline (`inline.yaml`).
fn cell() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::copy(repo("robots/arm6.urdf"), d.join("arm.urdf")).unwrap();
    std::fs::write(d.join("seam.csv"), CSV_WAYPOINTS).unwrap();
    std::fs::write(
        d.join("path.yaml"),
        "robot: arm.urdf\ntool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}\nspeed: 20\nwaypoints: seam.csv\n",
    )
    .unwrap();
    std::fs::write(
        d.join("inline.yaml"),
        "robot: arm.urdf\ntool: {xyz: [0, 0, 180], rpy: [0, 0, 0]}\nspeed: 20\nwaypoints:\n  \
         - {name: start, xyz: [800, -100, 500], rpy: [180, 0, 0]}\n  \
         - {name: end, xyz: [800, 100, 500], rpy: [180, 0, 0]}\n",
    )
    .unwrap();
    dir
}

/// Contents of every file in `dir`, to show nothing changed.
fn snapshot(dir: &Path) -> Vec<(String, Vec<u8>)> {
    listing(dir)
        .into_iter()
        .map(|n| {
            let bytes = std::fs::read(dir.join(&n)).unwrap_or_default();
            (n, bytes)
        })
        .collect()
}

/// Run a command that must be refused because of its outputs: exit 2, one error line naming
/// `words`, and the folder exactly as before.
fn assert_refused(dir: &Path, args: &[&str], words: &[&str]) {
    let before = snapshot(dir);
    let (code, stdout, stderr) = run_in(dir, args);
    assert_eq!(code, 2, "{args:?}: {stdout} {stderr}");
    assert_one_error(&stderr, words);
    assert_eq!(snapshot(dir), before, "{args:?} changed the folder");
}

#[test]
fn check_outputs_onto_any_input_are_refused_and_the_input_kept() {
    // source: common practice (an output never replaces an input)
    let dir = cell();
    let d = dir.path();
    for option in ["--json", "--joints", "--html"] {
        for (input, what) in [
            ("path.yaml", "the path file"),
            ("seam.csv", "the CSV waypoint file"),
            ("arm.urdf", "the URDF"),
        ] {
            assert_refused(
                d,
                &["check", "path.yaml", option, input],
                &[option, input, what, "another file"],
            );
        }
        // The CSV loaded directly, with the robot from the command line.
        assert_refused(
            d,
            &[
                "check", "seam.csv", "--robot", "arm.urdf", "--speed", "20", option, "arm.urdf",
            ],
            &[option, "the URDF"],
        );
    }
}

#[test]
fn outputs_onto_hard_links_symlinks_and_other_spellings_of_an_input_are_refused() {
    // source: common practice (one file has many names: links, `./`, `..`)
    let dir = cell();
    let d = dir.path();
    std::fs::hard_link(d.join("arm.urdf"), d.join("hard.json")).unwrap();
    std::os::unix::fs::symlink("seam.csv", d.join("soft.csv")).unwrap();
    std::fs::create_dir(d.join("sub")).unwrap();
    assert_refused(
        d,
        &["check", "path.yaml", "--json", "hard.json"],
        &["--json", "hard.json", "the URDF"],
    );
    assert_refused(
        d,
        &["check", "path.yaml", "--joints", "soft.csv"],
        &["--joints", "soft.csv", "the CSV waypoint file"],
    );
    assert_refused(
        d,
        &["check", "path.yaml", "--html", "sub/../path.yaml"],
        &["--html", "the path file"],
    );
}

#[test]
fn two_outputs_onto_one_file_are_refused() {
    // source: common practice (one file cannot hold two reports)
    let dir = cell();
    let d = dir.path();
    std::fs::write(d.join("old.json"), "old").unwrap();
    std::os::unix::fs::symlink("old.json", d.join("alias.json")).unwrap();
    assert_refused(
        d,
        &[
            "check",
            "path.yaml",
            "--json",
            "out.txt",
            "--joints",
            "./out.txt",
        ],
        &["--json/--joints", "out.txt", "own file"],
    );
    assert_refused(
        d,
        &[
            "check",
            "path.yaml",
            "--joints",
            "old.json",
            "--html",
            "alias.json",
        ],
        &["--joints/--html", "old.json", "alias.json"],
    );
    assert_refused(
        d,
        &["check", "path.yaml", "--json", "-", "--html", "-"],
        &["--json/--html", "standard output"],
    );
    // Special files take any number of outputs.
    let (code, _, stderr) = run_in(
        d,
        &[
            "check",
            "path.yaml",
            "-q",
            "--json",
            "/dev/null",
            "--joints",
            "/dev/null",
        ],
    );
    assert_eq!(code, 0, "{stderr}");
}

#[test]
fn robot_fk_and_ik_json_onto_the_urdf_is_refused() {
    // source: common practice (an output never replaces an input)
    let dir = cell();
    let d = dir.path();
    std::os::unix::fs::symlink("arm.urdf", d.join("arm.json")).unwrap();
    for json in ["arm.urdf", "arm.json"] {
        for mut args in [
            vec!["robot", "arm.urdf"],
            vec!["fk", "arm.urdf", "--joints", "0,0,0,0,0,0"],
            vec!["ik", "arm.urdf", "--pose", "800,0,500,0,1,0,0"],
        ] {
            args.extend(["--json", json]);
            assert_refused(d, &args, &["--json", json, "the URDF"]);
        }
    }
}

/// `place` of `path.yaml` over two placements, plus `extra`.
fn place_small<'a>(extra: &[&'a str]) -> Vec<&'a str> {
    let mut v = vec!["place", "path.yaml", "--x", "0:10:10", "--y", "0:0:1"];
    v.extend_from_slice(extra);
    v
}

#[test]
fn fix_and_place_outputs_onto_any_input_are_refused() {
    // source: common practice (an output never replaces an input)
    let dir = cell();
    let d = dir.path();
    for input in ["path.yaml", "seam.csv", "arm.urdf"] {
        assert_refused(d, &["fix", "path.yaml", "--out", input], &["--out", input]);
        assert_refused(
            d,
            &["fix", "path.yaml", "--json", input],
            &["--json", input],
        );
        for option in ["--csv", "--map", "--json"] {
            assert_refused(d, &place_small(&[option, input]), &[option, input]);
        }
    }
    assert_refused(
        d,
        &[
            "fix",
            "inline.yaml",
            "--out",
            "same.yaml",
            "--json",
            "same.yaml",
        ],
        &["--out/--json", "same.yaml"],
    );
    assert_refused(
        d,
        &place_small(&["--csv", "m.svg", "--map", "m.svg"]),
        &["--csv/--map", "m.svg"],
    );
}

/// A straight 400 mm line sampled every 0.5 µm: 800,000 samples, many seconds of work.
fn long_check_args<'a>(outputs: &[&'a str]) -> Vec<&'a str> {
    let mut v = vec![
        "check",
        "long.yaml",
        "--step",
        "0.0005",
        "--max-samples",
        "1000000000",
        "-q",
    ];
    v.extend_from_slice(outputs);
    v
}

fn long_cell() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("long.yaml"),
        format!(
            "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 100\nwaypoints:\n  \
             - {{name: a, xyz: [800, -200, 500], rpy: [180, 0, 0]}}\n  \
             - {{name: b, xyz: [800, 200, 500], rpy: [180, 0, 0]}}\n",
            arm6()
        ),
    )
    .unwrap();
    for old in ["report.json", "joints.csv", "page.html"] {
        std::fs::write(dir.path().join(old), format!("older {old}")).unwrap();
    }
    dir
}

/// Start a long check, wait until its temporary files exist, send `signal`; returns the exit
/// code.
fn interrupted(dir: &Path, signal: &str) -> Option<i32> {
    let mut child = Std::new(bin())
        .current_dir(dir)
        .args(long_check_args(&[
            "--json",
            "report.json",
            "--joints",
            "joints.csv",
            "--html",
            "page.html",
        ]))
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Hang guard only (generous for a loaded machine): the temporary files appear within the
    // first second of the check.
    let started = Instant::now();
    while temps(dir).len() < 2 {
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "no temporary files appeared"
        );
        assert!(child.try_wait().unwrap().is_none(), "the check ended early");
        std::thread::sleep(Duration::from_millis(20));
    }
    // Let the walk write rows into the temporary joint file.
    std::thread::sleep(Duration::from_millis(300));
    assert!(child.try_wait().unwrap().is_none(), "the check ended early");
    let sent = Std::new("kill")
        .args([signal, &child.id().to_string()])
        .status()
        .unwrap();
    assert!(sent.success());
    let out = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(stderr.contains("stopped by"), "{stderr}");
    out.status.code()
}

#[test]
fn signals_during_a_long_check_leave_no_temp_files_and_keep_older_reports() {
    // source: common practice (exit 128 + signal number: 130 for SIGINT, 143 for SIGTERM)
    for (signal, code) in [("-INT", 130), ("-TERM", 143)] {
        let dir = long_cell();
        let d = dir.path();
        assert_eq!(interrupted(d, signal), Some(code), "{signal}");
        assert!(temps(d).is_empty(), "{signal}: {:?}", listing(d));
        for old in ["report.json", "joints.csv", "page.html"] {
            assert_eq!(
                std::fs::read_to_string(d.join(old)).unwrap(),
                format!("older {old}")
            );
        }
        assert_eq!(
            listing(d),
            ["joints.csv", "long.yaml", "page.html", "report.json"]
        );
    }
}

/// Run armpath with the file-size limit at one block and SIGXFSZ ignored, so that writing
/// any output file longer than that fails as on a full disk.
fn with_tiny_file_limit(dir: &Path, args: &[&str]) -> (i32, String) {
    let out = Std::new("sh")
        .current_dir(dir)
        .arg("-c")
        .arg("trap '' XFSZ; ulimit -f 1; exec \"$0\" \"$@\"")
        .arg(bin())
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn failed_writes_leave_no_temp_files_and_keep_older_reports() {
    // source: common practice (a failed write keeps the old file, removes the partial one);
    // the file-size limit stands in for a full disk (the write fails with EFBIG)
    let dir = cell();
    let d = dir.path();
    for (option, name) in [
        ("--json", "r.json"),
        ("--joints", "j.csv"),
        ("--html", "p.html"),
    ] {
        std::fs::write(d.join(name), "older").unwrap();
        let (code, stderr) = with_tiny_file_limit(d, &["check", "inline.yaml", "-q", option, name]);
        assert_eq!(code, 2, "{option}: {stderr}");
        assert_one_error(&stderr, &[name, "writing"]);
        assert!(temps(d).is_empty(), "{option}: {:?}", listing(d));
        assert_eq!(std::fs::read_to_string(d.join(name)).unwrap(), "older");
    }
    // `fix` writes its amended file the same way.
    std::fs::write(d.join("fixed.yaml"), "older").unwrap();
    let fast = d.join("fast.yaml");
    std::fs::write(&fast, roll_line("a", "b")).unwrap();
    let (code, stderr) = with_tiny_file_limit(d, &["fix", "fast.yaml", "--out", "fixed.yaml"]);
    assert_eq!(code, 2, "{stderr}");
    assert!(temps(d).is_empty(), "{:?}", listing(d));
    assert_eq!(
        std::fs::read_to_string(d.join("fixed.yaml")).unwrap(),
        "older"
    );
}

/// Every command with a text report, run in `cell()`.
fn text_commands() -> Vec<Vec<String>> {
    let s = |v: &[&str]| v.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    vec![
        s(&["check", "inline.yaml"]),
        s(&["robot", "arm.urdf"]),
        s(&["fk", "arm.urdf", "--joints", "0,0,0,0,0,0"]),
        s(&["ik", "arm.urdf", "--pose", "800,0,500,0,1,0,0"]),
        s(&["fix", "inline.yaml", "--out", "fixed.yaml"]),
        s(&["place", "inline.yaml", "--x", "0:10:10", "--y", "0:0:1"]),
    ]
}

#[test]
fn a_closed_pipe_ends_every_command_quietly_with_its_own_exit_code() {
    // source: common practice (a reader that has gone away is a normal end: no message, no
    // panic); the exit code is the one the command has without the pipe
    let dir = cell();
    let d = dir.path();
    for args in text_commands() {
        let (expected, stdout, _) = run_in(d, &args.iter().map(String::as_str).collect::<Vec<_>>());
        assert!(!stdout.is_empty(), "{args:?}");
        let (reader, writer) = std::io::pipe().unwrap();
        drop(reader);
        let out = Std::new(bin())
            .current_dir(d)
            .args(&args)
            .stdout(writer)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(expected), "{args:?}: {stderr}");
        assert!(stderr.is_empty(), "{args:?}: {stderr}");
    }
    // A failing check keeps its exit code 1 through the closed pipe.
    std::fs::write(
        d.join("far.yaml"),
        "robot: arm.urdf\nspeed: 20\nwaypoints:\n  - {xyz: [800, 0, 500], rpy: [180, 0, 0]}\n  \
         - {xyz: [5000, 0, 500], rpy: [180, 0, 0]}\n",
    )
    .unwrap();
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let out = Std::new(bin())
        .current_dir(d)
        .args(["check", "far.yaml"])
        .stdout(writer)
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(1));
    assert!(out.stderr.is_empty());
}

#[test]
fn a_full_standard_output_is_exit_2_with_one_error_line() {
    // source: common practice (ENOSPC is a real failure, unlike a closed pipe)
    let dir = cell();
    let d = dir.path();
    let mut cases = text_commands();
    cases.push(
        ["check", "inline.yaml", "--json", "-"]
            .map(String::from)
            .to_vec(),
    );
    for args in cases {
        let full = std::fs::OpenOptions::new()
            .write(true)
            .open("/dev/full")
            .unwrap();
        let out = Std::new(bin())
            .current_dir(d)
            .args(&args)
            .stdout(full)
            .output()
            .unwrap();
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
        assert_one_error(&stderr, &["standard output", "No space left"]);
    }
}

/// Two waypoints of arm6 10 mm apart with a 90° turn about the tool axis at 100 mm/s: j6 at
/// 900 deg/s against its 420 deg/s, so `fix` proposes a lower speed and names both waypoints
/// in the amended file's notes.
fn roll_line(first: &str, second: &str) -> String {
    const Q0: [f64; 6] = [0.0, 30.0, -20.0, 0.0, 45.0, 0.2];
    format!(
        "robot: {}\ntool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\nspeed: 100\n\
         limits: {{tool_angular_speed: 2000, joint_speed_scale: 1, tool_angular_acceleration: 100000, \
         joint_acceleration_scale: 1000}}\n\
         waypoints:\n  - {{name: {first}, {}}}\n  - {{name: {second}, {}}}\n",
        arm6(),
        arm6_pose(&Q0, [0.0; 3], 0.0),
        arm6_pose(&Q0, [10.0, 0.0, 0.0], 90.0)
    )
}

#[test]
fn fix_cannot_be_made_to_write_yaml_through_a_waypoint_name() {
    // source: YAML 1.2 section 5.7 (escapes in double-quoted scalars); serde_yaml 0.9 reads
    // the amended file as a second, independent reader
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // Names with a line feed, a carriage return, a Unicode line separator and braces, each
    // followed by a key that must not come alive.
    let first = r#""a\nstart_joints: [0, 0, 0, 0, 0, 0]\n""#;
    let second = r#""b\r\nconfig: {elbow: down}\u2028sampling: {step: 9}}, {x: 1""#;
    std::fs::write(d.join("roll.yaml"), roll_line(first, second)).unwrap();
    let (code, stdout, stderr) = run_in(
        d,
        &["fix", "roll.yaml", "--out", "fixed.yaml", "--json", "-"],
    );
    assert_eq!(code, 0, "{stdout} {stderr}");
    let text = std::fs::read_to_string(d.join("fixed.yaml")).unwrap();
    let yaml: serde_yaml::Mapping = serde_yaml::from_str(&text).unwrap();
    assert!(!yaml.contains_key("start_joints"), "{text}");
    assert!(!yaml.contains_key("config"), "{text}");
    let step = yaml["sampling"]["step"].as_f64().unwrap();
    assert_eq!(step, 1.0, "the default step (1 mm) is kept");
    // armpath reads the names back unchanged.
    let (code, report) = check_json(&d.join("fixed.yaml"), &[]);
    assert_eq!(code, 0);
    let names: Vec<&str> = report["path"]["waypoints"]
        .as_array()
        .unwrap()
        .iter()
        .map(|n| n.as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        [
            "a\nstart_joints: [0, 0, 0, 0, 0, 0]\n",
            "b\r\nconfig: {elbow: down}\u{2028}sampling: {step: 9}}, {x: 1"
        ]
    );
}

#[test]
fn fix_takes_the_setting_flags_and_amends_a_csv_path_into_a_checked_path_file() {
    // Derivation: as in roll_line, j6 turns 90° in 10 mm, so cruising at 100 mm/s it would
    // need 900 deg/s. The CSV leaves the accelerations at their defaults: the tool turns at
    // most 720 deg/s², so the 90° roll peaks at √(720 · 90) ≈ 255 deg/s without cruising,
    // within j6's 420 deg/s; with --joint-speed-scale 0.5 (210 deg/s) it is too fast. The fix
    // bounds the speed at cruise: 100 × 210/900 = 23.33 mm/s, proposed (rounded down to
    // 0.1 mm/s) 23.3 mm/s, at which the roll cruises at 209.7 deg/s.
    // source: robots/arm6.urdf (j6 velocity 7.330383 rad/s = 420 deg/s); triangular profile
    // peak √(a·L) (Biagiotti & Melchiorri 2008, §3.2.2; from memory); common practice
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let yaml: serde_yaml::Mapping = serde_yaml::from_str(&roll_line("a", "b")).unwrap();
    let mut csv = String::from("name,x,y,z,qw,qx,qy,qz\n");
    for w in yaml["waypoints"].as_sequence().unwrap() {
        let num = |v: &serde_yaml::Value| v.as_f64().unwrap().to_string();
        let xyz: Vec<String> = w["xyz"].as_sequence().unwrap().iter().map(num).collect();
        let q: Vec<String> = w["quat"].as_sequence().unwrap().iter().map(num).collect();
        csv += &format!(
            "{},{},{}\n",
            w["name"].as_str().unwrap(),
            xyz.join(","),
            q.join(",")
        );
    }
    std::fs::write(d.join("roll.csv"), &csv).unwrap();
    let robot = arm6();
    let fix_csv = |extra: &[&str]| {
        let mut args = vec!["fix", "roll.csv", "--robot", &robot, "--speed", "100"];
        args.extend_from_slice(extra);
        run_in(d, &args)
    };
    let (code, stdout, stderr) = fix_csv(&[
        "--tool",
        "0,0,180,0,0,0",
        "--tool-angular-speed",
        "2000",
        "--joint-speed-scale",
        "0.5",
        "--json",
        "-",
    ]);
    assert_eq!(code, 0, "{stdout} {stderr}");
    let report: serde_json::Value = serde_json::from_str(&stdout).unwrap();
    assert_eq!(
        report["speeds"][0]["proposed"].as_f64(),
        Some(23.3),
        "{report:#}"
    );
    assert_eq!(
        report["before"]["errors"].as_u64().map(|e| e > 0),
        Some(true)
    );
    assert_eq!(report["after"]["errors"].as_u64(), Some(0));
    // The amended file stands on its own: checked with no flags it passes, inline waypoints.
    let amended = d.join("roll.fixed.yaml");
    assert_eq!(report["amended_file"].as_str(), Some("roll.fixed.yaml"));
    let (code, check) = check_json(&amended, &[]);
    assert_eq!(code, 0);
    assert_eq!(check["summary"]["errors"].as_u64(), Some(0));
    assert_eq!(check["path"]["waypoints"], serde_json::json!(["a", "b"]));
    assert_eq!(check["path"]["speed_mm_s"].as_f64(), Some(100.0));
    // A flag that reaches the check options: the sample cap.
    let (code, _, stderr) = fix_csv(&["--max-samples", "1"]);
    assert_eq!(code, 2);
    assert_one_error(&stderr, &["--max-samples"]);
}

#[test]
fn place_takes_the_setting_flags_with_a_csv_path() {
    // source: common practice (three offsets 0, 50, 100 mm along x, one along y: 3 placements)
    let dir = cell();
    let d = dir.path();
    let args = |extra: &[&str]| {
        let mut v: Vec<String> = [
            "place",
            "seam.csv",
            "--robot",
            "arm.urdf",
            "--speed",
            "20",
            "--tool",
            "0,0,180,0,0,0",
            "--x",
            "0:100:50",
            "--y",
            "0:0:1",
            "--json",
            "-",
        ]
        .map(String::from)
        .to_vec();
        v.extend(extra.iter().map(|s| s.to_string()));
        v
    };
    let out = armpath().current_dir(d).args(args(&[])).output().unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{stderr}");
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["placements"].as_u64(), Some(3));
    assert_eq!(report["length_unit"], "mm");
    // --units m: the same seam, tool and grid written in metres give the same placements.
    std::fs::write(
        d.join("seam_m.csv"),
        "name,x,y,z,roll,pitch,yaw\nstart,0.8,-0.1,0.5,180,0,0\nend,0.8,0.1,0.5,180,0,0\n",
    )
    .unwrap();
    let out = armpath()
        .current_dir(d)
        .args([
            "place",
            "seam_m.csv",
            "--units",
            "m",
            "--robot",
            "arm.urdf",
            "--speed",
            "0.02",
            "--tool",
            "0,0,0.18,0,0,0",
            "--x",
            "0:0.1:0.05",
            "--y",
            "0:0:1",
            "--json",
            "-",
        ])
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(0));
    let metres: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(metres["length_unit"], "m");
    assert_eq!(metres["placements"].as_u64(), Some(3));
    for (mm, m) in report["best"]
        .as_array()
        .unwrap()
        .iter()
        .zip(metres["best"].as_array().unwrap())
    {
        assert!((mm["dx"].as_f64().unwrap() / 1000.0 - m["dx"].as_f64().unwrap()).abs() < 1e-12);
        assert_eq!(mm["errors"], m["errors"]);
    }
    // A malformed flag value is refused like in `check`.
    let out = armpath()
        .current_dir(d)
        .args(args(&["--work-frame", "1,2,3"]))
        .output()
        .unwrap();
    let (code, stderr) = (out.status.code(), String::from_utf8_lossy(&out.stderr));
    assert_eq!(code, Some(2));
    assert_one_error(
        &stderr,
        &["--work-frame:", "6 comma-separated numbers, got 3"],
    );
}
