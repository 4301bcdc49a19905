//! The page's settings section: every input the check depends on (robot, path settings,
//! tool, work frame, segments, arm configurations), user text escaped.

use super::data::PlotData;
use super::markup::escape;
use crate::job::Motion;
use crate::report::kinematics::PoseReport;
use crate::report::{count, Report};
use std::fmt::Write;

/// Waypoint names listed in the settings.
const MAX_WAYPOINT_NAMES: usize = 60;

/// The settings section: robot, path settings, tool and work frame, the segment table and
/// the arm configurations' table.
pub(super) fn settings(o: &mut String, report: &Report, data: &PlotData) {
    let r = &report.robot;
    let p = &report.path;
    let (near_deg, near_mm) = data.near_margins();
    let _ = write!(
        o,
        "<h2 id=\"settings\">Settings</h2><div class=\"grid2\"><div><h3>Robot</h3>\
         <table><tbody><tr><th>name</th><td>{}</td></tr><tr><th>URDF</th><td class=\"mono\">{}</td></tr>\
         <tr><th>chain</th><td>{} → {} · {}</td></tr><tr><th>wrist</th><td>{}</td></tr>\
         <tr><th>reach</th><td>≈ {:.0} mm</td></tr></tbody></table>",
        escape(&r.name),
        escape(&r.urdf),
        escape(&r.root_link),
        escape(&r.tip_link),
        count(r.dof, "joint"),
        r.wrist_kind(),
        r.reach_mm
    );
    o.push_str(
        "<h3>Joints</h3><table><thead><tr><th>joint</th><th>range</th><th>speed limit</th>\
         <th>allowed</th><th>start</th></tr></thead><tbody>",
    );
    for (k, j) in r.joints.iter().enumerate() {
        let range = match (j.lower, j.upper) {
            (Some(a), Some(b)) => format!("{a:.1} … {b:.1} {}", j.unit),
            _ => "continuous".into(),
        };
        let start = p
            .start
            .joints
            .get(k)
            .map_or("–".into(), |v| format!("{v:.1}"));
        let _ = write!(
            o,
            "<tr><td>{}</td><td class=\"num\">{range}</td><td class=\"num\">{:.1} {u}/s</td>\
             <td class=\"num\">{:.1} {u}/s</td><td class=\"num\">{start}</td></tr>",
            escape(&j.name),
            j.velocity,
            j.velocity * p.joint_speed_scale,
            u = j.unit
        );
    }
    o.push_str("</tbody></table></div><div><h3>Path</h3><table><tbody>");
    let mut row = |k: &str, v: String| {
        let _ = write!(o, "<tr><th>{k}</th><td>{v}</td></tr>");
    };
    row(
        "file",
        format!("<span class=\"mono\">{}</span>", escape(&p.file)),
    );
    let mut wp: Vec<String> = p
        .waypoints
        .iter()
        .take(MAX_WAYPOINT_NAMES)
        .map(|w| escape(&w))
        .collect();
    if p.waypoints.len() > MAX_WAYPOINT_NAMES {
        wp.push(format!("… ({} in all)", p.waypoints.len()));
    }
    row("waypoints", wp.join(" · "));
    row("segments", p.segments.to_string());
    row(
        "TCP speed",
        format!("{} mm/s (path default)", super::nice(p.speed_mm_s)),
    );
    row(
        "reorientation speed",
        p.orientation_speed_deg_s
            .map_or("not set".into(), |w| format!("{} deg/s", super::nice(w))),
    );
    let t = &p.tool;
    row(
        "tool (TCP in the tip frame)",
        format!(
            "{}{}",
            pose_text(&t.tip_T_tcp),
            if t.free_spin {
                format!(
                    "<br>free spin about tool z within {} … {} deg{}",
                    super::nice(t.spin_range_deg[0]),
                    super::nice(t.spin_range_deg[1]),
                    t.spin_rate_deg_s
                        .map(|r| format!(", at most {} deg/s", super::nice(r)))
                        .unwrap_or_default()
                )
            } else {
                "<br>no free spin".into()
            }
        ),
    );
    row("work frame (in the base frame)", pose_text(&p.base_T_work));
    row(
        "tool angular speed limit",
        format!(
            "{:.1} deg/s (linear segments)",
            p.tool_angular_speed_limit_deg_s
        ),
    );
    row(
        "joint speed scale",
        format!("{} × URDF velocity", super::nice(p.joint_speed_scale)),
    );
    row(
        "near-limit margin",
        format!("{near_deg:.1} deg · {near_mm:.1} mm (prismatic)"),
    );
    row(
        "singularity threshold",
        super::nice(p.singularity_threshold),
    );
    row(
        "sampling",
        format!("{:.2} mm · {:.2} deg per step", p.step_mm, p.angle_step_deg),
    );
    row(
        "start configuration",
        format!(
            "{}{}",
            p.start.how(),
            p.start
                .config
                .as_ref()
                .map(|c| format!(" · follows {}", escape(c)))
                .unwrap_or_default()
        ),
    );
    o.push_str("</tbody></table></div></div>\n");
    segment_table(o, report);
    configuration_table(o, report);
}

