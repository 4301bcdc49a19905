//! The page: one self-contained HTML document (inline CSS, inline SVG and one small inline
//! script for the pose slider; no links to anything outside the file, generic font
//! families). Everything but the slider is static: with scripts off the page reads the same,
//! the arm's start, end and finding poses included. All text that comes from the user's
//! files (names, paths, messages) is escaped ([`escape`]).

use super::data::PlotData;
use super::figures::{self, Figures, Place};
use super::inputs::settings;
use super::markup::escape;
use super::plots::Figure;
use crate::assess::Severity;
use crate::report::{count, FindingReport, Report, Verdict};
use std::fmt::Write;

/// Rows of the findings table; the rest are counted (the JSON report lists them all).
pub const MAX_ROWS: usize = 500;

/// The page style (inline in every page).
const STYLE: &str = include_str!("style.css");

fn severity_cell(s: Severity) -> &'static str {
    match s {
        Severity::Error => r#"<span class="sev sev-e"><span class="shape-e">▲</span> error</span>"#,
        Severity::Warning => {
            r#"<span class="sev sev-w"><span class="shape-w">○</span> warning</span>"#
        }
    }
}

fn range(r: Option<[f64; 2]>, digits: usize) -> String {
    match r {
        Some([a, b]) if (a - b).abs() < 1e-9 => format!("{a:.digits$}"),
        Some([a, b]) => format!("{a:.digits$} – {b:.digits$}"),
        None => "–".into(),
    }
}

fn value_cell(f: &FindingReport) -> String {
    match (f.value, f.limit) {
        (Some(v), Some(l)) if f.unit != "none" => {
            format!(
                "{v:.2} {u}<br><span class=\"note\">limit {l:.2}</span>",
                u = f.unit
            )
        }
        (Some(v), Some(l)) => format!("{v:.4}<br><span class=\"note\">limit {l:.4}</span>"),
        _ => "–".into(),
    }
}

fn place_name(p: Place, names: &[String]) -> String {
    match p {
        Place::Joint(k) => format!("{} position", names.get(k).map_or("joint", |s| s)),
        Place::Speed => "joint speeds".into(),
        Place::Singularity => "singularity".into(),
        Place::Tool => "tool turn rate".into(),
        Place::Acceleration => "joint acceleration".into(),
        Place::TcpSpeed => "TCP speed".into(),
        Place::Clearance => "clearance".into(),
        Place::Views => "arm and path views".into(),
        Place::Nowhere => String::new(),
    }
}

