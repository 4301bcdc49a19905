//! Writing an amended path file.
//!
//! The amended file is re-emitted whole from the [`Job`] rather than patched as text: the job
//! holds every setting the loader accepted (in SI), so converting back to the input file's
//! `units:` reproduces the file's meaning exactly, whatever layout (block or flow YAML, a CSV
//! waypoint file) it came in. What changes in form, not meaning: comments are not kept,
//! orientations are written as quaternions (`quat: [w, x, y, z]`, exact for any rotation,
//! where rpy would need a branch choice), `robot:` becomes an absolute path (so the file works
//! from any folder), and defaults the loader filled in are written out explicitly.
//!
//! Numbers are written with 9 decimals for lengths and angles (1e-9 mm or deg is far below
//! any robot's resolution, and round-trips through the loader within its 1 nm tolerance) and
//! 12 for quaternion components (a 1e-12 component error is a rotation error of ~1e-12 rad).

use crate::job::{Job, Motion};
use nalgebra::Isometry3;
use std::fmt::Write;

/// A number for the file: fixed decimals with trailing zeros (and a bare `-0`) removed.
pub fn num(v: f64, decimals: usize) -> String {
    let mut s = format!("{v:.decimals$}");
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" {
        s = "0".into();
    }
    s
}

/// `xyz: [..], quat: [..]` of a pose, lengths in the file's unit.
fn pose_fields(job: &Job, pose: &Isometry3<f64>) -> String {
    let l = job.units.length_to_m();
    let t = pose.translation.vector / l;
    let q = pose.rotation;
    format!(
        "xyz: [{}, {}, {}], quat: [{}, {}, {}, {}]",
        num(t.x, 9),
        num(t.y, 9),
        num(t.z, 9),
        num(q.w, 12),
        num(q.i, 12),
        num(q.j, 12),
        num(q.k, 12)
    )
}

/// One tool body as a flow mapping in the file's units: name, shape, `xyz` and `rpy` (the
/// body's rotation as URDF roll, pitch, yaw). A mesh keeps its scale and gets an absolute
/// file name, like `robot:`.
fn body_fields(job: &Job, b: &crate::cell::BodySpec) -> String {
    use crate::cell::Primitive;
    let l = job.units.length_to_m();
    let a = job.units.angle_to_rad();
    let n = |v: f64| num(v / l, 9);
    let shape = match (&b.primitive, &b.mesh) {
        (_, Some((file, scale))) => {
            let file = std::fs::canonicalize(file).unwrap_or_else(|_| file.clone());
            format!(
                "mesh: {{file: {}, scale: [{}, {}, {}]}}",
                quoted(&file.display().to_string()),
                num(scale.x, 12),
                num(scale.y, 12),
                num(scale.z, 12)
            )
        }
        (Primitive::Box { size }, None) => {
            format!("box: [{}, {}, {}]", n(size.x), n(size.y), n(size.z))
        }
        (Primitive::Cylinder { radius, length }, None) => {
            format!(
                "cylinder: {{radius: {}, length: {}}}",
                n(*radius),
                n(*length)
            )
        }
        (Primitive::Capsule { radius, length }, None) => {
            format!(
                "capsule: {{radius: {}, length: {}}}",
                n(*radius),
                n(*length)
            )
        }
        (Primitive::Sphere { radius }, None) => format!("sphere: {{radius: {}}}", n(*radius)),
        // A hull always comes from a mesh file, handled above.
        (Primitive::Hull(_), None) => String::new(),
    };
    let t = b.anchor_T_body.translation.vector;
    let (r, p, y) = b.anchor_T_body.rotation.euler_angles();
    format!(
        "{{name: {}, {shape}, xyz: [{}, {}, {}], rpy: [{}, {}, {}]}}",
        quoted(&b.name),
        n(t.x),
        n(t.y),
        n(t.z),
        num(r / a, 9),
        num(p / a, 9),
        num(y / a, 9)
    )
}

