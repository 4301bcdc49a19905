//! From a report and its plot data to the figures of the page: which series go on which
//! plot, the ranges, limits and shaded bands, and where each finding is marked.

use super::axes::{AxisData, FULL};
use super::data::{position_at, PlotData, TracePoint};
use super::places::mark_on;
pub use super::places::{pin_id, place, title, Place};
use super::plots::{self, Axis, Figure, Line, Mark, Rule};
use super::scene::{Scene, SceneView};
use super::views::{self, View, ViewMark};
use crate::assess::Severity;
use crate::report::Report;
use plotters::style::Color;

/// Findings marked on the plots; beyond this the table still lists them (up to its own cap)
/// but the plots would be covered in markers.
pub const MAX_MARKED: usize = 300;

const JOINT: (u32, u32) = (380, 210);
const VIEW: (u32, u32) = (380, 400);

/// All figures of the page; a figure that could not be drawn carries the reason instead.
pub struct Figures {
    pub speed: Result<Figure, String>,
    pub singularity: Result<Figure, String>,
    pub tool: Result<Figure, String>,
    /// Joint speed, singularity measure and tool angular speed against time.
    pub over_time: [Result<Figure, String>; 3],
    /// Commanded TCP speed and joint accelerations against time.
    pub timing: [Result<Figure, String>; 2],
    pub joints: Vec<Result<Figure, String>>,
    /// Top (x–y), side (x–z) and end (y–z) views.
    pub views: [Result<Figure, String>; 3],
    /// Nearest distance to the cell against s and against t; `None` without a cell check.
    pub clearance: Option<[Result<Figure, String>; 2]>,
    /// What the views draw of the arm: ghost poses, the slider's poses.
    pub scene: Scene,
    /// Which findings (1-based numbers) got a marker, and where first.
    pub places: Vec<(usize, Place)>,
}

fn bounds(runs: &[Vec<(f64, f64)>]) -> Option<[f64; 2]> {
    let mut b: Option<[f64; 2]> = None;
    for &(_, v) in runs.iter().flatten() {
        b = Some(match b {
            None => [v, v],
            Some([lo, hi]) => [lo.min(v), hi.max(v)],
        });
    }
    b
}

/// Marks of the located findings on the three main plots (joint speed, singularity, tool
/// angular speed) and on each joint's plot.
struct Marks {
    main: [Vec<Mark>; 3],
    joints: Vec<Vec<Mark>>,
}

fn marks(report: &Report, places: &[(usize, Place)], joints: usize, axis: Axis) -> Marks {
    let mut m = Marks {
        main: [vec![], vec![], vec![]],
        joints: vec![Vec::new(); joints],
    };
    for &(n, p) in places {
        let Some(f) = report.findings.get(n - 1) else {
            continue;
        };
        match p {
            Place::Joint(k) => m.joints[k].push(mark_on(n, f, axis)),
            Place::Speed => m.main[0].push(mark_on(n, f, axis)),
            Place::Singularity => m.main[1].push(mark_on(n, f, axis)),
            Place::Tool => m.main[2].push(mark_on(n, f, axis)),
            Place::Acceleration
            | Place::TcpSpeed
            | Place::Clearance
            | Place::Views
            | Place::Nowhere => {}
        }
    }
    m
}

/// One line per joint of a per-joint ratio series (`series(k)`), each labelled with its
/// peak in per cent, and the largest peak.
fn joint_lines(ax: &AxisData, names: &[&str], series: impl Fn(usize) -> usize) -> (Vec<Line>, f64) {
    let lines: Vec<Line> = (0..names.len())
        .map(|k| {
            let runs = ax.runs(series(k));
            let peak = bounds(&runs).map_or(0.0, |b| b[1]);
            Line {
                colour: plots::JOINT_COLOURS[k % plots::JOINT_COLOURS.len()],
                width: 2,
                runs,
                label: Some(format!("{} {:.0} %", names[k], peak * 100.0)),
            }
        })
        .collect();
    let peak = lines
        .iter()
        .filter_map(|l| bounds(&l.runs))
        .fold(0.0f64, |m, b| m.max(b[1]));
    (lines, peak)
}

