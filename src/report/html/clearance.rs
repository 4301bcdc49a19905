//! The clearance plots of a job with a cell: the nearest distance of any tested body pair
//! (mm) against path distance and against time, the clearance limit and contact as lines,
//! and the `collision` and `clearance` findings marked.

use super::axes::{AxisData, FULL};
use super::places::{mark_on, pin_id, Place};
use super::plots::{self, Axis, Figure, Line, Rule};
use crate::report::Report;

/// The y axis shows at most this many clearance limits above the limit line: far pairs are
/// measured by their bounding spheres (lower bounds, often metres), and a scale set by them
/// would squeeze the near passes that matter into a few pixels. Larger values are drawn at
/// the top of the plot.
const HEADROOM_LIMITS: f64 = 8.0;

/// Top of the y axis when the clearance limit is zero (mm): a few tool diameters.
const HEADROOM_MIN_MM: f64 = 50.0;

/// The plots against s (`by_s`) and against t (`by_t`); `None` when the report has no cell
/// check. `places` says which findings are marked and where their table link goes.
pub fn plots(
    report: &Report,
    by_s: &AxisData,
    by_t: &AxisData,
    places: &[(usize, Place)],
) -> Option<[Result<Figure, String>; 2]> {
    let cell = report.cell.as_ref()?;
    let limit = cell.clearance_mm;
    let draw = |ax: &AxisData, runs: &[Vec<(f64, f64)>]| {
        let lo = runs.iter().flatten().map(|p| p.1).fold(0.0f64, f64::min);
        let top = (limit * HEADROOM_LIMITS).max(HEADROOM_MIN_MM);
        let hi = runs
            .iter()
            .flatten()
            .map(|p| p.1)
            .fold(limit * 1.5, f64::max)
            .min(top);
        let pad = 0.06 * (hi - lo).max(1.0);
        let runs: Vec<Vec<(f64, f64)>> = runs
            .iter()
            .map(|r| r.iter().map(|&(x, d)| (x, d.min(hi + pad))).collect())
            .collect();
        let mut plot = ax.plot(
            (FULL, 250),
            "nearest distance (mm)".into(),
            [lo - pad, hi + pad],
            vec![Line {
                colour: plots::BLUE,
                width: 2,
                runs,
                label: None,
            }],
        );
        plot.rules = vec![
            Rule {
                y: limit,
                label: format!("clearance {} mm", super::nice(limit)),
            },
            Rule {
                y: 0.0,
                label: "contact".into(),
            },
        ];
        plot.marks = places
            .iter()
            .filter_map(|&(n, p)| {
                let f = report.findings.get(n - 1)?;
                if !matches!(f.kind, "collision" | "clearance") {
                    return None;
                }
                let mut m = mark_on(n, f, ax.axis);
                // The findings table links here for clearance findings met against s.
                m.id = (p == Place::Clearance && ax.axis == Axis::Distance).then(|| pin_id(n));
                Some(m)
            })
            .collect();
        plots::s_plot(&plot)
    };
    Some([draw(by_s, &cell.profile_s), draw(by_t, &cell.profile_t)])
}
