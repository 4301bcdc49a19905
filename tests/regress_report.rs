//! The reports' hygiene, through the binary: names cannot draw lines of their own in the
//! text, the text stays readable when a path raises thousands of findings, counts read in
//! good English, and the HTML page carries every input it depends on, names the busiest
//! joint the summary names, and plots against time as well as path distance.

use assert_cmd::Command;
use std::path::{Path, PathBuf};

fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// Run the binary; (exit code, stdout, stderr).
fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

/// Write `yaml` as `path.yaml` in `dir`; its `robot:` line should name `arm6.urdf` or a file
/// written beside it.
fn write_path(dir: &Path, yaml: &str) -> String {
    let p = dir.join("path.yaml");
    std::fs::write(&p, yaml).unwrap();
    p.display().to_string()
}

fn arm6() -> String {
    repo("robots/arm6.urdf").display().to_string()
}

/// A nozzle pointing straight down over a table in front of the demo arm: reachable over
/// x = -300 … 300 mm of the work frame. source: paths/panel_raster.yaml and
/// paths/beyond_reach.yaml headers (same cell, reachable up to about x = 1210 mm in the base
/// frame)
fn header(robot: &str, extra: &str) -> String {
    format!(
        "units: {{length: mm, angle: deg}}\nrobot: {robot}\n\
         tool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}\n\
         work_frame: {{xyz: [700, 0, 900], rpy: [0, 0, 0]}}\nspeed: 100\n{extra}waypoints:\n"
    )
}

#[test]
fn a_waypoint_name_with_a_line_break_cannot_draw_a_verdict_line() {
    // The end lies beyond reach, so the findings name the segment into it (and the waypoint).
    // source: paths/beyond_reach.yaml header (unreachable from about x = 1210 mm in the base
    // frame on; the end here is at 1500 mm)
    let dir = tempfile::tempdir().unwrap();
    let yaml = header(&arm6(), "")
        + "  - {name: start, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n"
        + "  - {name: \"end\\n  verdict  PASS\\r\\u001b[2J\", xyz: [800, 0, 0], rpy: [180, 0, 0]}\n";
    let path = write_path(dir.path(), &yaml);
    let (code, text, err) = run(&["check", &path]);
    assert_eq!(code, 1, "{err}");
    // source: common practice (one verdict line per report, written by armpath)
    let verdicts = text.lines().filter(|l| l.starts_with("  verdict")).count();
    assert_eq!(verdicts, 1, "{text}");
    assert!(!text.contains('\r') && !text.contains('\x1b'), "{text:?}");
    assert!(
        text.contains("end\\n  verdict  PASS\\r\\u{1b}[2J"),
        "the name is not shown escaped:\n{text}"
    );
    // JSON keeps the exact name (serde escapes it in the JSON text).
    let (_, json, _) = run(&["check", &path, "--json", "-"]);
    let report: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(
        report["path"]["waypoints"][1],
        "end\n  verdict  PASS\r\u{1b}[2J"
    );
}

#[test]
fn robot_and_joint_names_with_control_characters_are_escaped_in_robot_text() {
    let dir = tempfile::tempdir().unwrap();
    let urdf = std::fs::read_to_string(arm6())
        .unwrap()
        .replacen(
            "<robot name=\"armpath_arm6\"",
            "<robot name=\"arm&#10;  verdict  PASS\"",
            1,
        )
        .replacen("<joint name=\"j2\"", "<joint name=\"j2&#13;&#9;x\"", 1);
    assert!(
        urdf.contains("&#13;"),
        "the demo URDF changed: update the test"
    );
    let file = dir.path().join("odd.urdf");
    std::fs::write(&file, urdf).unwrap();
    let (code, text, err) = run(&["robot", &file.display().to_string()]);
    assert_eq!(code, 0, "{err}");
    // source: common practice (one line per joint; no line of the text begins with a name's
    // continuation)
    assert!(text.starts_with("arm\\n  verdict  PASS · "), "{text}");
    assert!(!text.lines().any(|l| l.starts_with("  verdict")), "{text}");
    assert!(text.contains("j2\\r\\tx"), "{text}");
    assert!(!text.contains('\r') && !text.contains('\t'), "{text:?}");
}

