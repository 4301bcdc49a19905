//! Turning runs into findings with messages that say what happened and what to try.

use super::{Finding, Kind, Quantity, Run};
use crate::job::{Job, Motion};
use crate::plan::Plan;
use crate::robot::{JointKind, Robot, SingularityClass};

fn quantity_of(run: &Run, robot: &Robot) -> Quantity {
    let prismatic = run
        .joint
        .map(|j| robot.joints()[j].kind == JointKind::Prismatic)
        .unwrap_or(false);
    match run.kind {
        Kind::Unreachable => Quantity::Length,
        Kind::JointLimit | Kind::NearJointLimit if prismatic => Quantity::Length,
        Kind::JointLimit | Kind::NearJointLimit => Quantity::Angle,
        Kind::JointJump => Quantity::Angle,
        Kind::Singularity => Quantity::Number,
        Kind::ToolAngularSpeed => Quantity::AngularSpeed,
        Kind::JointSpeed if prismatic => Quantity::Speed,
        Kind::JointSpeed => Quantity::AngularSpeed,
        Kind::JointAcceleration if prismatic => Quantity::Acceleration,
        Kind::JointAcceleration => Quantity::AngularAcceleration,
        Kind::ProcessSpeed => Quantity::Speed,
        Kind::Input => Quantity::Number,
        Kind::Collision | Kind::Clearance => Quantity::Length,
    }
}

/// A value with its display unit, e.g. `372.0°` or `12.5 mm`.
fn show(q: Quantity, si: f64) -> String {
    let v = q.display(si);
    match q {
        Quantity::Angle => format!("{v:.1}°"),
        Quantity::Length => format!("{v:.2} mm"),
        Quantity::AngularSpeed => format!("{v:.1} deg/s"),
        Quantity::Speed => format!("{v:.1} mm/s"),
        Quantity::AngularAcceleration => format!("{v:.0} deg/s²"),
        Quantity::Acceleration => format!("{v:.0} mm/s²"),
        Quantity::Number => format!("{v:.4}"),
    }
}

fn range_text(robot: &Robot, k: usize) -> String {
    let j = &robot.joints()[k];
    let q = if j.kind == JointKind::Prismatic {
        Quantity::Length
    } else {
        Quantity::Angle
    };
    format!("{} … {}", show(q, j.lower), show(q, j.upper))
}

fn wp_name(job: &Job, i: usize) -> String {
    job.waypoint_name(i)
}