/// Joint speed, singularity measure and tool angular speed against one axis.
fn main_plots(
    report: &Report,
    data: &PlotData,
    ax: &AxisData,
    marks: [Vec<Mark>; 3],
) -> [Result<Figure, String>; 3] {
    let names: Vec<&str> = data.joints().iter().map(|j| j.name.as_str()).collect();
    let [speed_marks, sing_marks, tool_marks] = marks;
    let busiest = report.summary.max_joint_speed_joint.as_deref();

    // Joint speeds as a fraction of the allowed speed, one line per joint.
    let (speed_lines, peak) = joint_lines(ax, &names, |k| data.speed_series(k));
    // Peak labels only where a joint comes within half of the busiest one (the rest sit in
    // a bundle near zero where names would overlap); the joint the summary names as the
    // busiest always keeps its label.
    let speed_lines = speed_lines
        .into_iter()
        .enumerate()
        .map(|(k, mut l)| {
            let low = bounds(&l.runs).is_none_or(|b| b[1] < 0.5 * peak);
            if low && busiest != Some(names[k]) {
                l.label = None;
            }
            l
        })
        .collect();
    let mut speed = ax.plot(
        (FULL, 250),
        "speed / allowed".into(),
        [0.0, (peak * 1.1).max(1.2)],
        speed_lines,
    );
    speed.marks = speed_marks;
    speed.rules.push(Rule {
        y: 1.0,
        label: format!(
            "1.0 = allowed speed (URDF velocity × {})",
            super::nice(report.path.joint_speed_scale)
        ),
    });

    // The singularity measure on a log scale: the threshold is far below 1.
    let threshold = report.path.singularity_threshold;
    let sing_runs = ax.runs(data.singularity_series());
    let lo = bounds(&sing_runs)
        .map_or(threshold / 3.0, |b| b[0].min(threshold / 3.0) * 0.7)
        .clamp(1e-6, threshold.max(1e-6));
    let sing_runs = sing_runs
        .into_iter()
        .map(|r| r.into_iter().map(|(s, v)| (s, v.max(lo))).collect())
        .collect();
    let mut singularity = ax.plot(
        (FULL, 250),
        "measure (log scale)".into(),
        [lo, 1.0],
        vec![Line {
            colour: plots::BLUE,
            width: 2,
            runs: sing_runs,
            label: None,
        }],
    );
    singularity.marks = sing_marks;
    singularity.log_y = true;
    singularity.rules.push(Rule {
        y: threshold,
        label: format!("warning threshold {}", super::nice(threshold)),
    });

    // Tool angular speed on linear segments.
    let limit = report.path.tool_angular_speed_limit_deg_s;
    let tool_runs = ax.runs(data.tool_speed_series());
    let tool_peak = bounds(&tool_runs).map_or(0.0, |b| b[1]);
    let mut tool = ax.plot(
        (FULL, 250),
        "deg/s".into(),
        [0.0, (limit * 1.15).max(tool_peak * 1.08).max(1e-3)],
        vec![Line {
            colour: plots::BLUE,
            width: 2,
            runs: tool_runs,
            label: None,
        }],
    );
    tool.marks = tool_marks;
    tool.rules.push(Rule {
        y: limit,
        label: format!("limit {} deg/s", super::nice(limit)),
    });
    [
        plots::s_plot(&speed),
        plots::s_plot(&singularity),
        plots::s_plot(&tool),
    ]
}