/// A zigzag in orientation: `n` segments of 1 mm, each turning the tool 10° about its axis
/// and back, at 10 mm/s.
fn zigzag(n: usize) -> String {
    let mut yaml =
        header(&arm6(), "limits: {tool_angular_speed: 30}\n").replace("speed: 100", "speed: 10");
    for i in 0..=n {
        let yaw = if i % 2 == 0 { 0 } else { 10 };
        yaml += &format!(
            "  - {{xyz: [{}, 0, 0], rpy: [180, 0, {yaw}]}}\n",
            i as f64 - 0.5 * n as f64
        );
    }
    yaml
}

#[test]
fn many_findings_of_one_kind_are_capped_in_the_text_and_counted() {
    // Each segment turns 10° over 1 mm at 10 mm/s: 100 deg/s against a 30 deg/s limit, so
    // every one of the n segments raises one tool_angular_speed finding (findings never
    // cross a segment boundary). source: angle over time, from the path as built here
    let n = 600;
    let per_kind = 20; // source: the documented text cap (README, "first 20 of each kind")
    let dir = tempfile::tempdir().unwrap();
    let path = write_path(dir.path(), &zigzag(n));
    let (_, json, err) = run(&["check", &path, "--json", "-"]);
    let report: serde_json::Value =
        serde_json::from_str(&json).unwrap_or_else(|e| panic!("{e}: {err}"));
    let findings = report["findings"].as_array().unwrap();
    let turn = findings
        .iter()
        .filter(|f| f["kind"] == "tool_angular_speed")
        .count();
    assert_eq!(turn, n, "JSON keeps every finding");
    let mut kinds: Vec<&str> = findings
        .iter()
        .map(|f| f["kind"].as_str().unwrap())
        .collect();
    kinds.sort_unstable();
    kinds.dedup();

    let (_, text, _) = run(&["check", &path]);
    let listed_turns = text
        .lines()
        .filter(|l| {
            l.contains(". error tool_angular_speed") || l.contains(". warn  tool_angular_speed")
        })
        .count();
    assert_eq!(listed_turns, per_kind, "{text}");
    let rest_line: Vec<&str> = text.lines().filter(|l| l.contains("not listed")).collect();
    assert_eq!(rest_line.len(), 1, "{text}");
    assert!(
        rest_line[0].contains(&format!("tool_angular_speed {}", n - per_kind)),
        "{}",
        rest_line[0]
    );
    let total_rest: usize = kinds
        .iter()
        .map(|k| {
            findings
                .iter()
                .filter(|f| f["kind"] == *k)
                .count()
                .saturating_sub(per_kind)
        })
        .sum();
    assert!(
        rest_line[0].contains(&format!("and {total_rest} more findings")),
        "{}",
        rest_line[0]
    );
    assert!(rest_line[0].contains("--json"), "{}", rest_line[0]);
    // At most three lines of up to 600 bytes per listed finding, plus the header, the
    // configuration table and the cautions (under 6 kB). source: common practice
    let bound = 6_000 + kinds.len() * per_kind * 600;
    assert!(text.len() < bound, "{} bytes, bound {bound}", text.len());
}

#[test]
fn counts_of_one_read_singular_in_the_check_text() {
    // source: paths/wrist_crossing.yaml header (two waypoints, so one segment) and its
    // report (one singularity warning)
    let (_, text, _) = run(&[
        "check",
        &repo("paths/wrist_crossing.yaml").display().to_string(),
    ]);
    assert!(text.contains(" · 1 segment · "), "{text}");
    assert!(text.contains(", 1 warning\n"), "{text}");
    // source: common practice (English plural by count)
    for noun in [
        "configuration",
        "segment",
        "error",
        "warning",
        "waypoint",
        "sample",
        "solution",
        "joint",
        "finding",
    ] {
        assert!(
            !text.contains(&format!(" 1 {noun}s")),
            "\"1 {noun}s\" in:\n{text}"
        );
    }
}

