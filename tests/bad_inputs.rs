//! A catalogue of bad inputs run through the binary: URDF, path YAML, CSV and the command
//! line. Every case must end within a few seconds with exit code 2, print nothing on standard
//! output, and print exactly one line on standard error that starts `armpath: error:`, names
//! the file (or the option) and the line or field, and says what to change. No case may
//! panic. `check` cases also ask for `--json` and `--joints` outputs and prove that an input
//! error leaves no output behind and does not touch an older one.
//!
//! The expected phrases come from armpath's error contract (README: exit codes; DEVELOPERS:
//! errors name the file and the line or field and what to do) applied to each crafted input;
//! line numbers and field paths are those of the input written beside the case.
//! source: common practice (each case's input is built so that its one fault is known)

use assert_cmd::Command;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Hang guard: the longest any case may run before it is killed. Generous for a loaded CI
/// machine (every case takes well under a second on its own); only a hang reaches it.
const TIMEOUT: Duration = Duration::from_secs(10);

/// A file (or other directory entry) a case writes into its temporary folder.
enum Entry {
    Bytes(Vec<u8>),
    Folder,
    /// A symbolic link to a path that does not exist.
    Dangling,
}

/// One bad input: what to write, how to call armpath, and what the message must say.
struct Case {
    name: &'static str,
    files: Vec<(&'static str, Entry)>,
    args: Vec<String>,
    expect: &'static [&'static str],
}

fn case(
    name: &'static str,
    files: Vec<(&'static str, Entry)>,
    args: &[&str],
    expect: &'static [&'static str],
) -> Case {
    Case {
        name,
        files,
        args: args.iter().map(|s| s.to_string()).collect(),
        expect,
    }
}

fn text(name: &'static str, t: impl Into<String>) -> (&'static str, Entry) {
    (name, Entry::Bytes(t.into().into_bytes()))
}

fn bytes(name: &'static str, b: &[u8]) -> (&'static str, Entry) {
    (name, Entry::Bytes(b.to_vec()))
}

fn repo(rel: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join(rel)
}

/// robots/arm6.urdf, which every case folder also holds as `arm6.urdf`.
fn arm6() -> String {
    std::fs::read_to_string(repo("robots/arm6.urdf")).unwrap()
}

/// arm6 with the first occurrence of `from` replaced by `to` (the edit must apply).
fn arm6_with(from: &str, to: &str) -> String {
    let a = arm6();
    assert!(a.contains(from), "arm6.urdf has no `{from}`");
    a.replacen(from, to, 1)
}

/// arm6 with extra elements before `</robot>`.
fn arm6_plus(extra: &str) -> String {
    arm6_with("</robot>", &format!("{extra}</robot>"))
}

/// A two-link robot with one joint of the given type and inner elements.
fn one_joint(kind: &str, inner: &str) -> String {
    format!(
        "<?xml version=\"1.0\"?>\n<robot name=\"r\">\n<link name=\"a\"/>\n<link name=\"b\"/>\n\
         <joint name=\"j\" type=\"{kind}\">\n<parent link=\"a\"/>\n<child link=\"b\"/>\n\
         {inner}\n</joint>\n</robot>\n"
    )
}

const LIMIT: &str =
    "<axis xyz=\"0 0 1\"/><limit lower=\"-1\" upper=\"1\" effort=\"1\" velocity=\"1\"/>";

/// Size of the catalogue when its last case was added; it may only grow.
const FLOOR: usize = 157;

/// A valid path file head: robot and speed (2 lines), then whatever follows.
const HEAD: &str = "robot: arm6.urdf\nspeed: 20\n";

/// Two valid waypoints (3 lines, starting with `waypoints:`).
const TWO: &str = "waypoints:\n  - {xyz: [900, 0, 500], rpy: [180, 0, 0]}\n  - {xyz: [900, 100, 500], rpy: [180, 0, 0]}\n";

/// A path file that passes, for command-line cases.
fn good() -> (&'static str, Entry) {
    text("good.yaml", format!("{HEAD}{TWO}"))
}

fn yaml(body: &str) -> (&'static str, Entry) {
    text("path.yaml", body)
}

/// Valid CSV rows after a roll/pitch/yaw header.
const CSV_HEAD: &str = "x,y,z,roll,pitch,yaw\n";
const CSV_ROW: &str = "900,0,500,180,0,0\n";

fn csv(body: &str) -> (&'static str, Entry) {
    text("wp.csv", body)
}

const CSV_ARGS: [&str; 6] = ["check", "wp.csv", "--robot", "arm6.urdf", "--speed", "20"];

fn csv_args() -> Vec<&'static str> {
    CSV_ARGS.to_vec()
}

/// The billion-laughs YAML: nine levels of anchors, each aliasing the previous nine times.
fn yaml_alias_bomb() -> String {
    let mut s = String::from(HEAD);
    s.push_str("waypoints:\n");
    s.push_str("  - {xyz: [900, 0, 500], rpy: [180, 0, 0], name: &a0 [lol, lol, lol, lol, lol, lol, lol, lol, lol]}\n");
    for i in 1..9 {
        let prev = format!("*a{}", i - 1);
        let list = [prev.as_str(); 9].join(", ");
        s.push_str(&format!(
            "  - {{xyz: [900, 0, 500], rpy: [180, 0, 0], name: &a{i} [{list}]}}\n"
        ));
    }
    s
}

/// The billion-laughs XML entity expansion.
fn xml_entity_bomb() -> String {
    let mut s = String::from("<?xml version=\"1.0\"?>\n<!DOCTYPE robot [\n <!ENTITY l0 \"lol\">\n");
    for i in 1..10 {
        let refs = format!("&l{};", i - 1).repeat(10);
        s.push_str(&format!(" <!ENTITY l{i} \"{refs}\">\n"));
    }
    s.push_str("]>\n<robot name=\"&l9;\"><link name=\"a\"/></robot>\n");
    s
}