/// The TCP speed on straight-line segments against the job's speed, and each joint's
/// acceleration against its allowed acceleration, over time; `process_speed` and
/// `joint_acceleration` findings are marked there, and the findings table links to them.
fn timing_plots(
    report: &Report,
    data: &PlotData,
    ax: &AxisData,
    places: &[(usize, Place)],
) -> [Result<Figure, String>; 2] {
    let marks_at = |want: Place| -> Vec<Mark> {
        places
            .iter()
            .filter(|&&(_, p)| p == want)
            .filter_map(|&(n, _)| {
                let mut m = mark_on(n, report.findings.get(n - 1)?, Axis::Time);
                m.id = Some(pin_id(n));
                Some(m)
            })
            .collect()
    };
    let job_speed = report.path.speed_mm_s;
    let tcp_runs = ax.runs(data.tcp_speed_series());
    let tcp_peak = bounds(&tcp_runs).map_or(0.0, |b| b[1]);
    let mut tcp = ax.plot(
        (FULL, 250),
        "mm/s".into(),
        [0.0, (job_speed.max(tcp_peak) * 1.1).max(1e-3)],
        vec![Line {
            colour: plots::BLUE,
            width: 2,
            runs: tcp_runs,
            label: None,
        }],
    );
    tcp.marks = marks_at(Place::TcpSpeed);
    tcp.rules.push(Rule {
        y: job_speed,
        label: format!("job speed {} mm/s", super::nice(job_speed)),
    });
    let names: Vec<&str> = data.joints().iter().map(|j| j.name.as_str()).collect();
    let (lines, peak) = joint_lines(ax, &names, |k| data.acceleration_series(k));
    let mut acc = ax.plot(
        (FULL, 250),
        "acceleration / allowed".into(),
        [0.0, (peak * 1.1).max(1.2)],
        lines,
    );
    acc.marks = marks_at(Place::Acceleration);
    acc.rules.push(Rule {
        y: 1.0,
        label: {
            let given = &report.path.joint_accelerations_given;
            let rest = if given.is_empty() {
                String::new()
            } else {
                format!("; given in the path file for {}", given.join(", "))
            };
            format!(
                "1.0 = allowed acceleration ({} × URDF velocity per s × {}, armpath's \
                 default{rest})",
                crate::motion::JOINT_ACCELERATION_PER_SPEED,
                super::nice(report.path.joint_acceleration_scale)
            )
        },
    });
    [plots::s_plot(&tcp), plots::s_plot(&acc)]
}

/// Build every figure.
pub fn build(report: &Report, data: &PlotData) -> Figures {
    let names: Vec<String> = data.joints().iter().map(|j| j.name.clone()).collect();
    let mut places = Vec::new();
    for (i, f) in report.findings.iter().enumerate() {
        let p = place(f, &names);
        if p == Place::Nowhere || places.len() >= MAX_MARKED {
            continue;
        }
        places.push((i + 1, p));
    }
    let by_s = AxisData::new(Axis::Distance, report, data);
    let by_t = AxisData::new(Axis::Time, report, data);
    let Marks {
        main,
        joints: mut joint_marks,
    } = marks(report, &places, names.len(), Axis::Distance);
    let [speed, singularity, tool] = main_plots(report, data, &by_s, main);
    let over_time = main_plots(
        report,
        data,
        &by_t,
        marks(report, &places, names.len(), Axis::Time).main,
    );

    // One small plot per joint, with its range, the near-limit margin and beyond-range shading.
    let joints = data
        .joints()
        .iter()
        .enumerate()
        .map(|(k, j)| {
            let lines = by_s.runs(data.position_series(k));
            let b = bounds(&lines);
            let (y, bands, rules) = match j.range {
                Some([lower, upper]) => {
                    let pad = 0.06 * (upper - lower).max(1e-6);
                    let y0 = (lower - pad).min(b.map_or(lower, |b| b[0] - pad));
                    let y1 = (upper + pad).max(b.map_or(upper, |b| b[1] + pad));
                    let margin = j.near_margin.min(0.5 * (upper - lower));
                    let near = plots::ORANGE.mix(0.35);
                    let out = plots::INK.mix(0.12);
                    (
                        [y0, y1],
                        vec![
                            ([y0, lower], out),
                            ([upper, y1], out),
                            ([lower, lower + margin], near),
                            ([upper - margin, upper], near),
                        ],
                        vec![
                            Rule {
                                y: lower,
                                label: format!("{lower:.0}"),
                            },
                            Rule {
                                y: upper,
                                label: format!("{upper:.0}"),
                            },
                        ],
                    )
                }
                None => {
                    let [a, c] = b.unwrap_or([-1.0, 1.0]);
                    let pad = 0.08 * (c - a).max(1.0);
                    ([a - pad, c + pad], vec![], vec![])
                }
            };
            let mut plot = by_s.plot(
                JOINT,
                format!("{} ({})", j.name, crate::report::joint_unit(j.kind)),
                y,
                vec![Line {
                    colour: plots::BLUE,
                    width: 2,
                    runs: lines,
                    label: None,
                }],
            );
            plot.rules = rules;
            plot.bands = bands;
            plot.waypoint_names = false;
            plot.marks = std::mem::take(&mut joint_marks[k]);
            plots::s_plot(&plot)
        })
        .collect();

    let trace = data.trace().points();
    let scene = Scene::new(report, data);
    let views = views(report, data, &trace, &places, &scene);
    Figures {
        speed,
        singularity,
        tool,
        timing: timing_plots(report, data, &by_t, &places),
        clearance: super::clearance::plots(report, &by_s, &by_t, &places),
        scene,
        over_time,
        joints,
        views,
        places,
    }
}