/// A pose as position (mm) and rpy angles (deg, fixed axes X, Y, Z), quaternion below.
fn pose_text(pose: &PoseReport) -> String {
    let [x, y, z] = pose.xyz_mm;
    let [r, p, yaw] = pose.rpy_deg;
    let [w, qx, qy, qz] = pose.quat_wxyz;
    let n = super::nice;
    format!(
        "xyz {}, {}, {} mm · rpy {}, {}, {} deg<br><span class=\"note\">quaternion (w, x, y, z) \
         {:.6}, {:.6}, {:.6}, {:.6}</span>",
        n(x),
        n(y),
        n(z),
        n(r),
        n(p),
        n(yaw),
        w,
        qx,
        qy,
        qz
    )
}

/// Every segment with its motion, speed, length, turn and planned time.
fn segment_table(o: &mut String, report: &Report) {
    let rows = &report.path.segment_table;
    let _ = write!(
        o,
        "<h3 id=\"segments\">Segments</h3><p class=\"note\">As planned from the path file \
         (base frame). Linear moves run at the programmed TCP speed{}; a joint move's planned \
         time is a lower bound, the walk stretches it to keep every joint within its allowed \
         speed.</p><table><thead><tr><th>#</th><th>from → to</th><th>motion</th>\
         <th>TCP speed (mm/s)</th><th>length (mm)</th><th>turn (deg)</th>\
         <th>planned time (s)</th></tr></thead><tbody>",
        if report.path.orientation_speed_deg_s.is_some() {
            ", or slower where the reorientation speed needs more time"
        } else {
            ""
        }
    );
    for g in rows {
        let motion = match (g.motion, g.process) {
            (Motion::Joint, _) => "joint",
            (Motion::Linear, true) => "linear · process",
            (Motion::Linear, false) => "linear",
        };
        let _ = write!(
            o,
            "<tr><td class=\"num\">{}</td><td>{} → {}</td><td>{motion}</td>\
             <td class=\"num\">{}</td><td class=\"num\">{:.1}</td><td class=\"num\">{:.1}</td>\
             <td class=\"num\">{}{:.3}</td></tr>",
            g.index,
            escape(&g.from),
            escape(&g.to),
            super::nice(g.speed_mm_s),
            g.length_mm,
            g.turn_deg,
            if g.motion == Motion::Joint {
                "≥ "
            } else {
                ""
            },
            g.planned_s
        );
    }
    o.push_str("</tbody></table>\n");
    if report.path.segments > rows.len() {
        let _ = writeln!(
            o,
            "<p class=\"note\">{} more are not listed here; the path file holds them all.</p>",
            count(report.path.segments - rows.len(), "segment")
        );
    }
}

/// The arm-configuration table (arms with a closed-form solver).
fn configuration_table(o: &mut String, report: &Report) {
    let Some(rows) = &report.configurations else {
        return;
    };
    o.push_str(
        "<h3 id=\"configurations\">Arm configurations</h3><p class=\"note\">Each \
         configuration of the closed-form solver walked over the whole path; ▸ marks the one \
         the check follows.</p><table><thead><tr><th>configuration</th><th>whole path</th>\
         <th>first stop</th><th>joints at the first waypoint</th></tr></thead><tbody>",
    );
    for r in rows {
        let used = report.path.start.config.as_deref() == Some(r.config.as_str());
        let stop = match &r.first_failure {
            Some(f) => format!(
                "{} at s = {:.1} mm (segment {} {} → {}){}",
                escape(f.kind),
                f.s_mm,
                f.segment,
                escape(&f.from),
                escape(&f.to),
                f.joint
                    .as_ref()
                    .map(|j| format!(", {}", escape(j)))
                    .unwrap_or_default()
            ),
            None => "–".into(),
        };
        let joints = r
            .start_joints
            .as_ref()
            .map_or("does not reach it".into(), |q| {
                q.iter()
                    .map(|v| format!("{v:.1}"))
                    .collect::<Vec<_>>()
                    .join(", ")
            });
        let _ = write!(
            o,
            "<tr><td>{}{}</td><td>{}</td><td>{stop}</td><td class=\"num\">{joints}</td></tr>",
            if used { "▸ " } else { "" },
            escape(&r.config),
            if r.runs { "runs" } else { "stops" }
        );
    }
    o.push_str("</tbody></table>\n");
}