/// True for the characters YAML reads as a line break or that a double-quoted scalar may not
/// hold raw: C0 and C1 controls, DEL, the Unicode line and paragraph separators and the byte
/// order mark.
fn needs_escape(c: char) -> bool {
    c.is_control() || matches!(c, '\u{2028}' | '\u{2029}' | '\u{feff}')
}

/// `c` as a YAML double-quoted escape sequence (YAML 1.2, section 5.7).
fn push_escaped(out: &mut String, c: char) {
    match c {
        '\n' => out.push_str("\\n"),
        '\r' => out.push_str("\\r"),
        '\t' => out.push_str("\\t"),
        c if (c as u32) <= 0xff => {
            let _ = write!(out, "\\x{:02x}", c as u32);
        }
        c => {
            let _ = write!(out, "\\u{:04x}", c as u32);
        }
    }
}

/// YAML double-quoted string: `"` and `\` escaped, and every control character or line break
/// written as an escape sequence, so that any name or path stays one scalar on one line.
fn quoted(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 2);
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if needs_escape(c) => push_escaped(&mut out, c),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// A comment line's text: line breaks and other control characters (which a waypoint name in
/// a change note may carry) are written as escapes, so the comment cannot end early and start
/// a live line.
fn comment(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        if needs_escape(c) {
            push_escaped(&mut out, c);
        } else {
            out.push(c);
        }
    }
    out
}

/// The whole path file for `job`, in the job's units. `header` lines are written first as
/// comments (what was amended and why).
pub fn path_file(job: &Job, header: &[String]) -> String {
    let l = job.units.length_to_m();
    let a = job.units.angle_to_rad();
    let mut out = String::new();
    for h in header {
        let _ = writeln!(out, "# {}", comment(h));
    }
    let _ = writeln!(
        out,
        "units: {{length: {}, angle: {}}}",
        job.units.length.name(),
        job.units.angle.name()
    );
    let robot = std::fs::canonicalize(&job.robot).unwrap_or_else(|_| job.robot.clone());
    let _ = writeln!(out, "robot: {}", quoted(&robot.display().to_string()));
    if let Some(tip) = &job.tip {
        let _ = writeln!(out, "tip: {}", quoted(tip));
    }
    let tool = &job.tool;
    let mut tool_line = format!("tool: {{{}", pose_fields(job, &tool.tip_T_tcp));
    if tool.free_spin {
        let _ = write!(
            tool_line,
            ", free_spin: true, spin_range: [{}, {}]",
            num(tool.spin_range.0 / a, 9),
            num(tool.spin_range.1 / a, 9)
        );
        if let Some(r) = tool.spin_rate {
            let _ = write!(tool_line, ", spin_rate: {}", num(r / a, 9));
        }
    }
    if !tool.geometry.is_empty() {
        let bodies: Vec<String> = tool.geometry.iter().map(|b| body_fields(job, b)).collect();
        let _ = write!(tool_line, ", geometry: [{}]", bodies.join(", "));
    }
    tool_line.push('}');
    let _ = writeln!(out, "{tool_line}");
    if let Some(cell) = &job.cell {
        let path = std::fs::canonicalize(&cell.path).unwrap_or_else(|_| cell.path.clone());
        let _ = writeln!(out, "cell: {}", quoted(&path.display().to_string()));
    }
    let _ = writeln!(
        out,
        "work_frame: {{{}}}",
        pose_fields(job, &job.base_T_work)
    );
    if let Some(sj) = &job.start_joints {
        let v: Vec<String> = sj.values.iter().map(|x| num(*x, 9)).collect();
        let _ = writeln!(out, "start_joints: [{}]", v.join(", "));
        if sj.seed {
            let _ = writeln!(out, "start_joints_seed: true");
        }
    }
    let c = &job.config;
    let mut parts = Vec::new();
    if let Some(v) = c.shoulder {
        parts.push(format!("shoulder: {v}"));
    }
    if let Some(v) = c.elbow {
        parts.push(format!("elbow: {v}"));
    }
    if let Some(v) = c.wrist {
        parts.push(format!("wrist: {v}"));
    }
    if !parts.is_empty() {
        let _ = writeln!(out, "config: {{{}}}", parts.join(", "));
    }
    let _ = writeln!(out, "speed: {}", num(job.speed / l, 9));
    if let Some(w) = job.orientation_speed {
        let _ = writeln!(out, "orientation_speed: {}", num(w / a, 9));
    }
    let lim = &job.limits;
    // The clearance matters only with a cell model; other files stay as they were.
    let clearance = if job.cell.is_some() || !tool.geometry.is_empty() {
        format!(", clearance: {}", num(lim.clearance / l, 9))
    } else {
        String::new()
    };
    let _ = writeln!(
        out,
        "limits: {{tool_angular_speed: {}, joint_speed_scale: {}, near_limit_margin: {{angle: {}, length: {}}}{clearance}}}",
        num(lim.tool_angular_speed / a, 9),
        num(lim.joint_speed_scale, 12),
        num(lim.near_limit_margin_angle / a, 9),
        num(lim.near_limit_margin_length / l, 9)
    );
    let _ = writeln!(
        out,
        "sampling: {{step: {}, angle_step: {}}}",
        num(job.sampling.step / l, 9),
        num(job.sampling.angle_step / a, 9)
    );
    let _ = writeln!(out, "waypoints:");
    for (i, w) in job.waypoints.iter().enumerate() {
        let mut line = format!(
            "  - {{name: {}, {}",
            quoted(&job.waypoint_name(i)),
            pose_fields(job, &w.work_T_tcp)
        );
        if i > 0 {
            if w.motion == Motion::Joint {
                line.push_str(", motion: joint");
            }
            if let Some(v) = w.speed {
                let _ = write!(line, ", speed: {}", num(v / l, 9));
            }
            if w.process {
                line.push_str(", process: true");
            }
        }
        line.push('}');
        let _ = writeln!(out, "{line}");
    }
    out
}