/// Build the finding for a closed run.
pub(super) fn finding(robot: &Robot, job: &Job, plan: &Plan, run: &Run) -> Finding {
    let q = quantity_of(run, robot);
    let seg = plan.segment(run.segment);
    let seg = seg.as_ref();
    let from = wp_name(job, run.segment);
    let to = wp_name(job, run.segment + 1);
    let joint_name = run.joint.map(|k| robot.joints()[k].name.clone());
    let jn = joint_name.clone().unwrap_or_default();
    let where_ = if plan.segment_count() == 0 {
        format!("at {from}")
    } else {
        format!("between {from} and {to}")
    };
    let message = match run.kind {
        Kind::Unreachable => format!(
            "the arm cannot reach the path {where_} within its joint limits (the nearest pose it reaches is up to {} and {:.2}° away): \
             move the work frame or the part closer to the robot, or check this waypoint and the tool offset",
            show(Quantity::Length, run.value),
            run.orientation_error.to_degrees()
        ),
        Kind::JointLimit => format!(
            "following the path continuously, {jn} would need {} but its range is {}: \
             start in another arm configuration or winding (start_joints), or turn the tool about its axis if the process allows",
            show(q, run.value),
            range_text(robot, run.joint.unwrap_or(0))
        ),
        Kind::NearJointLimit => {
            let margin = (run.value - run.limit).abs();
            format!(
                "{jn} comes within {} of its limit {} ({}): little room to touch up points on the cell; \
                 consider another configuration or moving the part",
                show(q, margin),
                show(q, run.limit),
                show(q, run.value)
            )
        }
        Kind::JointJump => {
            let deltas: Vec<String> = robot
                .joints()
                .iter()
                .zip(run.delta.iter())
                .filter(|(_, d)| d.abs() > 1e-3)
                .map(|(j, d)| {
                    let qq = if j.kind == JointKind::Prismatic {
                        Quantity::Length
                    } else {
                        Quantity::Angle
                    };
                    format!("{} {:+.1}{}", j.name, qq.display(*d), if qq == Quantity::Angle { "°" } else { " mm" })
                })
                .collect();
            match run.config_change {
                Some((from_c, to_c)) => format!(
                    "the {from_c} configuration cannot reach the path {where_} ({}): the arm would have to change to {to_c} mid-path, \
                     which a linear move cannot do; start in a configuration that runs the whole path, \
                     or split the path with a joint move at this point",
                    deltas.join(", ")
                ),
                None => format!(
                    "the joint path jumps {where_} ({}): the arm would have to change configuration mid-path, \
                     which a linear move cannot do; start in a configuration that runs the whole path, \
                     or split the path with a joint move at this point",
                    deltas.join(", ")
                ),
            }
        }
        Kind::Singularity => {
            let class = match run.class {
                Some(SingularityClass::Wrist) => {
                    "a wrist singularity (axes 4 and 6 nearly aligned): tilt the tool a few degrees so the wrist stays bent, or shift the path sideways"
                }
                Some(SingularityClass::Elbow) => {
                    "an elbow singularity (arm nearly stretched or folded): move the path closer to the robot or away from the edge of its reach"
                }
                Some(SingularityClass::Shoulder) => {
                    "a shoulder singularity (wrist centre near axis 1): move the path away from the robot's first axis"
                }
                None => "a singularity: move the path or change the tool orientation so the arm keeps away from it",
            };
            format!(
                "the arm passes near {class}; measure {} below the threshold {} — joint speeds rise sharply here",
                show(Quantity::Number, run.value),
                show(Quantity::Number, run.limit)
            )
        }
        Kind::ToolAngularSpeed => {
            let factor = run.limit / run.value;
            let speed = seg.map(|s| s.speed).unwrap_or(job.speed);
            format!(
                "the tool turns at {} (limit {}): run this segment at {} or slower ({:.0} % of the programmed speed), \
                 or spread the reorientation over a longer stretch",
                show(q, run.value),
                show(q, run.limit),
                show(Quantity::Speed, speed * factor),
                factor * 100.0
            )
        }
        Kind::JointSpeed => {
            let factor = 1.0 / run.value.max(f64::MIN_POSITIVE) * run.limit;
            let speed = seg.map(|s| s.speed).unwrap_or(job.speed);
            format!(
                "{jn} would move at {} ({:.2}× its allowed {}): slow this segment to {} or less (speed factor {:.2}), \
                 or avoid the pose that makes {jn} fast (often a nearby singularity)",
                show(q, run.value),
                run.value / run.limit,
                show(q, run.limit),
                show(Quantity::Speed, speed * factor),
                factor
            )
        }
        Kind::JointAcceleration
            if run
                .joint
                .is_some_and(|k| robot.joints()[k].acceleration.is_some()) =>
        {
            format!(
                "{jn} would accelerate at {} ({:.2}× its allowed {}, given in \
                 limits.joint_accelerations): blend the corner (blend: radius), lower \
                 limits.tcp_acceleration, slow the segment, or avoid the pose that makes {jn} fast",
                show(q, run.value),
                run.value / run.limit.max(f64::MIN_POSITIVE),
                show(q, run.limit)
            )
        }
        Kind::JointAcceleration => format!(
            "{jn} would accelerate at {} ({:.2}× its allowed {}; URDF has no accelerations: the limit is armpath's \
             default, {} × the URDF speed limit per second × limits.joint_acceleration_scale): blend the corner (blend: radius), lower \
             limits.tcp_acceleration, slow the segment, or avoid the pose that makes {jn} fast; set \
             limits.joint_acceleration_scale from the controller's data",
            show(q, run.value),
            run.value / run.limit.max(f64::MIN_POSITIVE),
            show(q, run.limit),
            crate::motion::JOINT_ACCELERATION_PER_SPEED
        ),
        Kind::ProcessSpeed => {
            let programmed = seg.map(|s| s.speed).unwrap_or(job.speed);
            format!(
                "on this process segment the TCP slows to {} of the programmed {} (more than {:.0} % below it): \
                 a stop or a sharp corner makes the TCP brake and start again; blend the corner (blend: radius), \
                 start the process after a run-in, or raise limits.tcp_acceleration if the controller allows it",
                show(q, run.value),
                show(Quantity::Speed, programmed),
                job.limits.process_speed_tolerance * 100.0
            )
        }
        // Made by the cell watch, which closes its own runs.
        Kind::Input | Kind::Collision | Kind::Clearance => String::new(),
    };
    Finding {
        kind: run.kind,
        segment: Some(run.segment),
        from: Some(from),
        to: Some(to),
        samples: Some([run.first, run.last]),
        s: Some(run.s),
        t: Some(run.t),
        joint: joint_name,
        bodies: None,
        value: Some(run.value),
        // A jump has no limit: any discontinuity is one.
        limit: (run.kind != Kind::JointJump).then_some(run.limit),
        quantity: q,
        deltas: (run.kind == Kind::JointJump).then_some(run.delta),
        worst_sample: Some(run.worst_sample),
        worst_joints: Some(run.worst_joints),
        message,
    }
}

