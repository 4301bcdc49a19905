//! Where each finding is shown: the plot that shows its kind best, the element id the
//! findings table links to, and its marker.

use super::plots::{Axis, Mark};
use crate::assess::Severity;
use crate::report::FindingReport;

/// Where a finding is shown first.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Place {
    /// That joint's position plot (against s).
    Joint(usize),
    /// Joint speeds against s.
    Speed,
    /// The singularity measure against s.
    Singularity,
    /// Tool angular speed against s.
    Tool,
    /// Joint accelerations over time.
    Acceleration,
    /// Commanded TCP speed over time.
    TcpSpeed,
    /// The nearest distance to the cell against s.
    Clearance,
    /// The path views with the arm (top view first).
    Views,
    /// Not located on the path (input findings).
    Nowhere,
}

/// The plot a finding belongs to.
pub fn place(f: &FindingReport, joint_names: &[String]) -> Place {
    if f.s_mm.is_none() {
        return Place::Nowhere;
    }
    let joint = f
        .joint
        .as_ref()
        .and_then(|j| joint_names.iter().position(|n| n == j));
    match f.kind {
        "joint_limit" | "near_joint_limit" => joint.map_or(Place::Views, Place::Joint),
        "joint_speed" => Place::Speed,
        "singularity" => Place::Singularity,
        "tool_angular_speed" => Place::Tool,
        "joint_acceleration" => Place::Acceleration,
        "process_speed" => Place::TcpSpeed,
        "clearance" => Place::Clearance,
        // A contact is seen best on the arm drawn at its worst sample.
        "collision" => Place::Views,
        "joint_jump" => {
            // The joint that jumps furthest shows the step best.
            let biggest = f.joint_deltas.as_ref().and_then(|d| {
                d.iter()
                    .max_by(|a, b| a.1.abs().total_cmp(&b.1.abs()))
                    .and_then(|(name, _)| joint_names.iter().position(|n| n == name))
            });
            biggest.map_or(Place::Views, Place::Joint)
        }
        _ => Place::Views,
    }
}

/// Element id of a finding's marker on its first plot.
pub fn pin_id(number: usize) -> String {
    format!("pin-{number}")
}

/// A finding's marker; against time it carries no element id (the table links to the
/// marker against s, or to the timing plots for the findings placed there).
pub(super) fn mark_on(number: usize, f: &FindingReport, axis: Axis) -> Mark {
    let (x, id) = match axis {
        Axis::Distance => (f.s_mm, Some(pin_id(number))),
        Axis::Time => (f.t_s, None),
    };
    Mark {
        number,
        error: f.severity == Severity::Error,
        s: x.unwrap_or([0.0, 0.0]),
        id,
        title: title(number, f),
    }
}

/// Tooltip of a marker (plain text; the page escapes it).
pub fn title(number: usize, f: &FindingReport) -> String {
    let sev = match f.severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
    };
    match &f.joint {
        Some(j) => format!("{number}. {sev}: {} · {j}", f.kind),
        None => format!("{number}. {sev}: {}", f.kind),
    }
}
