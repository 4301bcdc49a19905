//! The terminal rendering of a report. Plain text unless colour is asked for; colour never
//! carries meaning alone (every coloured word is also spelled out).

use super::{Report, Verdict};
use crate::assess::Severity;
use std::fmt::Write;

/// How to render.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Style {
    /// Use ANSI colours and bold (only on a terminal and when `NO_COLOR` is unset).
    pub color: bool,
}

fn paint(style: Style, code: &str, text: &str) -> String {
    if style.color {
        format!("\x1b[{code}m{text}\x1b[0m")
    } else {
        text.to_string()
    }
}

fn range(r: Option<[f64; 2]>, digits: usize) -> String {
    match r {
        Some([a, b]) if (a - b).abs() < 1e-9 => format!("{a:.digits$}"),
        Some([a, b]) => format!("{a:.digits$}–{b:.digits$}"),
        None => "–".into(),
    }
}

/// Render the report for a terminal or a log.
pub fn render_text(report: &Report, style: Style) -> String {
    let mut o = String::new();
    let r = &report.robot;
    let p = &report.path;
    let s = &report.summary;
    let _ = writeln!(
        o,
        "armpath {} · check of {}",
        report.armpath_version, p.file
    );
    let _ = writeln!(
        o,
        "  robot    {} · {} joints · tip {} · {} wrist · reach ≈ {:.0} mm",
        r.name,
        r.dof,
        r.tip_link,
        if r.spherical_wrist {
            "spherical"
        } else {
            "offset"
        },
        r.reach_mm
    );
    let joints: Vec<String> = r
        .joints
        .iter()
        .zip(&p.start.joints)
        .map(|(j, v)| format!("{} {:.1}", j.name, v))
        .collect();
    let how = match p.start.method {
        "start_joints" => "from start_joints".to_string(),
        "search" if p.start.config.is_some() => format!(
            "best of {} configurations reaching the first pose",
            p.start.alternatives
        ),
        "search" => format!(
            "best of {} solutions found for the first pose",
            p.start.alternatives
        ),
        _ => "first pose not reachable".to_string(),
    };
    let _ = writeln!(
        o,
        "  start    {} ({how}){}",
        joints.join("  "),
        p.start
            .config
            .as_ref()
            .map(|c| format!(" · configuration {c}"))
            .unwrap_or_default()
    );
    let _ = writeln!(
        o,
        "  path     {} waypoints · {} segments · {} samples · {:.1} mm · {:.2} s",
        p.waypoints.len(),
        p.segments,
        s.samples,
        s.length_mm,
        s.duration_s
    );
    let _ = writeln!(o);
    let (word, code) = match s.verdict {
        Verdict::Pass => ("PASS", "1;36"),
        Verdict::Warn => ("WARN", "1;33"),
        Verdict::Fail => ("FAIL", "1;31;7"),
    };
    let _ = writeln!(
        o,
        "  verdict  {}  {} error{}, {} warning{}",
        paint(style, code, word),
        s.errors,
        if s.errors == 1 { "" } else { "s" },
        s.warnings,
        if s.warnings == 1 { "" } else { "s" }
    );
    let sing = match (s.min_singularity, s.min_singularity_s_mm) {
        (Some(m), Some(at)) => format!(
            "{m:.4}{} at s = {at:.1} mm (warn below {})",
            s.min_singularity_class
                .map(|c| format!(" (nearest kind: {c})"))
                .unwrap_or_default(),
            p.singularity_threshold
        ),
        _ => "–".into(),
    };
    let _ = writeln!(o, "  closest singularity   {sing}");
    let _ = writeln!(
        o,
        "  fastest tool turn     {:.1} deg/s (limit {:.1})",
        s.max_tool_angular_speed_deg_s, p.tool_angular_speed_limit_deg_s
    );
    let _ = writeln!(
        o,
        "  busiest joint         {:.0} % of allowed speed{}",
        s.max_joint_speed_ratio * 100.0,
        s.max_joint_speed_joint
            .as_ref()
            .map(|j| format!(" ({j})"))
            .unwrap_or_default()
    );
    if let (Some(m), Some(j)) = (s.min_limit_margin_ratio, &s.min_limit_margin_joint) {
        let _ = writeln!(
            o,
            "  tightest joint range  {j} uses up to {:.0} % of its half-range",
            (1.0 - m) * 100.0
        );
    }
    let _ = writeln!(o);
    if report.findings.is_empty() {
        let _ = writeln!(o, "  no findings");
    } else {
        let _ = writeln!(o, "  findings (in path order)");
    }
    for (i, f) in report.findings.iter().enumerate() {
        let sev = match f.severity {
            Severity::Error => paint(style, "1;31", "error"),
            Severity::Warning => paint(style, "1;33", "warn "),
        };
        let place = match (&f.from, &f.to, f.segment) {
            (Some(a), Some(b), Some(seg)) => format!("seg {seg} {a} → {b}"),
            _ => "file".into(),
        };
        let value = match (f.value, f.limit) {
            (Some(v), Some(l)) if f.unit != "none" => {
                format!("  {v:.2} {} (limit {l:.2})", f.unit)
            }
            (Some(v), Some(l)) => format!("  {v:.4} (limit {l:.4})"),
            _ => String::new(),
        };
        let _ = writeln!(
            o,
            "  {:>3}. {sev} {:<18} {place}{}",
            i + 1,
            f.kind,
            f.joint
                .as_ref()
                .map(|j| format!(" · {j}"))
                .unwrap_or_default()
        );
        if f.samples.is_some() {
            let _ = writeln!(
                o,
                "       s {} mm · t {} s · samples {}{value}",
                range(f.s_mm, 1),
                range(f.t_s, 2),
                f.samples
                    .map(|[a, b]| if a == b {
                        format!("{a}")
                    } else {
                        format!("{a}–{b}")
                    })
                    .unwrap_or_default()
            );
        }
        let _ = writeln!(o, "       {}", f.message);
    }
    if let Some(rows) = &report.configurations {
        let _ = writeln!(o);
        let _ = writeln!(o, "  arm configurations (closed-form solver)");
        for r in rows {
            let used = p.start.config.as_deref() == Some(r.config.as_str());
            let status = match (&r.first_failure, r.runs) {
                (_, true) => "runs the whole path".to_string(),
                (Some(f), false) if f.kind == "unreachable" && f.s_mm == 0.0 => {
                    "cannot reach the first waypoint within the joint ranges".to_string()
                }
                (Some(f), false) => format!(
                    "stops: {} at s = {:.1} mm (seg {} {} → {}){}",
                    f.kind,
                    f.s_mm,
                    f.segment,
                    f.from,
                    f.to,
                    f.joint
                        .as_ref()
                        .map(|j| format!(", {j}"))
                        .unwrap_or_default()
                ),
                (None, false) => "does not run".to_string(),
            };
            let _ = writeln!(
                o,
                "   {} {:<17} {status}",
                if used { "▸" } else { " " },
                r.config
            );
        }
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "  cautions");
    for c in &report.cautions {
        let _ = writeln!(o, "   · {c}");
    }
    o
}