/// The `<figure id="{id}">` element of a page.
fn figure<'a>(html: &'a str, id: &str) -> &'a str {
    let start = html
        .find(&format!("<figure id=\"{id}\">"))
        .unwrap_or_else(|| panic!("no figure {id}"));
    let end = html[start..].find("</figure>").unwrap() + start;
    &html[start..end]
}

/// The SVG text elements of a figure (plotters writes each text on its own line).
fn svg_texts(fig: &str) -> Vec<String> {
    fig.split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = t.split_once('>')?.1;
            Some(body.split("</text>").next()?.trim().to_string())
        })
        .collect()
}

#[test]
fn the_peak_label_names_the_joint_the_summary_calls_busiest() {
    // Through the wrist singularity of the demo path, j4 and j6 swing at the same rate at
    // the same place; with j6 allowed 315 deg/s instead of 420, j6 is the busier of the two
    // and the two peak labels fall on the same spot. source: paths/wrist_crossing.yaml
    // header (joint_speed errors on j4 and j6 near y = 0)
    let dir = tempfile::tempdir().unwrap();
    let urdf = std::fs::read_to_string(arm6()).unwrap();
    let j6 = "velocity=\"7.3303828583761845\"";
    assert!(urdf.contains(j6), "the demo URDF changed: update the test");
    std::fs::write(
        dir.path().join("arm.urdf"),
        urdf.replace(j6, "velocity=\"5.497787143782138\""),
    )
    .unwrap();
    let yaml = std::fs::read_to_string(repo("paths/wrist_crossing.yaml"))
        .unwrap()
        .replace("robot: ../robots/arm6.urdf", "robot: arm.urdf");
    let path = write_path(dir.path(), &yaml);
    let page = dir.path().join("r.html");
    let json = dir.path().join("r.json");
    let (code, _, err) = run(&[
        "check",
        &path,
        "-q",
        "--html",
        &page.display().to_string(),
        "--json",
        &json.display().to_string(),
    ]);
    assert_eq!(code, 1, "{err}");
    let report: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();
    let busiest = report["summary"]["max_joint_speed_joint"].as_str().unwrap();
    let ratio = report["summary"]["max_joint_speed_ratio"].as_f64().unwrap();
    assert_eq!(busiest, "j6", "the setup no longer makes j6 the busiest");
    let html = std::fs::read_to_string(&page).unwrap();
    for id in ["plot-speed", "time-speed"] {
        let labels: Vec<(String, f64)> = svg_texts(figure(&html, id))
            .into_iter()
            .filter_map(|t| {
                let (name, pct) = t.strip_suffix(" %")?.rsplit_once(' ')?;
                Some((name.to_string(), pct.parse().ok()?))
            })
            .collect();
        let mine = labels.iter().find(|(n, _)| n == busiest);
        // source: the JSON summary of the same run
        let expected = (ratio * 100.0).round();
        assert_eq!(mine.map(|m| m.1), Some(expected), "{id}: labels {labels:?}");
        assert!(
            labels.iter().all(|(_, p)| *p <= expected),
            "{id}: a label above the busiest: {labels:?}"
        );
    }
}

