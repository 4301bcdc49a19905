//! The two x axes of the page's plots (path distance and time): each axis' extent, its
//! waypoint lines and unreachable stretches in its unit, and the series against it.

use super::data::PlotData;
use super::envelope::Envelope;
use super::plots::{Axis, Line, SPlot};
use crate::report::Report;

/// Waypoint lines drawn on the plots against s; more are thinned evenly (a line every pixel
/// or two says nothing).
const MAX_WAYPOINT_LINES: usize = 400;

/// Width of the page's content (px): full-width plots, three joint plots or views per row.
pub(super) const FULL: u32 = 1160;

/// Runs with x scaled from SI (m or s) to the axis unit (mm or s).
fn scaled(runs: Vec<Vec<(f64, f64)>>, k: f64) -> Vec<Vec<(f64, f64)>> {
    runs.into_iter()
        .map(|r| r.into_iter().map(|(x, v)| (x * k, v)).collect())
        .collect()
}

/// One x axis of the page: its extent, waypoint lines and unreachable stretches in its unit,
/// and the series against it.
pub(super) struct AxisData<'a> {
    pub(super) axis: Axis,
    x_max: f64,
    /// Factor from the envelope's SI coordinate to the axis unit.
    k: f64,
    env: Option<&'a Envelope>,
    waypoints: Vec<(f64, String)>,
    gaps: Vec<[f64; 2]>,
}

impl<'a> AxisData<'a> {
    /// The axis `axis` of the page for `report` and its plot data.
    pub(super) fn new(axis: Axis, report: &Report, data: &'a PlotData) -> Self {
        let (x_max, k, env) = match axis {
            Axis::Distance => (
                (data.length() * 1e3).max(report.summary.length_mm),
                1e3,
                data.envelope(),
            ),
            Axis::Time => (
                data.duration().max(report.summary.duration_s),
                1.0,
                data.time_envelope(),
            ),
        };
        let mut waypoints: Vec<(f64, String)> = data
            .waypoints()
            .iter()
            .map(|w| {
                let name = report.path.waypoints.get(w.index).map(|n| n.into_owned());
                let x = match axis {
                    Axis::Distance => w.s * 1e3,
                    Axis::Time => w.t,
                };
                (x, name.unwrap_or_default())
            })
            .collect();
        if waypoints.len() > MAX_WAYPOINT_LINES {
            let every = waypoints.len().div_ceil(MAX_WAYPOINT_LINES);
            waypoints = waypoints.into_iter().step_by(every).collect();
        }
        let gaps = env
            .map(|e| e.unreachable_stretches())
            .unwrap_or_default()
            .into_iter()
            .map(|[a, b]| [a * k, b * k])
            .collect();
        AxisData {
            axis,
            x_max,
            k,
            env,
            waypoints,
            gaps,
        }
    }

    /// The runs of series `series` with x in the axis unit.
    pub(super) fn runs(&self, series: usize) -> Vec<Vec<(f64, f64)>> {
        self.env
            .map(|e| scaled(e.runs(series), self.k))
            .unwrap_or_default()
    }

    pub(super) fn plot(
        &self,
        size: (u32, u32),
        y_desc: String,
        y: [f64; 2],
        lines: Vec<Line>,
    ) -> SPlot<'_> {
        SPlot {
            size,
            axis: self.axis,
            y_desc,
            x_max: self.x_max,
            y,
            log_y: false,
            lines,
            rules: vec![],
            bands: vec![],
            gaps: &self.gaps,
            waypoints: &self.waypoints,
            waypoint_names: true,
            marks: vec![],
        }
    }
}