/// The top (x–y), side (x–z) and end (y–z) views, base frame, mm. Two views show a path
/// that runs along one base axis as a dot; the third always shows its length.
fn views(
    report: &Report,
    data: &PlotData,
    trace: &[TracePoint],
    places: &[(usize, Place)],
    scene: &Scene,
) -> [Result<Figure, String>; 3] {
    let project = |axes: [usize; 2], tag: &str, x_desc: &str, y_desc: &str| {
        let SceneView { cell, arms, slider } = scene.on(axes);
        let path: Vec<(f64, f64)> = trace.iter().map(|t| (t.p[axes[0]], t.p[axes[1]])).collect();
        let waypoints = data
            .waypoints()
            .iter()
            .take(2000)
            .map(|w| {
                (
                    w.p[axes[0]],
                    w.p[axes[1]],
                    report
                        .path
                        .waypoints
                        .get(w.index)
                        .map(|n| n.into_owned())
                        .unwrap_or_default(),
                )
            })
            .collect();
        let marks = places
            .iter()
            .filter_map(|&(n, p)| {
                let f = report.findings.get(n - 1)?;
                let [s0, s1] = f.s_mm?;
                let (s0, s1) = (s0 * 1e-3, s1 * 1e-3);
                let mut stretch = vec![position_at(trace, s0)?];
                stretch.extend(trace.iter().filter(|t| t.s > s0 && t.s < s1).map(|t| t.p));
                stretch.push(position_at(trace, s1)?);
                Some(ViewMark {
                    number: n,
                    error: f.severity == Severity::Error,
                    stretch: stretch.iter().map(|p| (p[axes[0]], p[axes[1]])).collect(),
                    id: Some(if p == Place::Views && tag == "top" {
                        pin_id(n)
                    } else {
                        format!("pin-{n}-{tag}")
                    }),
                    title: title(n, f),
                })
            })
            .collect();
        views::view(
            &View {
                size: VIEW,
                x_desc,
                y_desc,
                path,
                waypoints,
                marks,
                cell,
                arms,
                slider,
            },
            tag,
        )
    };
    [
        project([0, 1], "top", "x (mm)", "y (mm)"),
        project([0, 2], "side", "x (mm)", "z (mm)"),
        project([1, 2], "end", "y (mm)", "z (mm)"),
    ]
}