fn cases() -> Vec<Case> {
    let deep_xml = format!(
        "<robot name=\"r\">{}{}</robot>",
        "<a>".repeat(100_000),
        "</a>".repeat(100_000)
    );
    let long_comment_urdf = one_joint(
        "revolute",
        &format!(
            "<!-- {} -->\n<axis xyz=\"0 0 0\"/><limit lower=\"-1\" upper=\"1\" effort=\"1\" velocity=\"1\"/>",
            "x".repeat(4_000_000)
        ),
    );
    vec![
        // ---------------------------------------------------------------- URDF
        case("urdf: empty file", vec![text("r.urdf", "")], &["robot", "r.urdf"], &["r.urdf: file:", "is empty", "<robot>"]),
        case("urdf: garbage bytes", vec![bytes("r.urdf", &[0xff, 0xfe, 0x00, 0x81, 0x9c, 0x07, 0xc3, 0x28])], &["robot", "r.urdf"], &["r.urdf: byte 0:", "not UTF-8", "URDF"]),
        case(
            "urdf: truncated XML",
            vec![text("r.urdf", "<?xml version=\"1.0\"?>\n<robot name=\"r\">\n<link name=\"a\"/>\n<joint name=\"j\" type=\"revolute\">\n<parent link=\"a\"/>\n")],
            &["robot", "r.urdf"],
            &["r.urdf: line 4:", "<joint>", "never closed", "cut short"],
        ),
        case(
            "urdf: cut inside a tag",
            vec![text("r.urdf", "<robot name=\"r\">\n<link name=\"a\"/>\n<link name=\"b")],
            &["robot", "r.urdf"],
            &["r.urdf: line 3:", "<link", "never closed"],
        ),
        case(
            "urdf: elements closed out of order",
            vec![text("r.urdf", "<robot name=\"r\">\n<link name=\"a\">\n</robot>\n")],
            &["robot", "r.urdf"],
            &["r.urdf: line 3:", "</robot> closes <link>", "line 2", "order"],
        ),
        case("urdf: a .xacro file", vec![text("arm.urdf.xacro", arm6())], &["robot", "arm.urdf.xacro"], &["arm.urdf.xacro: file type:", "xacro", "expand it"]),
        case(
            "urdf: missing <limit>",
            vec![text("r.urdf", one_joint("revolute", "<axis xyz=\"0 0 1\"/>"))],
            &["robot", "r.urdf"],
            &["r.urdf: joint 'j' <limit>:", "missing", "lower upper effort velocity"],
        ),
        case(
            "urdf: zero axis",
            vec![text("r.urdf", arm6_with("<axis xyz=\"0 0 1\"/>", "<axis xyz=\"0 0 0\"/>"))],
            &["robot", "r.urdf"],
            &["r.urdf: joint 'j1' <axis>:", "zero", "xyz=\"0 0 1\""],
        ),
        case(
            "urdf: NaN in an origin",
            vec![text("r.urdf", arm6_with("<origin xyz=\"0 0 0\" rpy=\"0 0 0\"/>", "<origin xyz=\"NaN 0 0\" rpy=\"0 0 0\"/>"))],
            &["robot", "r.urdf"],
            &["r.urdf: joint 'j1' <origin>:", "not a finite number", "fix xyz"],
        ),
        case("urdf: unknown tip", vec![], &["robot", "arm6.urdf", "--tip", "wrist9"], &["arm6.urdf: tip link 'wrist9':", "choose one of its links", "flange"]),
        case(
            "urdf: several leaves and no tip",
            vec![text("r.urdf", arm6_plus("<link name=\"camera\"/><joint name=\"jc\" type=\"fixed\"><parent link=\"link3\"/><child link=\"camera\"/></joint>"))],
            &["robot", "r.urdf"],
            &["r.urdf: tip link:", "several leaf links (camera, flange)", "--tip LINK"],
        ),
        case(
            "urdf: a link with two parents",
            vec![text("r.urdf", arm6_plus("<joint name=\"jx\" type=\"fixed\"><parent link=\"link3\"/><child link=\"link5\"/></joint>"))],
            &["robot", "r.urdf"],
            &["r.urdf: link 'link5':", "child of two joints", "one parent joint"],
        ),
        case(
            "urdf: a loop of joints",
            vec![text("r.urdf", arm6_plus("<joint name=\"jx\" type=\"fixed\"><parent link=\"flange\"/><child link=\"base_link\"/></joint>"))],
            &["robot", "r.urdf"],
            &["r.urdf: robot 'armpath_arm6':", "loop", "must be a tree"],
        ),
        case("urdf: XML entity bomb", vec![text("r.urdf", xml_entity_bomb())], &["robot", "r.urdf"], &["r.urdf: DOCTYPE:", "ENTITY", "remove"]),
        case("urdf: 100,000 nested elements", vec![text("r.urdf", deep_xml)], &["robot", "r.urdf"], &["r.urdf: line 1:", "nest more than 64", "robot description"]),
        case(
            "urdf: a 4 MB line before the fault",
            vec![text("r.urdf", long_comment_urdf)],
            &["robot", "r.urdf"],
            &["r.urdf: joint 'j' <axis>:", "zero"],
        ),
        // Found by the `urdf` fuzz target (docs/fuzzing.md): the XML reader panicked on an
        // attribute name with an empty namespace prefix under a default namespace.
        case(
            "urdf: attribute name starting with ':' (fuzz find)",
            vec![text("r.urdf", one_joint("revolute", LIMIT).replace("<robot name=\"r\">", "<robot name=\"r\" xmlns=\"urn:x\">").replace("<link name=\"b\"/>", "<link name=\"b\" xmlns=\"0\":upper=\"0.5\"/>"))],
            &["robot", "r.urdf"],
            &["r.urdf: line 4:", "starts with ':'", "remove the colon"],
        ),
        case("urdf: planar joint", vec![text("r.urdf", one_joint("planar", LIMIT))], &["robot", "r.urdf"], &["r.urdf: joint 'j':", "Planar", "revolute, continuous, prismatic and fixed"]),
        case("urdf: floating joint", vec![text("r.urdf", one_joint("floating", LIMIT))], &["robot", "r.urdf"], &["r.urdf: joint 'j':", "Floating", "replace it"]),
        case(
            "urdf: mimic joint",
            vec![text("r.urdf", arm6_with("<axis xyz=\"0 0 1\"/>", "<axis xyz=\"0 0 1\"/><mimic joint=\"j2\"/>"))],
            &["robot", "r.urdf"],
            &["r.urdf: joint 'j1':", "mimic", "remove the <mimic>"],
        ),
        case("urdf: child link not defined", vec![text("r.urdf", one_joint("revolute", LIMIT).replace("<child link=\"b\"/>", "<child link=\"c\"/>"))], &["robot", "r.urdf"], &["r.urdf: joint 'j':", "child link 'c'", "add the <link>"]),
        case("urdf: lower above upper", vec![text("r.urdf", one_joint("revolute", "<axis xyz=\"0 0 1\"/><limit lower=\"1\" upper=\"-1\" effort=\"1\" velocity=\"1\"/>"))], &["robot", "r.urdf"], &["r.urdf: joint 'j' <limit>:", "lower = 1 and upper = -1", "lower <= upper"]),
        case("urdf: continuous joint without velocity", vec![text("r.urdf", one_joint("continuous", "<axis xyz=\"0 0 1\"/>"))], &["robot", "r.urdf"], &["r.urdf: joint 'j' <limit velocity>:", "maximum speed"]),
        case("urdf: missing file", vec![], &["robot", "none.urdf"], &["none.urdf: file:", "does not exist", "check the file name"]),
        case("urdf: a folder", vec![("robotdir", Entry::Folder)], &["robot", "robotdir"], &["robotdir: file:", "folder", ".urdf"]),
        case("urdf: a dangling link (unreadable)", vec![("gone.urdf", Entry::Dangling)], &["robot", "gone.urdf"], &["gone.urdf: file:", "does not exist"]),
        case("urdf: a device that never ends", vec![], &["robot", "/dev/zero"], &["/dev/zero: file:", "not a regular file", "check the file name"]),
        case(
            "urdf: bad robot given to check",
            vec![good(), text("r.urdf", arm6_with("<axis xyz=\"0 0 1\"/>", "<axis xyz=\"0 0 0\"/>"))],
            &["check", "good.yaml", "--robot", "r.urdf"],
            &["r.urdf: joint 'j1' <axis>:", "zero"],
        ),
        // ---------------------------------------------------------------- path YAML
        case("yaml: empty file", vec![yaml("")], &["check", "path.yaml"], &["path.yaml: file:", "is empty", "`waypoints:`"]),
        case("yaml: comments only", vec![yaml("# nothing yet\n---\n")], &["check", "path.yaml"], &["path.yaml: file:", "is empty"]),
        case("yaml: garbage bytes", vec![bytes("path.yaml", &[0x80, 0xff, 0x00, 0x12, 0xfe])], &["check", "path.yaml"], &["path.yaml: line 1 column 1:", "not UTF-8", "UTF-8"]),
        case("yaml: a list, not a mapping", vec![yaml("- a\n- b\n")], &["check", "path.yaml"], &["path.yaml: line 1 column 1:", "expected a path file", "form the key expects"]),
        case(
            "yaml: NaN coordinate",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [.nan, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[0].xyz:", "NaN", "finite numbers"],
        ),
        case("yaml: infinite speed", vec![yaml(&format!("robot: arm6.urdf\nspeed: .inf\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: speed:", "not a finite number", "greater than 0"]),
        case(
            "yaml: -inf angle",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [-.inf, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[0].rpy:", "finite"],
        ),
        case(
            "yaml: zero quaternion",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], quat: [0, 0, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[0].quat:", "zero length", "unit quaternion"],
        ),
        case(
            "yaml: two orientations on one pose",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0], quat: [0, 1, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[0]:", "rpy and quat", "exactly one orientation"],
        ),
        case(
            "yaml: no orientation",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[1]:", "no orientation", "add one of rpy"],
        ),
        case("yaml: unknown top-level key", vec![yaml(&format!("{HEAD}colour: red\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 3 column 1:", "unknown field `colour`", "remove the key or correct its spelling"]),
        case("yaml: unknown key in limits", vec![yaml(&format!("{HEAD}limits: {{tool_angular_sped: 5}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 3 column 10, limits:", "`tool_angular_sped`", "correct its spelling"]),
        case("yaml: unknown key in tool", vec![yaml(&format!("{HEAD}tool: {{xyz: [0, 0, 100], rpy: [0, 0, 0], spin: 3}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 3", "tool:", "unknown field `spin`", "remove the key"]),
        case(
            "yaml: unknown key in a waypoint",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0], speeed: 3}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: line 4", "waypoints[0]:", "unknown field `speeed`", "correct its spelling"],
        ),
        case("yaml: duplicate key", vec![yaml(&format!("{HEAD}speed: 30\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: line ", "duplicate field `speed`", "give each key once"]),
        case("yaml: wrong start_joints length", vec![yaml(&format!("{HEAD}start_joints: [0, 0, 0]\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: start_joints:", "3 values", "6 joints", "one value per joint"]),
        case("yaml: start_joints away from the first waypoint", vec![yaml(&format!("{HEAD}start_joints: [0, 0, 0, 0, 0, 0]\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: start_joints:", "mm and", "° away from the first waypoint 'wp1'", "start_joints_seed: true"]),
        case("yaml: config contradicting start_joints", vec![yaml(&format!("{HEAD}start_joints: [0, 19.361881290381, 7.682993277672, 0, 62.955125431947, 180]\nconfig: {{wrist: flip}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: start_joints:", "configuration front/up/noflip", "asks for wrist flip", "drop `config:`"]),
        case("yaml: negative speed", vec![yaml(&format!("robot: arm6.urdf\nspeed: -5\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: speed:", "greater than 0 (got -5)", "TCP speed in mm/s"]),
        case("yaml: zero speed", vec![yaml(&format!("robot: arm6.urdf\nspeed: 0\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: speed:", "greater than 0 (got 0)"]),
        case("yaml: speed as text", vec![yaml(&format!("robot: arm6.urdf\nspeed: fast\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 2 column 8, speed:", "expected a number", "form the key expects"]),
        case("yaml: zero step", vec![yaml(&format!("{HEAD}sampling: {{step: 0}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: sampling.step:", "greater than 0", "largest TCP step"]),
        case("yaml: negative step", vec![yaml(&format!("{HEAD}sampling: {{step: -1}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: sampling.step:", "(got -1)"]),
        case("yaml: zero angle_step", vec![yaml(&format!("{HEAD}sampling: {{angle_step: 0}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: sampling.angle_step:", "greater than 0", "orientation step"]),
        case("yaml: negative angle_step", vec![yaml(&format!("{HEAD}sampling: {{angle_step: -0.5}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: sampling.angle_step:", "(got -0.5)"]),
        case("yaml: unknown length unit", vec![yaml(&format!("units: {{length: inch}}\n{HEAD}{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 1 column 17, units.length:", "`inch`", "`mm` or `m`", "listed values"]),
        case("yaml: unknown angle unit", vec![yaml(&format!("units: {{angle: grad}}\n{HEAD}{TWO}"))], &["check", "path.yaml"], &["path.yaml: line 1", "units.angle:", "`deg` or `rad`"]),
        case("yaml: missing robot", vec![yaml(&format!("speed: 20\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: robot:", "no robot given", "add `robot: <file.urdf>`"]),
        case("yaml: robot file missing", vec![yaml(&format!("robot: nothere.urdf\nspeed: 20\n{TWO}"))], &["check", "path.yaml"], &["nothere.urdf: file:", "does not exist", "relative to the path file's folder"]),
        case("yaml: missing waypoints", vec![yaml(HEAD)], &["check", "path.yaml"], &["path.yaml: line 1 column 1:", "missing field `waypoints`", "add the key"]),
        case("yaml: empty waypoint list", vec![yaml(&format!("{HEAD}waypoints: []\n"))], &["check", "path.yaml"], &["path.yaml: waypoints:", "0 waypoints", "at least two"]),
        case("yaml: one waypoint", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n"))], &["check", "path.yaml"], &["path.yaml: waypoints:", "1 waypoint", "at least two"]),
        case(
            "yaml: duplicate waypoint names",
            vec![yaml(&format!("{HEAD}waypoints:\n  - {{name: a, xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{name: a, xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: waypoints[1]:", "`a`", "waypoints[0]", "its own name"],
        ),
        case("yaml: waypoint with two coordinates", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0], rpy: [180, 0, 0]}}\n"))], &["check", "path.yaml"], &["path.yaml: line 4 column 11, waypoints[0].xyz:", "invalid length 2", "exactly that many values"]),
        case("yaml: CSV waypoint file missing", vec![yaml(&format!("{HEAD}waypoints: seam.csv\n"))], &["check", "path.yaml"], &["seam.csv: file:", "does not exist", "named by `waypoints:` in path.yaml"]),
        case("yaml: alias bomb", vec![yaml(&yaml_alias_bomb())], &["check", "path.yaml"], &["path.yaml: line 4", "waypoints[0].name:", "expected a string"]),
        case(
            "yaml: 100,000 nested brackets",
            vec![yaml(&format!("{HEAD}waypoints: {}{}\n", "[".repeat(100_000), "]".repeat(100_000)))],
            &["check", "path.yaml"],
            &["path.yaml: line 3:", "nest 65 levels", "check that this is a path file"],
        ),
        case(
            "yaml: 2,000 nested block lists",
            vec![yaml(&format!("{HEAD}waypoints:\n{}", (0..2000).map(|i| format!("{}- \n", "  ".repeat(i + 1))).collect::<String>()))],
            &["check", "path.yaml"],
            &["path.yaml: line 5", "waypoints[0]:", "expected a waypoint"],
        ),
        case(
            "yaml: a 4 MB line before the fault",
            vec![yaml(&format!("# {}\n{HEAD}colour: red\n{TWO}", "x".repeat(4_000_000)))],
            &["check", "path.yaml"],
            &["path.yaml: line 4 column 1:", "unknown field `colour`"],
        ),
        case(
            "yaml: a 1,000,000-item line",
            vec![yaml(&format!("{HEAD}waypoints: [1{}]\n", ", 1".repeat(1_000_000)))],
            &["check", "path.yaml"],
            &["path.yaml: line 3 column 13, waypoints[0]:", "expected a waypoint"],
        ),
        case(
            "yaml: tab indentation",
            vec![yaml(&format!("{HEAD}waypoints:\n\t- {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n\t- {{xyz: [900, 100, 500], rpy: [180, 0, 0]}}\n"))],
            &["check", "path.yaml"],
            &["path.yaml: line 4 column 1:", "indent with spaces", "tabs"],
        ),
        case("yaml: a folder as the path", vec![("job.yaml", Entry::Folder)], &["check", "job.yaml"], &["job.yaml: file:", "is a folder", "give the path of the file itself"]),
        case("yaml: missing path file", vec![], &["check", "nothere.yaml"], &["nothere.yaml: file:", "does not exist", "check the file name"]),
        case("yaml: a dangling link (unreadable)", vec![("gone.yaml", Entry::Dangling)], &["check", "gone.yaml"], &["gone.yaml: file:", "does not exist"]),
        case("yaml: a device that never ends", vec![], &["check", "/dev/zero"], &["/dev/zero: file:", "not a regular file", "save the content to a file"]),
        // ---------------------------------------------------------------- CSV
        case("csv: missing column", vec![csv("x,y,roll,pitch,yaw\n900,0,180,0,0\n900,100,180,0,0\n")], &csv_args(), &["wp.csv: line 1:", "no column `z`", "x, y and z are required"]),
        case("csv: text in a number", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}900,abc,500,180,0,0\n"))], &csv_args(), &["wp.csv: line 3, column y:", "`abc` is not a number", "decimal number"]),
        case("csv: NaN in a number", vec![csv(&format!("{CSV_HEAD}900,0,500,NaN,0,0\n{CSV_ROW}"))], &csv_args(), &["wp.csv: line 2, column roll:", "not a finite number"]),
        case("csv: two orientation sets", vec![csv("x,y,z,roll,pitch,yaw,qw,qx,qy,qz\n900,0,500,180,0,0,1,0,0,0\n")], &csv_args(), &["wp.csv: line 1:", "more than one orientation set", "keep exactly one"]),
        case("csv: no orientation set", vec![csv("x,y,z\n900,0,500\n900,100,500\n")], &csv_args(), &["wp.csv: line 1:", "no orientation columns", "add one set"]),
        case("csv: unknown column", vec![csv("x,y,z,roll,pitch,yaw,colour\n900,0,500,180,0,0,red\n")], &csv_args(), &["wp.csv: line 1, column 7:", "unknown column `colour`", "rename or remove it"]),
        case("csv: zero quaternion", vec![csv("x,y,z,qw,qx,qy,qz\n900,0,500,0,0,0,0\n900,100,500,1,0,0,0\n")], &csv_args(), &["wp.csv: line 2, columns qw,qx,qy,qz:", "zero length"]),
        case("yaml: zero TCP acceleration", vec![yaml(&format!("{HEAD}limits: {{tcp_acceleration: 0}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.tcp_acceleration:", "greater than 0", "mm/s²"]),
        case("yaml: tool angular acceleration out of range", vec![yaml(&format!("{HEAD}limits: {{tool_angular_acceleration: 1e9}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.tool_angular_acceleration:", "outside the accepted range", "deg/s²"]),
        case("yaml: joint acceleration scale out of range", vec![yaml(&format!("{HEAD}limits: {{joint_acceleration_scale: 1e6}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.joint_acceleration_scale:", "from 0.001 to 1000"]),
        case("yaml: joint acceleration for an unknown joint", vec![yaml(&format!("{HEAD}limits: {{joint_accelerations: {{elbow: 100}}}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.joint_accelerations.elbow:", "no movable joint 'elbow'", "name one of j1"]),
        case("yaml: zero joint acceleration", vec![yaml(&format!("{HEAD}limits: {{joint_accelerations: {{j2: 0}}}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.joint_accelerations.j2:", "greater than 0", "deg/s²"]),
        case("yaml: joint acceleration out of range", vec![yaml(&format!("{HEAD}limits: {{joint_accelerations: {{j2: 1e12}}}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.joint_accelerations.j2:", "outside the accepted range", "deg/s²"]),
        case("yaml: process speed tolerance of 1", vec![yaml(&format!("{HEAD}limits: {{process_speed_tolerance: 1}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.process_speed_tolerance:", "not including) 1"]),
        case("yaml: negative blend", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0], blend: -5}}\n"))], &["check", "path.yaml"], &["path.yaml: waypoints[1].blend:", "corner radius of 0"]),
        case("yaml: joint share on a linear move", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0], speed: 50%}}\n"))], &["check", "path.yaml"], &["path.yaml: waypoints[1].speed:", "only a joint move takes", "motion: joint"]),
        case("yaml: joint share above 100 %", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0], motion: joint, speed: 150%}}\n"))], &["check", "path.yaml"], &["path.yaml: waypoints[1].speed:", "up to 100 %"]),
        case("yaml: speed in words", vec![yaml(&format!("{HEAD}waypoints:\n  - {{xyz: [900, 0, 500], rpy: [180, 0, 0]}}\n  - {{xyz: [900, 100, 500], rpy: [180, 0, 0], speed: fast}}\n"))], &["check", "path.yaml"], &["path.yaml: line 5 column", "waypoints[1].speed:", "such as 50%"]),
        case("csv: text in blend", vec![csv("x,y,z,roll,pitch,yaw,blend\n900,0,500,180,0,0,\n900,100,500,180,0,0,abc\n")], &csv_args(), &["wp.csv: line 3, column blend:", "`abc` is not a number", "corner radius"]),
        case("csv: negative blend", vec![csv("x,y,z,roll,pitch,yaw,blend\n900,0,500,180,0,0,\n900,100,500,180,0,0,-1\n")], &csv_args(), &["wp.csv: line 3, column blend:", "corner radius of 0"]),
        case("csv: empty file", vec![csv("")], &csv_args(), &["wp.csv: file:", "no header row", "name the columns"]),
        case("csv: header only", vec![csv(CSV_HEAD)], &csv_args(), &["wp.csv: waypoints:", "0 waypoints", "at least two"]),
        case("csv: too few fields", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}900,100,500,180,0\n"))], &csv_args(), &["wp.csv: line 3:", "5 fields but the header has 6", "one value per column"]),
        case("csv: too many fields", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}900,100,500,180,0,0,7\n"))], &csv_args(), &["wp.csv: line 3:", "7 fields but the header has 6"]),
        case("csv: garbage bytes", vec![bytes("wp.csv", b"x,y,z,roll,pitch,yaw\n900,0,\xff\xfe,180,0,0\n")], &csv_args(), &["wp.csv: line 2:", "not UTF-8", "save the file as UTF-8"]),
        case("csv: no robot", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}{CSV_ROW}"))], &["check", "wp.csv", "--speed", "20"], &["wp.csv: robot:", "pass --robot"]),
        case("csv: no speed", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}{CSV_ROW}"))], &["check", "wp.csv", "--robot", "arm6.urdf"], &["wp.csv: speed:", "pass --speed"]),
        case(
            "csv: a 4 MB field",
            vec![csv(&format!("{CSV_HEAD}{CSV_ROW}900,100,500,180,0,{}x\n", "0".repeat(4_000_000)))],
            &csv_args(),
            &["wp.csv: line 3, column yaw:", "not a number"],
        ),
        // ---------------------------------------------------------------- command line
        case("cli: unknown flag", vec![good()], &["check", "good.yaml", "--frobnicate"], &["'--frobnicate'", "see `armpath check --help`"]),
        case("cli: missing path argument", vec![], &["check"], &["<PATH>", "see `armpath check --help`"]),
        case("cli: --tool with 5 values", vec![good()], &["check", "good.yaml", "--tool", "1,2,3,4,5"], &["--tool:", "6 comma-separated numbers, got 5"]),
        case("cli: --tool with text", vec![good()], &["check", "good.yaml", "--tool", "1,2,x,4,5,6"], &["--tool:", "value 3 ('x')", "finite number"]),
        case("cli: --work-frame with a gap", vec![good()], &["check", "good.yaml", "--work-frame", "1,,2"], &["--work-frame:", "6 comma-separated numbers"]),
        case("cli: --start-joints with text", vec![good()], &["check", "good.yaml", "--start-joints", "0,0,abc,0,0,0"], &["--start-joints:", "value 3 ('abc')"]),
        case("cli: --start-joints wrong count", vec![good()], &["check", "good.yaml", "--start-joints", "0,0,0"], &["--start-joints:", "3 values", "one value per joint"]),
        case("cli: --singularity-threshold 2", vec![good()], &["check", "good.yaml", "--singularity-threshold", "2"], &["--singularity-threshold:", "not in (0, 1)"]),
        case("cli: --threads 0", vec![good()], &["check", "good.yaml", "--threads", "0"], &["--threads:", "not a whole number from 1 to 256"]),
        case("cli: negative --speed", vec![good()], &["check", "good.yaml", "--speed", "-3"], &["--speed:", "greater than 0 (got -3)"]),
        case("cli: --speed as text", vec![good()], &["check", "good.yaml", "--speed", "abc"], &["'--speed <V>'", "see `armpath check --help`"]),
        case("cli: negative --angle-step", vec![good()], &["check", "good.yaml", "--angle-step", "-1"], &["--angle-step:", "greater than 0"]),
        case("cli: zero --step", vec![good()], &["check", "good.yaml", "--step", "0"], &["--step:", "greater than 0"]),
        case("cli: zero --tcp-acceleration", vec![good()], &["check", "good.yaml", "--tcp-acceleration", "0"], &["--tcp-acceleration:", "greater than 0", "mm/s²"]),
        case("cli: --tcp-acceleration out of range", vec![good()], &["check", "good.yaml", "--tcp-acceleration", "1e9"], &["--tcp-acceleration:", "outside the accepted range", "mm/s²"]),
        case("cli: negative --tool-angular-acceleration", vec![good()], &["check", "good.yaml", "--tool-angular-acceleration", "-5"], &["--tool-angular-acceleration:", "greater than 0", "deg/s²"]),
        case("cli: --tool-angular-acceleration out of range", vec![good()], &["check", "good.yaml", "--tool-angular-acceleration", "1e9"], &["--tool-angular-acceleration:", "outside the accepted range", "deg/s²"]),
        case("cli: --joint-acceleration-scale out of range", vec![good()], &["check", "good.yaml", "--joint-acceleration-scale", "0"], &["--joint-acceleration-scale:", "from 0.001 to 1000"]),
        case("cli: --process-speed-tolerance of 1", vec![good()], &["check", "good.yaml", "--process-speed-tolerance", "1"], &["--process-speed-tolerance:", "not including) 1"]),
        case("cli: negative --process-speed-tolerance", vec![good()], &["check", "good.yaml", "--process-speed-tolerance", "-0.1"], &["--process-speed-tolerance:", "from 0 up to"]),
        case("cli: zero --clearance", vec![good()], &["check", "good.yaml", "--clearance", "0"], &["--clearance:", "greater than 0", "mm"]),
        case("cli: csv with a bad --tcp-acceleration", vec![csv(&format!("{CSV_HEAD}{CSV_ROW}900,100,500,180,0,0\n"))], &[&CSV_ARGS[..], &["--tcp-acceleration", "-1"]].concat(), &["--tcp-acceleration:", "greater than 0"]),
        case("cli: --joint-speed-scale above 1", vec![good()], &["check", "good.yaml", "--joint-speed-scale", "1.5"], &["--joint-speed-scale:", "above 1", "(0, 1]"]),
        case(
            "cli: unknown unit in --units",
            vec![good()],
            &["check", "good.yaml", "--units", "inch,deg"],
            &["--units:", "'inch' is not a unit", "mm or m"],
        ),
        case(
            "cli: --units with an angle unit misspelt",
            vec![good()],
            &["check", "good.yaml", "--units", "mm,grad"],
            &["--units:", "'grad'", "deg or rad"],
        ),
        case("cli: negative --max-samples", vec![good()], &["check", "good.yaml", "--max-samples", "-5"], &["'--max-samples <N>'", "see `armpath check --help`"]),
        case("cli: empty --tip", vec![good()], &["check", "good.yaml", "--tip", ""], &["--tip:", "is empty"]),
        case("cli: --json to a folder", vec![good(), ("out", Entry::Folder)], &["check", "good.yaml", "--json", "out"], &["--json:", "out is a folder", "give a file name"]),
        case("cli: --joints to a folder", vec![good(), ("out", Entry::Folder)], &["check", "good.yaml", "--joints", "out"], &["--joints:", "out is a folder"]),
        case("cli: --json into a missing folder", vec![good()], &["check", "good.yaml", "--json", "nodir/r.json"], &["--json:", "folder nodir does not exist", "create it"]),
        case("cli: fk with too few joints", vec![], &["fk", "arm6.urdf", "--joints", "1,2,3"], &["--joints:", "6 comma-separated numbers, got 3"]),
        case("cli: ik with a zero quaternion", vec![], &["ik", "arm6.urdf", "--pose", "900,0,900,0,0,0,0"], &["--pose:", "zero length", "qw,qx,qy,qz"]),
        case("cli: robot --json to a folder", vec![("out", Entry::Folder)], &["robot", "arm6.urdf", "--json", "out"], &["--json:", "is a folder"]),
        case("check: sample cap exceeded mid-run", vec![good()], &["check", "good.yaml", "--max-samples", "1"], &["good.yaml: sampling:", "--max-samples N"]),
        // fix amends this path (its speed is too high) and must write the start joints in the
        // file's mm and deg, which it cannot for values given in rad and m without knowing
        // each joint's kind.
        case(
            "fix: --start-joints in other units than the path file",
            vec![text("w.yaml", std::fs::read_to_string(repo("paths/wrist_crossing.yaml")).unwrap().replace("../robots/arm6.urdf", "arm6.urdf"))],
            &["fix", "w.yaml", "--out", "o.yaml", "--units", "m,rad", "--start-joints", "0,0,0,0,0,0", "--start-joints-as-seed"],
            &["--start-joints:", "other units than the path file", "--units mm,deg"],
        ),
        // ---------------------------------------------------------------- cell and tool geometry
        case("cell: file missing", vec![yaml(&format!("{HEAD}cell: nothere.yaml\n{TWO}"))], &["check", "path.yaml"], &["nothere.yaml: file:", "cannot be opened", "relative to the path file's folder"]),
        case("cell: --cell names a folder", vec![good(), ("sub", Entry::Folder)], &["check", "good.yaml", "--cell", "sub"], &["sub: file:", "not a regular file", ".yaml cell file"]),
        case("cell: body without frame", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: block, box: [100, 100, 100]}\n")], &["check", "path.yaml"], &["c.yaml: bodies[0]:", "no `frame`", "frame: base"]),
        case("cell: unknown shape key", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: block, frame: base, cone: [1, 2]}\n")], &["check", "path.yaml"], &["c.yaml: line 2 column", "unknown field `cone`", "remove the key"]),
        case("cell: negative radius", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: ball, frame: work, sphere: {radius: -5}}\n")], &["check", "path.yaml"], &["c.yaml: bodies[0]:", "radius is -0.005 m", "positive size"]),
        case("cell: two shapes in one body", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, box: [1, 1, 1]}\n")], &["check", "path.yaml"], &["c.yaml: bodies[0]:", "exactly one shape"]),
        case("cell: allowed contact names no body", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\nallowed_contacts:\n  - {between: [ghost, b], when: always}\n")], &["check", "path.yaml"], &["c.yaml: allowed_contacts[0]:", "names 'ghost'", "use one of"]),
        case("cell: body named like a robot link", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: link2, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\n")], &["check", "path.yaml"], &["c.yaml: bodies[0].name:", "already the name of a robot link"]),
        case("cell: never_meet with a cell body", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\nnever_meet:\n  - [link1, b]\n")], &["check", "path.yaml"], &["c.yaml: never_meet[0]:", "use allowed_contacts"]),
        case("cell: mesh file is not STL", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: m, frame: work, mesh: {file: m.stl}}\n"), text("m.stl", "hello")], &["check", "path.yaml"], &["c.yaml: bodies[0].mesh.file:", "m.stl", "STL"]),
        case("cell: mesh encloses no volume", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: m, frame: work, mesh: {file: m.stl}}\n"), text("m.stl", "solid t\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 1 0 0\nvertex 0 1 0\nendloop\nendfacet\nendsolid t\n")], &["check", "path.yaml"], &["c.yaml: bodies[0].mesh.file:", "encloses no volume"]),
        case("cell: flat mesh of four triangles", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: sheet, frame: work, mesh: {file: m.stl}}\n"), text("m.stl", "solid t\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 10 0 0\nvertex 0 10 0\nendloop\nendfacet\nfacet normal 0 0 1\nouter loop\nvertex 10 0 0\nvertex 10 10 0\nvertex 0 10 0\nendloop\nendfacet\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\nvertex 10 0 0\nvertex 0 10 0\nendloop\nendfacet\nfacet normal 0 0 1\nouter loop\nvertex 10 0 0\nvertex 10 10 0\nvertex 0 10 0\nendloop\nendfacet\nendsolid t\n")], &["check", "path.yaml"], &["c.yaml: bodies[0].mesh:", "'sheet' encloses no volume", "closed mesh"]),
        case("cell: allowed contact with an unknown `when`", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\nallowed_contacts:\n  - {between: [link6, b], when: sometimes}\n")], &["check", "path.yaml"], &["c.yaml: line 4 column", "unknown variant `sometimes`", "use one of the listed values"]),
        case("cell: allowed contact depth on an always pair", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\nallowed_contacts:\n  - {between: [link6, b], when: always, depth: 2}\n")], &["check", "path.yaml"], &["c.yaml: allowed_contacts[0].depth:", "when: process"]),
        case("cell: allowed contact depth of a metre", vec![cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\nallowed_contacts:\n  - {between: [link6, b], when: process, depth: 1000}\n")], &["check", "path.yaml"], &["c.yaml: allowed_contacts[0].depth:", "is 1 m, outside 0 .. 0.1 m"]),
        case("cell: brackets nested too deep", vec![cell_path(), text("c.yaml", format!("bodies: {}{}\n", "[".repeat(40), "]".repeat(40)))], &["check", "path.yaml"], &["c.yaml: line 1:", "nest more than"]),
        case("tool: geometry with a frame", vec![yaml(&format!("{HEAD}tool: {{xyz: [0, 0, 100], geometry: [{{frame: work, sphere: {{radius: 5}}}}]}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: tool.geometry[0].frame:", "rides on the tip link"]),
        case("tool: geometry with a zero length", vec![yaml(&format!("{HEAD}tool: {{xyz: [0, 0, 100], geometry: [{{name: neck, cylinder: {{radius: 10, length: 0}}}}]}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: tool.geometry[0]:", "length is 0 m"]),
        case("limits: negative clearance", vec![yaml(&format!("{HEAD}limits: {{clearance: -1}}\n{TWO}"))], &["check", "path.yaml"], &["path.yaml: limits.clearance:", "the clearance"]),
        case(
            "urdf: collision mesh named by a ROS package",
            vec![text("arm6.urdf", arm6_with("<sphere radius=\"0.05\"/>", "<mesh filename=\"package://arm/wrist.stl\"/>")), cell_path(), text("c.yaml", "bodies:\n  - {name: b, frame: base, sphere: {radius: 5}, xyz: [2000, 0, 0]}\n")],
            &["check", "path.yaml"],
            &["arm6.urdf: link 'link5' <collision> 1:", "ROS package", "relative to the URDF's folder"],
        ),
        case(
            "urdf: collision box of zero size",
            vec![text("arm6.urdf", arm6_with("<box size=\"0.14 0.16 0.5\"/>", "<box size=\"0.14 0 0.5\"/>")), ("p.yaml", Entry::Bytes(format!("{HEAD}tool: {{xyz: [0, 0, 100], geometry: [{{sphere: {{radius: 5}}}}]}}\n{TWO}").into_bytes()))],
            &["check", "p.yaml"],
            &["arm6.urdf: link 'link2' <collision> 1:", "size y is 0 m"],
        ),
    ]
}

/// A valid path file naming the cell file `c.yaml`.
fn cell_path() -> (&'static str, Entry) {
    yaml(&format!("{HEAD}cell: c.yaml\n{TWO}"))
}

/// An older report that an input error must leave as it is.
const OLD_REPORT: &str = "{\"older\": \"report\"}\n";

/// Runs one case; returns a description of every way it failed.
fn run(c: &Case) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::copy(repo("robots/arm6.urdf"), d.join("arm6.urdf")).unwrap();
    for (name, entry) in &c.files {
        let p = d.join(name);
        match entry {
            Entry::Bytes(b) => std::fs::write(&p, b).unwrap(),
            Entry::Folder => std::fs::create_dir(&p).unwrap(),
            Entry::Dangling => std::os::unix::fs::symlink(d.join("no/such/file"), &p).unwrap(),
        }
    }
    let mut args = c.args.clone();
    // `check` cases also ask for outputs (unless the case is about them): an older JSON
    // report that must stay as it is, and a joint CSV that must not appear.
    let with_outputs = args.first().is_some_and(|a| a == "check")
        && args.len() > 1
        && !args.iter().any(|a| a == "--json" || a == "--joints");
    if with_outputs {
        std::fs::write(d.join("old.json"), OLD_REPORT).unwrap();
        args.extend(["--json", "old.json", "--joints", "new.csv"].map(String::from));
    }
    let before = listing(d);

    let out = Command::cargo_bin("armpath")
        .unwrap()
        .args(&args)
        .current_dir(d)
        .env_remove("RUST_BACKTRACE")
        .timeout(TIMEOUT)
        .output()
        .unwrap();

    let mut fails = Vec::new();
    let stderr = String::from_utf8_lossy(&out.stderr);
    let lines: Vec<&str> = stderr.lines().filter(|l| !l.trim().is_empty()).collect();
    if out.status.code() != Some(2) {
        fails.push(format!(
            "exit {:?} (want 2, within the hang guard of {TIMEOUT:?})",
            out.status.code()
        ));
    }
    if !out.stdout.is_empty() {
        fails.push(format!(
            "printed on standard output: {}",
            clip(&String::from_utf8_lossy(&out.stdout))
        ));
    }
    if stderr.contains("panicked") || stderr.contains("RUST_BACKTRACE") {
        fails.push(format!("panicked: {}", clip(&stderr)));
    }
    if lines.len() != 1 || !lines[0].starts_with("armpath: error: ") {
        fails.push(format!(
            "want one line starting `armpath: error: `, got {} lines: {}",
            lines.len(),
            clip(&stderr)
        ));
    }
    for phrase in c.expect {
        if !stderr.contains(phrase) {
            fails.push(format!("message lacks `{phrase}`: {}", clip(&stderr)));
        }
    }
    if with_outputs {
        let old = std::fs::read_to_string(d.join("old.json")).unwrap_or_default();
        if old != OLD_REPORT {
            fails.push(format!("the older report was changed to: {}", clip(&old)));
        }
    }
    let after = listing(d);
    if after != before {
        fails.push(format!(
            "the folder changed (outputs or temporary files left behind): {before:?} -> {after:?}"
        ));
    }
    fails
}

/// The names in a folder, hidden ones included, sorted.
fn listing(d: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// A long output shortened for the failure list.
fn clip(s: &str) -> String {
    if s.len() > 400 {
        let mut end = 400;
        while !s.is_char_boundary(end) {
            end -= 1;
        }
        format!("{}… ({} bytes)", &s[..end], s.len())
    } else {
        s.trim_end().to_string()
    }
}

#[test]
fn every_bad_input_ends_with_one_located_message_and_exit_2() {
    let cases = cases();
    // source: common practice (the catalogue only grows: the floor is its size when the last
    // case was added; a case removed by mistake fails here).
    assert!(
        cases.len() >= FLOOR,
        "only {} cases, fewer than {FLOOR}",
        cases.len()
    );
    let mut names = std::collections::HashSet::new();
    for c in &cases {
        assert!(names.insert(c.name), "case `{}` appears twice", c.name);
    }
    let failures: Vec<String> = cases
        .iter()
        .flat_map(|c| run(c).into_iter().map(move |f| format!("{}: {f}", c.name)))
        .collect();
    assert!(
        failures.is_empty(),
        "{} of {} cases failed:\n{}",
        failures.len(),
        cases.len(),
        failures.join("\n")
    );
}

#[test]
fn a_good_run_still_writes_both_outputs() {
    // The harness above would pass for a binary that never writes outputs; this proves the
    // same arguments do write them when the input is good.
    // source: common practice (a negative test needs its positive counterpart)
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    std::fs::copy(repo("robots/arm6.urdf"), d.join("arm6.urdf")).unwrap();
    std::fs::write(d.join("good.yaml"), format!("{HEAD}{TWO}")).unwrap();
    std::fs::write(d.join("old.json"), OLD_REPORT).unwrap();
    let out = Command::cargo_bin("armpath")
        .unwrap()
        .args([
            "check",
            "good.yaml",
            "--json",
            "old.json",
            "--joints",
            "new.csv",
        ])
        .current_dir(d)
        .timeout(TIMEOUT)
        .output()
        .unwrap();
    assert!(
        matches!(out.status.code(), Some(0) | Some(1)),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let json = std::fs::read_to_string(d.join("old.json")).unwrap();
    assert_ne!(json, OLD_REPORT);
    assert!(json.contains("\"findings\""), "{}", clip(&json));
    assert!(d.join("new.csv").is_file());
}
