//! The terminal rendering of a report. Plain text unless colour is asked for; colour never
//! carries meaning alone (every coloured word is also spelled out).

use super::escape::{count, visible as v};
use super::{Report, Verdict};
use crate::assess::Severity;
use std::collections::BTreeMap;
use std::fmt::Write;

/// Findings of one kind listed in the text, in path order; the rest are counted on one line
/// that points to the JSON report. A zigzag of 100,000 short segments raises a finding per
/// segment: listed in full that is tens of megabytes of text nobody reads, while the first
/// few show the pattern and where it starts.
pub const TEXT_FINDINGS_PER_KIND: usize = 20;

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

/// Segments whose run time the text lists; the JSON has the first
/// [`super::SEGMENT_TABLE_ROWS`].
const TEXT_SEGMENT_TIMES: usize = 8;

/// The cycle time, the acceleration model and the first segments' run times.
fn timing_lines(o: &mut String, report: &Report) {
    let (p, s) = (&report.path, &report.summary);
    let _ = writeln!(
        o,
        "  cycle time            {:.2} s · accelerations: TCP {:.0} mm/s², tool {:.0} deg/s², \
         joints {} × speed limit per s × {} (the default rule)",
        s.duration_s,
        p.tcp_acceleration_mm_s2,
        p.tool_angular_acceleration_deg_s2,
        crate::motion::JOINT_ACCELERATION_PER_SPEED,
        p.joint_acceleration_scale
    );
    if p.joint_accelerations_given.is_empty() {
        // The findings' messages name "the default rule" and leave its explanation to here.
        let _ = writeln!(
            o,
            "  joint accelerations   URDF has none, so the default rule above applies: set \
             limits.joint_acceleration_scale or limits.joint_accelerations from the controller's data"
        );
    } else {
        let names: Vec<_> = p.joint_accelerations_given.iter().map(|n| v(n)).collect();
        let _ = writeln!(
            o,
            "  joint accelerations   given in the path file for {}; the default above for the \
             others",
            names.join(", ")
        );
    }
    let times: Vec<String> = p
        .segment_durations_s
        .iter()
        .take(TEXT_SEGMENT_TIMES)
        .enumerate()
        .map(|(k, d)| format!("{k}: {d:.2} s"))
        .collect();
    if times.is_empty() {
        return;
    }
    let more = if p.segments > TEXT_SEGMENT_TIMES {
        " · … (every segment's time is in the JSON report)"
    } else {
        ""
    };
    let _ = writeln!(o, "  segment times         {}{more}", times.join(" · "));
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
        report.armpath_version,
        v(&p.file)
    );
    let _ = writeln!(
        o,
        "  robot    {} · {} · tip {} · {} wrist · reach ≈ {:.0} mm",
        v(&r.name),
        count(r.dof, "joint"),
        v(&r.tip_link),
        r.wrist_kind(),
        r.reach_mm
    );
    let joints: Vec<String> = r
        .joints
        .iter()
        .zip(&p.start.joints)
        .map(|(j, q)| format!("{} {:.1}", v(&j.name), q))
        .collect();
    let how = p.start.how();
    let _ = writeln!(
        o,
        "  start    {} ({how}){}",
        joints.join("  "),
        p.start
            .config
            .as_ref()
            .map(|c| format!(" · configuration {}", v(c)))
            .unwrap_or_default()
    );
    let _ = writeln!(
        o,
        "  path     {} · {} · {} · {:.1} mm · {:.2} s",
        count(p.waypoints.len(), "waypoint"),
        count(p.segments, "segment"),
        count(s.samples, "sample"),
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
        "  verdict  {}  {}, {}",
        paint(style, code, word),
        count(s.errors, "error"),
        count(s.warnings, "warning")
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
            .map(|j| format!(" ({})", v(j)))
            .unwrap_or_default()
    );
    if let (Some(r), Some(j)) = (
        s.process_max_joint_speed_ratio,
        &s.process_max_joint_speed_joint,
    ) {
        let _ = writeln!(
            o,
            "  on process segments   {:.1} % of allowed speed ({})",
            r * 100.0,
            v(j)
        );
    }
    let _ = writeln!(
        o,
        "  hardest acceleration  {:.0} % of allowed{}",
        s.max_joint_acceleration_ratio * 100.0,
        s.max_joint_acceleration_joint
            .as_ref()
            .map(|j| format!(" ({})", v(j)))
            .unwrap_or_default()
    );
    if let Some(r) = s.min_process_speed_ratio {
        let _ = writeln!(
            o,
            "  slowest process feed  {:.0} % of programmed speed (warn below {:.0} %)",
            r * 100.0,
            (1.0 - p.process_speed_tolerance) * 100.0
        );
    }
    timing_lines(&mut o, report);
    if let (Some(m), Some(j)) = (s.min_limit_margin_ratio, &s.min_limit_margin_joint) {
        let _ = writeln!(
            o,
            "  tightest joint range  {} uses up to {:.0} % of its half-range",
            v(j),
            (1.0 - m) * 100.0
        );
    }
    if let Some(c) = &report.cell {
        let nearest = match (c.nearest_mm, &c.nearest_bodies) {
            (Some(d), Some([a, b])) => format!(", nearest {d:.2} mm ({} ⟷ {})", v(a), v(b)),
            _ => String::new(),
        };
        let _ = writeln!(
            o,
            "  cell                  {} bodies, {} pairs tested{nearest} (clearance {:.1} mm)",
            c.bodies, c.pairs_tested, c.clearance_mm
        );
        for n in &c.notes {
            let _ = writeln!(o, "                        {}", v(n));
        }
    }
    let _ = writeln!(o);
    if report.findings.is_empty() {
        let _ = writeln!(o, "  no findings");
    } else {
        let _ = writeln!(o, "  findings (in path order)");
    }
    // Per kind: findings listed so far, then those left out.
    let mut listed: BTreeMap<&str, usize> = BTreeMap::new();
    let mut left_out: BTreeMap<&str, usize> = BTreeMap::new();
    for (i, f) in report.findings.iter().enumerate() {
        let n = listed.entry(f.kind).or_default();
        if *n >= TEXT_FINDINGS_PER_KIND {
            *left_out.entry(f.kind).or_default() += 1;
            continue;
        }
        *n += 1;
        let sev = match f.severity {
            Severity::Error => paint(style, "1;31", "error"),
            Severity::Warning => paint(style, "1;33", "warn "),
        };
        let place = match (&f.from, &f.to, f.segment) {
            (Some(a), Some(b), Some(seg)) => format!("seg {seg} {} → {}", v(a), v(b)),
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
                .map(|j| format!(" · {}", v(j)))
                .or_else(|| f
                    .bodies
                    .as_ref()
                    .map(|[a, b]| format!(" · {} ⟷ {}", v(a), v(b))))
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
        let _ = writeln!(o, "       {}", v(&f.message));
    }
    if !left_out.is_empty() {
        let rest: usize = left_out.values().sum();
        let kinds: Vec<String> = left_out.iter().map(|(k, n)| format!("{k} {n}")).collect();
        let _ = writeln!(
            o,
            "  … and {} not listed ({}): the first {TEXT_FINDINGS_PER_KIND} of each kind are \
             shown; the JSON report (--json FILE) lists them all",
            count(rest, "more finding"),
            kinds.join(", ")
        );
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
                    v(&f.from),
                    v(&f.to),
                    f.joint
                        .as_ref()
                        .map(|j| format!(", {}", v(j)))
                        .unwrap_or_default()
                ),
                (None, false) => "does not run".to_string(),
            };
            let _ = writeln!(
                o,
                "   {} {:<17} {status}",
                if used { "▸" } else { " " },
                v(&r.config)
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