/// Input findings: the job's warnings and half-turn orientation changes in the plan.
pub(super) fn input_findings(job: &Job, plan: &Plan) -> Vec<Finding> {
    let mut out = Vec::new();
    let make = |segment: Option<usize>, message: String| {
        Finding::input(
            segment,
            segment.map(|s| wp_name(job, s)),
            segment.map(|s| wp_name(job, s + 1)),
            message,
        )
    };
    for w in &job.warnings {
        let segment = w.waypoint.map(|i| i.saturating_sub(1));
        out.push(make(segment, format!("{}: {}", w.location, w.message)));
    }
    // Joint moves do not follow the orientation geodesic: only linear segments are flagged.
    let mut before: Option<crate::plan::Segment> = None;
    for seg in plan.segments() {
        if let Some(prev) = &before {
            if let Some(m) = blend_note(job, plan, prev, &seg) {
                out.push(make(Some(prev.index), m));
            }
        }
        before = Some(seg.clone());
        if seg.motion == Motion::Linear && seg.geodesic.is_near_half_turn() {
            let axis = seg
                .geodesic
                .axis()
                .map(|a| format!("[{:.3}, {:.3}, {:.3}]", a.x, a.y, a.z))
                .unwrap_or_default();
            out.push(make(
                Some(seg.index),
                format!(
                    "the tool turns by {:.1}° from {} to {}, within {:.0}° of a half turn: the turning direction is (nearly) a tie \
                     and a touch-up of a few degrees can reverse it; armpath turns about the axis {axis} of the start orientation; \
                     add a waypoint in between to fix the direction",
                    seg.geodesic.angle().to_degrees(),
                    wp_name(job, seg.index),
                    wp_name(job, seg.index + 1),
                    crate::rotation::HALF_TURN_TOLERANCE.to_degrees()
                ),
            ));
        }
    }
    if let Some(last) = before {
        let k = last.index + 1;
        if plan.blend_radius(k) > 0.0 {
            out.push(make(
                Some(last.index),
                format!(
                    "{}: blend {} on the last waypoint ignored: the path stops there; remove it",
                    job.waypoint_origin(k),
                    show(Quantity::Length, plan.blend_radius(k))
                ),
            ));
        }
    }
    out
}

/// The note on the blend at the waypoint between segments `a` and `b`: cut to half a
/// neighbouring segment, or ignored where a blend cannot apply.
fn blend_note(
    job: &Job,
    plan: &Plan,
    a: &crate::plan::Segment,
    b: &crate::plan::Segment,
) -> Option<String> {
    let k = a.index + 1;
    let radius = plan.blend_radius(k);
    if radius <= 0.0 {
        return None;
    }
    let at = job.waypoint_origin(k);
    let asked = show(Quantity::Length, radius);
    if a.motion == Motion::Joint || b.motion == Motion::Joint {
        return Some(format!(
            "{at}: blend {asked} ignored next to a joint move: the arm stops at {} (blends round corners between \
             straight-line moves); remove it or make both moves linear",
            wp_name(job, k)
        ));
    }
    if a.blend.half <= 0.0 {
        return Some(format!(
            "{at}: blend {asked} ignored: a neighbouring segment does not move the TCP, so there is no corner to \
             round; remove it"
        ));
    }
    a.blend.clipped.then(|| {
        format!(
            "{at}: blend {asked} cut to {} (half of the shorter neighbouring segment, so that the blends at both \
             ends of a segment cannot overlap); give a smaller radius or longer segments",
            show(Quantity::Length, a.blend.radius_in.max(a.blend.radius_out))
        )
    })
}