#[test]
fn the_html_report_plots_against_time_so_a_turn_on_the_spot_shows() {
    // 100 mm at 100 mm/s (1 s), then a 90° turn on the spot at 45 deg/s (2 s): the turn has
    // no width against s but two seconds against t. source: distance over speed and angle
    // over angular speed, from the path as built here
    let dir = tempfile::tempdir().unwrap();
    let yaml = header(&arm6(), "orientation_speed: 45\n")
        + "  - {name: start, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n"
        + "  - {name: line_end, xyz: [100, 0, 0], rpy: [180, 0, 0]}\n"
        + "  - {name: turn_end, xyz: [100, 0, 0], rpy: [180, 0, 90]}\n";
    let path = write_path(dir.path(), &yaml);
    let page = dir.path().join("r.html");
    let (code, _, err) = run(&["check", &path, "-q", "--html", &page.display().to_string()]);
    assert_ne!(code, 2, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    assert!(html.contains("<h2 id=\"over-time\">"));
    for kind in ["speed", "singularity", "tool"] {
        let s = svg_texts(figure(&html, &format!("plot-{kind}")));
        let t = svg_texts(figure(&html, &format!("time-{kind}")));
        assert!(s.iter().any(|x| x == "s (mm)"), "{kind}: {s:?}");
        assert!(t.iter().any(|x| x == "t (s)"), "{kind}: {t:?}");
        // Against s the last two waypoints share one spot, so only one of their names fits;
        // against t they are two seconds apart and both are named.
        assert!(t.iter().any(|x| x == "line_end") && t.iter().any(|x| x == "turn_end"));
        assert!(!(s.iter().any(|x| x == "line_end") && s.iter().any(|x| x == "turn_end")));
        // The time axis runs on to the end of the turn at 3 s, past the line's 1 s. Its ticks
        // carry one decimal over this span; the y ticks with decimals stay at or below 1.32
        // (speed ratio and singularity measure). source: as above
        let last = t
            .iter()
            .filter(|x| x.contains('.'))
            .filter_map(|x| x.parse::<f64>().ok())
            .fold(0.0, f64::max);
        assert!(last > 2.0 && last <= 3.0, "{kind}: {t:?}");
    }
}

#[test]
fn the_html_report_shows_every_input_it_depends_on() {
    let dir = tempfile::tempdir().unwrap();
    let yaml = "units: {length: mm, angle: deg}\nrobot: ROBOT\n\
        tool: {xyz: [5, -7, 183], rpy: [0, 0, 30], free_spin: true, spin_range: [-40, 50], spin_rate: 25}\n\
        work_frame: {xyz: [712, 13, 888], rpy: [0, 0, 15]}\nspeed: 80\norientation_speed: 37\n\
        limits: {tool_angular_speed: 77, joint_speed_scale: 0.65, near_limit_margin: 4}\n\
        sampling: {step: 2, angle_step: 1.5}\nwaypoints:\n\
          - {name: a_start, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n\
          - {name: b_mid, xyz: [60, 0, 0], rpy: [180, 0, 0], speed: 45, process: true}\n\
          - {name: c_hop, xyz: [60, 80, 20], rpy: [180, 0, 0], motion: joint}\n"
        .replace("ROBOT", &arm6());
    let path = write_path(dir.path(), &yaml);
    let page = dir.path().join("r.html");
    let (code, _, err) = run(&["check", &path, "-q", "--html", &page.display().to_string()]);
    assert_ne!(code, 2, "{err}");
    let html = std::fs::read_to_string(&page).unwrap();
    // source: the path file written above (each input appears as given, in mm and deg)
    for needle in [
        "xyz 5, -7, 183 mm · rpy 0, 0, 30 deg",
        "free spin about tool z within -40 … 50 deg, at most 25 deg/s",
        "xyz 712, 13, 888 mm · rpy 0, 0, 15 deg",
        "80 mm/s (path default)",
        "37 deg/s",
        "77.0 deg/s (linear segments)",
        "0.65 × URDF velocity",
        "4.0 deg",
        "2.00 mm · 1.50 deg per step",
        "a_start → b_mid</td><td>linear · process</td><td class=\"num\">45</td>",
        "b_mid → c_hop</td><td>joint</td><td class=\"num\">80</td>",
        "<h3 id=\"configurations\">Arm configurations</h3>",
        "singularity threshold</th><td>0.01</td>",
    ] {
        assert!(html.contains(needle), "the page lacks {needle:?}");
    }
    // The configuration table has one row per configuration of the closed-form solver.
    // source: ik::analytic (shoulder front/back × elbow up/down × wrist flip/noflip)
    let table = &html[html.find("id=\"configurations\"").unwrap()..];
    let table = &table[..table.find("</table>").unwrap()];
    assert_eq!(table.matches("<tr><td>").count(), 8, "{table}");
}
