//! Writing an amended path file.
//!
//! The amended file is re-emitted whole from the [`Job`] rather than patched as text: the job
//! holds every setting the loader accepted (in SI), so converting back to the input file's
//! `units:` reproduces the file's meaning, whatever layout (block or flow YAML, a CSV waypoint
//! file) it came in. It is written through the reader's own schema
//! ([`crate::job::schema::PathFileSpec`], serialised by serde_yaml), so every key the reader
//! accepts can be written and a name or path is quoted and escaped by the YAML writer, never
//! able to start a key of its own. What changes in form, not meaning: comments are not kept
//! (the `header` notes are written as comments at the top), orientations are written as
//! quaternions (`quat: [w, x, y, z]`, exact for any rotation, where rpy would need a branch
//! choice), `robot:` becomes an absolute path (so the file works from any folder), every
//! waypoint is written with its name, and defaults the loader filled in (limits, sampling,
//! work frame, tool pose) are written out explicitly.
//!
//! Numbers are written in their shortest form that reads back to the same double
//! (serde_yaml's float writer), chosen so that the reader's unit conversion gives back the
//! job's SI value exactly where one exists ([`file_value`]).

use crate::error::Error;
use crate::job::schema::{
    ConfigSpec, FrameSpec, LimitsSpec, MarginSpec, MotionSpec, PathFileSpec, SamplingSpec,
    SpeedSpec, SplitMargin, ToolSpec, UnitsSpec, WaypointSpec, WaypointsSpec,
};
use crate::job::{Job, Motion, Units};
use crate::units::file_value;
use nalgebra::Isometry3;
use std::fmt::Write;

/// A number for report text: fixed decimals with trailing zeros (and a bare `-0`) removed.
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

/// True for the characters YAML reads as a line break or that a comment may not hold raw:
/// C0 and C1 controls, DEL, the Unicode line and paragraph separators and the byte order
/// mark.
fn needs_escape(c: char) -> bool {
    c.is_control() || matches!(c, '\u{2028}' | '\u{2029}' | '\u{feff}')
}

/// A comment line's text: line breaks and other control characters (which a waypoint name in
/// a change note may carry) are written as YAML-style escapes (`\n`, `\x85`, `\u2028`), so
/// the comment cannot end early and start a live line.
fn comment(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if needs_escape(c) && (c as u32) <= 0xff => {
                let _ = write!(out, "\\x{:02x}", c as u32);
            }
            c if needs_escape(c) => {
                let _ = write!(out, "\\u{:04x}", c as u32);
            }
            c => out.push(c),
        }
    }
    out
}

/// Position (file length unit) and quaternion `[w, x, y, z]` of a pose.
fn pose_values(pose: &Isometry3<f64>, units: &Units) -> ([f64; 3], [f64; 4]) {
    let l = units.length_to_m();
    let t = pose.translation.vector;
    let q = pose.rotation;
    (
        [t.x, t.y, t.z].map(|v| file_value(v, l)),
        [q.w, q.i, q.j, q.k],
    )
}

/// The start joints in the file's units. Values given on the command line in other units are
/// converted when revolute and prismatic values scale alike; otherwise which factor applies
/// depends on each joint's kind, which the job does not know, so the file cannot hold them.
fn start_joints(job: &Job) -> Result<Option<Vec<f64>>, Error> {
    let Some(sj) = &job.start_joints else {
        return Ok(None);
    };
    let u = &job.units;
    let angle = sj.angle_to_rad / u.angle_to_rad();
    let length = sj.length_to_m / u.length_to_m();
    if angle == 1.0 && length == 1.0 {
        return Ok(Some(sj.values.clone()));
    }
    if angle == length {
        let si = sj.angle_to_rad;
        let to = u.angle_to_rad();
        return Ok(Some(
            sj.values.iter().map(|v| file_value(v * si, to)).collect(),
        ));
    }
    Err(Error::usage(
        sj.origin.clone(),
        format!(
            "is given in other units than the path file ({}), and the amended file can only \
             hold joint values in the file's units: give the start joints in {} (with \
             --units {},{}), or write them into the path file",
            u,
            u,
            u.length.name(),
            u.angle.name()
        ),
    ))
}

