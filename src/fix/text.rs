//! Terminal text of `armpath fix`: what was changed, the per-segment speeds, and the check
//! before and after side by side.

use super::emit::num as num_fixed;
use super::FixReport;

/// A number with at most `d` decimals, trailing zeros dropped.
fn num(v: f64, d: usize) -> String {
    num_fixed(v, d)
}
use crate::report::{visible as v, Summary};
use std::fmt::Write;

fn opt(v: Option<f64>, decimals: usize) -> String {
    v.map(|x| format!("{x:.decimals$}"))
        .unwrap_or_else(|| "-".into())
}

/// Rows of the before/after table: label and the value of a summary.
fn rows(s: &Summary) -> Vec<(&'static str, String)> {
    vec![
        ("verdict", s.verdict.name().to_string()),
        ("errors", s.errors.to_string()),
        ("warnings", s.warnings.to_string()),
        ("duration (s)", format!("{:.2}", s.duration_s)),
        (
            "largest joint speed / allowed",
            format!(
                "{:.3}{}",
                s.max_joint_speed_ratio,
                s.max_joint_speed_joint
                    .as_ref()
                    .map(|j| format!(" ({})", v(j)))
                    .unwrap_or_default()
            ),
        ),
        (
            "largest tool angular speed (deg/s)",
            format!("{:.1}", s.max_tool_angular_speed_deg_s),
        ),
        ("smallest singularity measure", opt(s.min_singularity, 4)),
        (
            "smallest limit margin / half range",
            opt(s.min_limit_margin_ratio, 3),
        ),
    ]
}

/// The report as terminal text.
pub fn render_fix_text(r: &FixReport) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "armpath fix  {}", v(&r.file));
    let _ = writeln!(out);
    let _ = writeln!(out, "Segment speeds ({}):", r.speed_unit);
    let _ = writeln!(
        out,
        "  {:>3}  {:<28} {:>11} {:>9} {:>13}  {:<20} {:>10}",
        "seg", "from → to", "programmed", "ratio", "largest ok", "limited by", "proposed"
    );
    for s in &r.speeds {
        let route = format!("{} → {}", v(&s.from), v(&s.to));
        let kind = match (s.motion, s.process) {
            (crate::job::Motion::Joint, _) => " (joint move)",
            (_, true) => " (process)",
            _ => "",
        };
        let _ = writeln!(
            out,
            "  {:>3}  {:<28} {:>11} {:>9.3} {:>13}  {:<20} {:>10}",
            s.segment,
            format!("{route}{kind}"),
            num(s.programmed, 4),
            s.ratio,
            s.max_speed.map(|v| num(v, 2)).unwrap_or_else(|| "-".into()),
            v(&s.limited_by),
            s.proposed.map(|v| num(v, 4)).unwrap_or_else(|| "-".into())
        );
        if let Some(n) = &s.note {
            let _ = writeln!(out, "       note: {}", v(n));
        }
    }
    if !r.blends.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(out, "Corner blends proposed ({}):", r.length_unit);
        for b in &r.blends {
            let _ = writeln!(
                out,
                "  {:<16} {:>8}  {}",
                v(&b.waypoint),
                num(b.radius, 4),
                v(&b.why)
            );
        }
    }
    if let Some(n) = &r.blend_note {
        let _ = writeln!(out, "Corner blends: {}", v(n));
    }
    let _ = writeln!(out);
    let c = &r.configuration;
    if let Some(used) = &c.used {
        let _ = writeln!(
            out,
            "Arm configuration: the check follows {}; runs the whole path: {}",
            v(used),
            if c.running.is_empty() {
                "none".to_string()
            } else {
                v(&c.running.join(", ")).into_owned()
            }
        );
    }
    if let Some(s) = &r.spin {
        let _ = writeln!(
            out,
            "Tool spin found: {} … {} {} in configuration {}; smallest margin {:.3} (singularity {:.4}, limit margin {:.3}){}",
            num(s.min_spin, 1),
            num(s.max_spin, 1),
            s.angle_unit,
            v(&s.config),
            s.margin,
            s.min_singularity,
            s.min_limit_margin,
            if s.applied {
                String::new()
            } else if s.min_spin == 0.0 && s.max_spin == 0.0 {
                " — no spin needed".to_string()
            } else if !s.collides.is_empty() {
                format!(
                    " — not applied: the spun tool collides ({}); the spin search does not see the cell",
                    v(&s.collides.join(", "))
                )
            } else {
                " — not applied: the programmed orientations check as well or better".to_string()
            }
        );
    }
    if let Some(n) = &r.spin_note {
        let _ = writeln!(out, "Tool spin: {}", v(n));
    }
    let _ = writeln!(out);
    if r.changes.is_empty() {
        let _ = writeln!(out, "Nothing to amend: no lever above improves the path.");
    } else {
        let _ = writeln!(out, "Amended:");
        for ch in &r.changes {
            let _ = writeln!(out, "  - {}", v(ch));
        }
        if let Some(f) = &r.amended_file {
            let _ = writeln!(out, "  written to {}", v(f));
        }
    }
    let _ = writeln!(out);
    let before = rows(&r.before);
    let after = r.after.as_ref().map(rows);
    let _ = writeln!(out, "  {:<36} {:>16} {:>16}", "", "before", "after");
    for (i, (label, b)) in before.iter().enumerate() {
        let a = after
            .as_ref()
            .map(|a| a[i].1.clone())
            .unwrap_or_else(|| "(unchanged)".into());
        let _ = writeln!(out, "  {label:<36} {b:>16} {a:>16}");
    }
    let _ = writeln!(out);
    for c in &r.cautions {
        let _ = writeln!(out, "caution: {c}");
    }
    out
}