#[cfg(test)]
mod tests {
    use super::{comment, num, quoted};

    #[test]
    fn quoted_strings_read_back_unchanged_as_one_scalar() {
        // source: serde_yaml 0.9 as the reference YAML reader
        let names = [
            "plain",
            "a\nstart_joints: [1, 2, 3, 4, 5, 6]",
            "cr\rlf\r\n",
            "tab\tand \"quotes\" and \\ back",
            "nel\u{85} ls\u{2028} ps\u{2029} bom\u{feff} nul\u{0} del\u{7f}",
            "}, start_joints: [0], x: {",
        ];
        for name in names {
            let text = format!("{{name: {}, z: 1}}\n", quoted(name));
            assert_eq!(text.lines().count(), 1, "{text:?}");
            let v: serde_yaml::Mapping = serde_yaml::from_str(&text).unwrap();
            assert_eq!(v.len(), 2, "{text:?}");
            assert_eq!(v["name"].as_str(), Some(name));
        }
    }

    #[test]
    fn comments_stay_on_one_line() {
        // source: common practice (a YAML comment ends at the line break)
        let c = comment("segment 1 (a\nspeed: 1 → b\u{2028}c)");
        assert_eq!(c, "segment 1 (a\\nspeed: 1 → b\\u2028c)");
        let v: Option<serde_yaml::Value> = serde_yaml::from_str(&format!("# {c}\n")).unwrap();
        assert!(v.is_none_or(|v| v.is_null()));
    }

    #[test]
    fn numbers_lose_trailing_zeros_only() {
        // source: common practice (fixed-point formatting)
        assert_eq!(num(20.0, 9), "20");
        assert_eq!(num(-0.0000000001, 9), "0");
        assert_eq!(num(46.6, 9), "46.6");
        assert_eq!(num(100.0, 0), "100");
    }
}