/// The path file spec of `job`, every value in the job's units (see the module notes on what
/// is written).
pub fn spec(job: &Job) -> Result<PathFileSpec, Error> {
    let u = &job.units;
    let (l, a) = (u.length_to_m(), u.angle_to_rad());
    let length = |v: f64| file_value(v, l);
    let angle = |v: f64| file_value(v, a);
    let robot = std::fs::canonicalize(&job.robot).unwrap_or_else(|_| job.robot.clone());
    let tool = &job.tool;
    let (xyz, quat) = pose_values(&tool.tip_T_tcp, u);
    let free = tool.free_spin;
    let tool = ToolSpec {
        xyz,
        rpy: None,
        quat: Some(quat),
        rotvec: None,
        // Spin settings only with a free spin: without it the reader ignores them with a
        // warning.
        free_spin: free.then_some(true),
        spin_range: free.then(|| [angle(tool.spin_range.0), angle(tool.spin_range.1)]),
        spin_rate: tool.spin_rate.filter(|_| free).map(angle),
        geometry: (!tool.geometry.is_empty()).then(|| {
            tool.geometry
                .iter()
                .map(|b| crate::cell::RawBody::from_body(b, l, a))
                .collect()
        }),
    };
    let (xyz, quat) = pose_values(&job.base_T_work, u);
    let work_frame = FrameSpec {
        xyz,
        rpy: None,
        quat: Some(quat),
        rotvec: None,
    };
    let c = &job.config;
    let config =
        (c.shoulder.is_some() || c.elbow.is_some() || c.wrist.is_some()).then_some(ConfigSpec {
            shoulder: c.shoulder,
            elbow: c.elbow,
            wrist: c.wrist,
        });
    let lim = &job.limits;
    let has_cell_model = job.cell.is_some() || !job.tool.geometry.is_empty();
    let limits = LimitsSpec {
        tool_angular_speed: Some(angle(lim.tool_angular_speed)),
        joint_speed_scale: Some(lim.joint_speed_scale),
        near_limit_margin: Some(MarginSpec::Split(SplitMargin {
            angle: Some(angle(lim.near_limit_margin_angle)),
            length: Some(length(lim.near_limit_margin_length)),
        })),
        tcp_acceleration: Some(length(lim.tcp_acceleration)),
        tool_angular_acceleration: Some(angle(lim.tool_angular_acceleration)),
        joint_acceleration_scale: Some(lim.joint_acceleration_scale),
        process_speed_tolerance: Some(lim.process_speed_tolerance),
        // The clearance matters only with a cell model.
        clearance: has_cell_model.then(|| length(lim.clearance)),
        // Given joint accelerations are kept as written (the job's units are the file's).
        joint_accelerations: (!job.joint_accelerations.is_empty()).then(|| {
            job.joint_accelerations
                .iter()
                .map(|g| (g.joint.clone(), g.value))
                .collect()
        }),
    };
    let sampling = SamplingSpec {
        step: Some(length(job.sampling.step)),
        angle_step: Some(angle(job.sampling.angle_step)),
    };
    let waypoints = job
        .waypoints
        .iter()
        .enumerate()
        .map(|(i, w)| {
            let (xyz, quat) = pose_values(&w.work_T_tcp, u);
            // The first waypoint ends no segment: its segment keys mean nothing.
            let segment = i > 0;
            let keys = job.move_keys.get(i).copied().unwrap_or_default();
            // A joint move's programmed share of the joints' speed is its `speed: N%`.
            let speed = match (w.motion, keys.joint_speed_fraction) {
                (Motion::Joint, Some(f)) => Some(SpeedSpec::Share(f * 100.0)),
                _ => w.speed.map(|v| SpeedSpec::Tcp(length(v))),
            };
            WaypointSpec {
                name: Some(job.waypoint_name(i)),
                xyz,
                rpy: None,
                quat: Some(quat),
                rotvec: None,
                motion: (segment && w.motion == Motion::Joint).then_some(MotionSpec::Joint),
                speed: speed.filter(|_| segment),
                process: (segment && w.process).then_some(true),
                blend: (segment && keys.blend > 0.0).then(|| length(keys.blend)),
            }
        })
        .collect();
    Ok(PathFileSpec {
        units: Some(UnitsSpec {
            length: Some(u.length),
            angle: Some(u.angle),
        }),
        robot: Some(robot.display().to_string()),
        tip: job.tip.clone(),
        tool: Some(tool),
        cell: job.cell.as_ref().map(|c| {
            let path = std::fs::canonicalize(&c.path).unwrap_or_else(|_| c.path.clone());
            path.display().to_string()
        }),
        work_frame: Some(work_frame),
        start_joints: start_joints(job)?,
        start_joints_seed: job
            .start_joints
            .as_ref()
            .and_then(|s| s.seed.then_some(true)),
        config,
        speed: Some(length(job.speed)),
        orientation_speed: job.orientation_speed.map(angle),
        limits: Some(limits),
        sampling: Some(sampling),
        waypoints: WaypointsSpec::List(waypoints),
    })
}

/// The whole path file for `job`, in the job's units: the `header` lines as comments (what
/// was amended and why), then the [`spec`] of the job as YAML. Errors when the start joints
/// cannot be written in the file's units (see `start_joints`) or the YAML writer fails.
pub fn path_file(job: &Job, header: &[String]) -> Result<String, Error> {
    let body = serde_yaml::to_string(&spec(job)?).map_err(|e| {
        Error::input(
            &job.source,
            "amended file",
            format!("the amended path could not be written as YAML ({e}); please report this"),
        )
    })?;
    let mut out = String::with_capacity(body.len() + 80 * header.len());
    for h in header {
        let _ = writeln!(out, "# {}", comment(h));
    }
    out.push_str(&body);
    Ok(out)
}

#[cfg(test)]
mod tests;