fn figure(o: &mut String, id: &str, caption: &str, fig: &Result<Figure, String>) {
    let _ = write!(o, r#"<figure id="{id}">"#);
    if !caption.is_empty() {
        let _ = write!(o, "<figcaption>{caption}</figcaption>");
    }
    match fig {
        Ok(f) => {
            o.push_str(r#"<div class="canvas">"#);
            o.push_str(&f.svg);
            for p in &f.pins {
                let id =
                    p.id.as_ref()
                        .map(|i| format!(r#" id="{}""#, escape(i)))
                        .unwrap_or_default();
                let _ = write!(
                    o,
                    r##"<a class="pin"{id} href="#finding-{n}" style="left:{x:.3}%;top:{y:.3}%" title="{t}"><span class="sr">finding {n}</span></a>"##,
                    n = p.number,
                    x = p.x * 100.0,
                    y = p.y * 100.0,
                    t = escape(&p.title)
                );
            }
            o.push_str("</div>");
        }
        Err(e) => {
            let _ = write!(
                o,
                r#"<p class="fail-note">This plot could not be drawn: {}</p>"#,
                escape(e)
            );
        }
    }
    o.push_str("</figure>\n");
}

/// Render the page.
pub fn render(report: &Report, data: &PlotData) -> String {
    let figs = figures::build(report, data);
    let names: Vec<String> = data.joints().iter().map(|j| j.name.clone()).collect();
    let mut o = String::with_capacity(256 * 1024);
    let r = &report.robot;
    let p = &report.path;
    let s = &report.summary;
    let _ = write!(
        o,
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
         <meta name=\"viewport\" content=\"width=device-width,initial-scale=1\">\
         <title>armpath check · {} · {}</title><style>{STYLE}</style></head><body><main>\n",
        s.verdict.name().to_uppercase(),
        escape(&p.file)
    );
    let _ = writeln!(
        o,
        "<header><h1>Path check: <span class=\"mono\">{}</span></h1>\
         <p class=\"sub\">robot {} · {} · {} wrist · armpath {}</p>\
         <nav><a href=\"#findings\">Findings</a><a href=\"#along\">Along the path</a>\
         <a href=\"#over-time\">Over time</a>\
         <a href=\"#views\">Arm and path views</a>{}<a href=\"#settings\">Settings</a>\
         <a href=\"#cautions\">Cautions</a></nav></header>",
        escape(&p.file),
        escape(&r.name),
        count(r.dof, "joint"),
        r.wrist_kind(),
        report.armpath_version,
        if figs.clearance.is_some() {
            "<a href=\"#clearance\">Clearance</a>"
        } else {
            ""
        },
    );
    verdict(&mut o, report);
    findings(&mut o, report, &figs, &names);
    along(&mut o, report, &figs, &names);
    over_time(&mut o, report, &figs, &names);
    views(&mut o, &figs);
    clearance(&mut o, report, &figs);
    settings(&mut o, report, data);
    o.push_str("<h2 id=\"cautions\">Cautions</h2><ul class=\"cautions\">");
    for c in &report.cautions {
        let _ = write!(o, "<li>{}</li>", escape(c));
    }
    o.push_str("</ul>\n");
    let _ = write!(
        o,
        "<footer>Written by armpath {} from {}. This page is self-contained: \
         one small inline script moves the arm along the path (everything else is static and \
         reads the same without it); no fonts, images or scripts from elsewhere.</footer>\n\
         </main></body></html>\n",
        report.armpath_version,
        count(s.samples, "sample")
    );
    o
}

fn verdict(o: &mut String, report: &Report) {
    let s = &report.summary;
    let p = &report.path;
    let (class, word, mark) = match s.verdict {
        Verdict::Fail => ("v-fail", "FAIL", "▲ "),
        Verdict::Warn => ("v-warn", "WARN", "○ "),
        Verdict::Pass => ("v-pass", "PASS", "✓ "),
    };
    let _ = write!(
        o,
        "<section class=\"top\" aria-label=\"verdict\"><div class=\"verdict {class}\">\
         <div class=\"word\" id=\"verdict\">{mark}{word}</div><div class=\"count\">{}, {}</div>\
         <div class=\"note\">exit code {}</div></div><dl class=\"keys\">",
        count(s.errors, "error"),
        count(s.warnings, "warning"),
        report.exit_code()
    );
    let mut key = |k: &str, v: String| {
        let _ = write!(o, "<div><dt>{k}</dt><dd>{v}</dd></div>");
    };
    key(
        "path",
        format!(
            "{:.1} mm · {:.2} s · {}",
            s.length_mm,
            s.duration_s,
            count(s.samples, "sample")
        ),
    );
    key(
        "waypoints",
        format!("{} · {}", p.waypoints.len(), count(p.segments, "segment")),
    );
    key(
        "closest singularity",
        match (s.min_singularity, s.min_singularity_s_mm) {
            (Some(m), Some(at)) => format!(
                "{m:.4}{} at s = {at:.1} mm (warn below {})",
                s.min_singularity_class
                    .map(|c| format!(" ({})", escape(c)))
                    .unwrap_or_default(),
                super::nice(p.singularity_threshold)
            ),
            _ => "–".into(),
        },
    );
    key(
        "fastest tool turn",
        format!(
            "{:.1} deg/s (limit {:.1})",
            s.max_tool_angular_speed_deg_s, p.tool_angular_speed_limit_deg_s
        ),
    );
    key(
        "busiest joint",
        format!(
            "{:.0} % of allowed speed{}",
            s.max_joint_speed_ratio * 100.0,
            s.max_joint_speed_joint
                .as_ref()
                .map(|j| format!(" ({})", escape(j)))
                .unwrap_or_default()
        ),
    );
    key(
        "tightest joint range",
        match (s.min_limit_margin_ratio, &s.min_limit_margin_joint) {
            (Some(m), Some(j)) => format!(
                "{} uses up to {:.0} % of its half-range",
                escape(j),
                (1.0 - m) * 100.0
            ),
            _ => "–".into(),
        },
    );
    o.push_str("</dl></section>\n");
}

fn findings(o: &mut String, report: &Report, figs: &Figures, names: &[String]) {
    o.push_str("<h2 id=\"findings\">Findings</h2>\n");
    if report.findings.is_empty() {
        o.push_str("<p>No findings: every check held along the whole path.</p>\n");
        return;
    }
    o.push_str(
        "<p class=\"note\">In path order. Each marked finding links to its marker on the plots \
         (▲ error, ○ warning); the markers link back here.</p>\
         <table><thead><tr><th>#</th><th>severity</th><th>finding</th><th>where</th>\
         <th>s (mm)</th><th>t (s)</th><th>worst value</th><th>what happened, what to try</th>\
         <th>plot</th></tr></thead><tbody>\n",
    );
    for (i, f) in report.findings.iter().take(MAX_ROWS).enumerate() {
        let n = i + 1;
        let place = figs.places.iter().find(|(m, _)| *m == n).map(|(_, p)| *p);
        let link = match place {
            Some(p) => format!(
                "<a href=\"#{}\">{} ↓</a>",
                figures::pin_id(n),
                place_name(p, names)
            ),
            None => "–".into(),
        };
        let place_text = match (&f.from, &f.to, f.segment) {
            (Some(a), Some(b), Some(seg)) => {
                format!("segment {seg}<br>{} → {}", escape(a), escape(b))
            }
            _ => "path file".into(),
        };
        let _ = writeln!(
            o,
            "<tr id=\"finding-{n}\"><td class=\"num\">{n}</td><td>{}</td><td><b>{}</b>{}</td>\
             <td>{place_text}</td><td class=\"num\">{}</td><td class=\"num\">{}</td>\
             <td class=\"num\">{}</td><td class=\"msg\">{}</td><td>{link}</td></tr>",
            severity_cell(f.severity),
            escape(f.kind),
            f.joint
                .as_ref()
                .map(|j| format!("<br>{}", escape(j)))
                .unwrap_or_default(),
            range(f.s_mm, 1),
            range(f.t_s, 2),
            value_cell(f),
            escape(&f.message),
        );
    }
    o.push_str("</tbody></table>\n");
    if report.findings.len() > MAX_ROWS {
        let _ = writeln!(
            o,
            "<p class=\"note\">{} not listed here; the JSON report \
             (<code>--json</code>) lists them all.</p>",
            count(report.findings.len() - MAX_ROWS, "more finding")
        );
    }
    if figs.places.len() >= figures::MAX_MARKED {
        let _ = writeln!(
            o,
            "<p class=\"note\">Only the first {} located findings are marked on the plots.</p>",
            figures::MAX_MARKED
        );
    }
}

const LEGEND: &str = "<div class=\"legend\">\
<span><span class=\"shape-e\">▲</span> error finding (number = table row)</span>\
<span><span class=\"shape-w\">○</span> warning finding</span>\
<span><span class=\"sw\" style=\"background:rgba(213,94,0,.22)\"></span>stretch of an error</span>\
<span><span class=\"sw\" style=\"background:rgba(230,159,0,.22)\"></span>stretch of a warning</span>\
<span><span class=\"sw\" style=\"background:rgba(119,119,119,.28)\"></span>unreachable</span>\
<span><span class=\"sw dash\"></span>limit or threshold</span>\
<span><span class=\"sw line\" style=\"border-color:#aaa;border-top-width:1px\"></span>waypoint</span>\
</div>";

fn along(o: &mut String, report: &Report, figs: &Figures, names: &[String]) {
    let _ = write!(
        o,
        "<h2 id=\"along\">Along the path</h2><p class=\"note\">Against path distance s of the \
         TCP (mm); thin vertical lines mark the waypoints. Long paths are drawn from the \
         smallest and largest value in each of at most {} slices, so no peak is lost.</p>{LEGEND}",
        super::data::BUCKETS
    );
    main_figures(
        o,
        "plot",
        report,
        names,
        [&figs.speed, &figs.singularity, &figs.tool],
    );
    o.push_str(
        "<h3>Joint positions</h3><div class=\"legend\">\
         <span><span class=\"sw\" style=\"background:rgba(230,159,0,.35)\"></span>within the \
         near-limit margin</span><span><span class=\"sw\" style=\"background:rgba(26,26,26,.12)\">\
         </span>outside the joint's range</span><span><span class=\"sw dash\"></span>range limit</span>\
         </div><div class=\"grid3\">",
    );
    for (k, fig) in figs.joints.iter().enumerate() {
        figure(o, &format!("plot-joint-{}", k + 1), "", fig);
    }
    o.push_str("</div>\n");
}

/// The joint speed, singularity and tool angular speed figures, with ids `{prefix}-speed`,
/// `{prefix}-singularity` and `{prefix}-tool`.
fn main_figures(
    o: &mut String,
    prefix: &str,
    report: &Report,
    names: &[String],
    [speed, singularity, tool]: [&Result<Figure, String>; 3],
) {
    let mut legend = String::from("<span class=\"legend\" style=\"display:inline-flex\">");
    for (k, n) in names.iter().enumerate() {
        let c = super::plots::JOINT_COLOURS[k % super::plots::JOINT_COLOURS.len()];
        let _ = write!(
            legend,
            "<span><span class=\"sw line\" style=\"border-color:#{:02X}{:02X}{:02X}\"></span>{}</span>",
            c.0,
            c.1,
            c.2,
            escape(n)
        );
    }
    legend.push_str("</span>");
    figure(
        o,
        &format!("{prefix}-speed"),
        &format!(
            "<b>Joint speed</b> as a fraction of the allowed speed; the busiest joints are \
             named at their peaks {legend}"
        ),
        speed,
    );
    figure(
        o,
        &format!("{prefix}-singularity"),
        "<b>Singularity measure</b> (1 = well-conditioned, 0 = singular); below the \
         threshold the arm is close to losing a direction of motion. Every value at or near the \
         threshold and the path's smallest value are exact; where the arm is plainly clear of \
         both, the line may show a proven lower bound instead (the eigen-solve is skipped there)",
        singularity,
    );
    figure(
        o,
        &format!("{prefix}-tool"),
        &format!(
            "<b>Tool angular speed</b> on linear segments (deg/s), limit {} deg/s",
            super::nice(report.path.tool_angular_speed_limit_deg_s)
        ),
        tool,
    );
}

fn over_time(o: &mut String, report: &Report, figs: &Figures, names: &[String]) {
    o.push_str(
        "<h2 id=\"over-time\">Over time</h2><p class=\"note\">The same quantities against \
         time t from the start (s): a turn on the spot or a joint move that hardly moves the \
         TCP takes no path distance but does take time. Thin vertical lines mark the \
         waypoints; the markers link to the findings table.</p>",
    );
    let [speed, singularity, tool] = &figs.over_time;
    main_figures(o, "time", report, names, [speed, singularity, tool]);
    let [tcp, acc] = &figs.timing;
    figure(
        o,
        "time-tcp",
        "<b>TCP speed</b> commanded on straight-line moves (mm/s): ramps at stops, dips in \
         blended corners",
        tcp,
    );
    figure(
        o,
        "time-acc",
        "<b>Joint acceleration</b> as a fraction of the allowed acceleration (URDF has none: \
         armpath's default, see the settings)",
        acc,
    );
}

fn views(o: &mut String, figs: &Figures) {
    let sc = &figs.scene;
    let ghosts = if sc.ghosts.is_empty() {
        String::new()
    } else {
        let left = if sc.ghosts_left_out > 0 {
            format!(
                " ({} with a worst pose not drawn: at most {} are, errors first)",
                count(sc.ghosts_left_out, "more finding"),
                super::scene::MAX_GHOSTS
            )
        } else {
            String::new()
        };
        format!(
            " The arm at the worst sample of findings {}{left} is drawn in the finding's \
             colour and labelled with its number.",
            sc.ghosts
                .iter()
                .map(|n| n.to_string())
                .collect::<Vec<_>>()
                .join(", ")
        )
    };
    let _ = write!(
        o,
        "<h2 id=\"views\">Arm and path views</h2><p class=\"note\">The commanded TCP path \
         and the arm in the robot base frame, equal scales on both axes of each view (■ first \
         waypoint, ● waypoints). The arm is drawn as the outlines of its collision shapes \
         (meshes by their bounding boxes) over thick lines through its joints to the TCP: \
         blue at the start, green at the end; bodies fixed in the base frame (the arm's base, the cell) \
         in grey.{ghosts} Finding stretches \
         are drawn wide under the path; a leader line points from each marker to where its \
         finding starts.</p>"
    );
    super::slider::controls(o, sc);
    o.push_str("<div class=\"grid3\">");
    let [top, side, end] = &figs.views;
    figure(o, "view-top", "<b>Top view</b> x–y, from above", top);
    figure(o, "view-side", "<b>Side view</b> x–z, from −y", side);
    figure(o, "view-end", "<b>End view</b> y–z, from +x", end);
    o.push_str("</div>\n");
    super::slider::script(o, figs);
}

fn clearance(o: &mut String, report: &Report, figs: &Figures) {
    let (Some([by_s, by_t]), Some(cell)) = (&figs.clearance, &report.cell) else {
        return;
    };
    let _ = write!(
        o,
        "<h2 id=\"clearance\">Clearance</h2><p class=\"note\">The nearest distance of any \
         tested body pair at each sample (the smallest in each of at most {} slices; below \
         zero: the depth of a contact), against path distance and against time. Pairs far \
         apart are measured by their bounding spheres, a lower bound; a contact found between \
         two samples is marked by its finding, not by the line. Values above the top are \
         drawn at the top.</p>",
        crate::check::PROFILE_SLICES
    );
    figure(
        o,
        "plot-clearance",
        &format!(
            "<b>Nearest distance</b> (mm) against s; clearance limit {} mm",
            super::nice(cell.clearance_mm)
        ),
        by_s,
    );
    figure(
        o,
        "time-clearance",
        "<b>Nearest distance</b> (mm) against t",
        by_t,
    );
}
