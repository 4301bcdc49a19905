//! The collision and clearance part of a report: what the cell check covered, and the
//! cautions of a report whose check measured a cell model.

use crate::job::Job;
use serde::Serialize;

/// The cautions of a report whose check measured a cell model: the fourth says what the
/// collision check covers instead of that collisions are ignored.
pub const CAUTIONS_WITH_CELL: [&str; 5] = [
    super::CAUTIONS[0],
    super::CAUTIONS[1],
    super::CAUTIONS[2],
    "Collisions are checked only against the modelled geometry (the robot's collision shapes, the tool bodies and the cell bodies, STL meshes as their triangle surfaces); anything not modelled is ignored, as are cables and hoses, payload, forces and torques, and jerk; its speed ramps and corner blends are armpath's own model with default accelerations (URDF has none), not the controller's interpolation.",
    "Results are only as good as the robot description, tool offset and geometry, work frame and cell file given to armpath: check them against the cell.",
];

/// The cautions of a report on `job`: [`CAUTIONS_WITH_CELL`] when its check measures a cell
/// model (the job has a cell file or tool geometry), else [`super::CAUTIONS`].
pub fn cautions_for(job: &Job) -> Vec<&'static str> {
    if job.cell.is_some() || !job.tool.geometry.is_empty() {
        CAUTIONS_WITH_CELL.to_vec()
    } else {
        super::CAUTIONS.to_vec()
    }
}

/// What the collision and clearance check covered, display units (mm).
#[derive(Debug, Clone, Serialize)]
pub struct CellReport {
    /// Bodies in the model: robot links with collision geometry, tool bodies, cell bodies.
    pub bodies: usize,
    /// Body pairs tested.
    pub pairs_tested: usize,
    /// Distance (mm) below which two bodies raise a `clearance` warning.
    pub clearance_mm: f64,
    /// Nearest approach of any tested pair at a sample (negative: penetration depth); for
    /// far pairs a lower bound.
    pub nearest_mm: Option<f64>,
    /// The two bodies of `nearest_mm`; null like it.
    pub nearest_bodies: Option<[String; 2]>,
    /// Index of the sample of `nearest_mm`; null like it.
    pub nearest_sample: Option<usize>,
    /// Configurations measured: samples and midpoints of the between-samples rule.
    pub configurations_measured: u64,
    /// What the model leaves out.
    pub notes: Vec<String>,
    /// The HTML page's clearance plot: nearest distance of any tested pair (mm) per slice
    /// of path distance (x in mm), as runs broken where no sample was measured; smallest
    /// value per slice. Not in the JSON report.
    #[serde(skip)]
    pub profile_s: Vec<Vec<(f64, f64)>>,
    /// The same against time (x in s).
    #[serde(skip)]
    pub profile_t: Vec<Vec<(f64, f64)>>,
}

impl CellReport {
    /// The report form of a cell summary.
    pub fn new(c: &crate::check::CellSummary) -> Self {
        CellReport {
            bodies: c.bodies,
            pairs_tested: c.pairs,
            clearance_mm: c.clearance * 1e3,
            nearest_mm: c.nearest.as_ref().map(|n| n.distance * 1e3),
            nearest_bodies: c.nearest.as_ref().map(|n| n.bodies.clone()),
            nearest_sample: c.nearest.as_ref().map(|n| n.sample),
            configurations_measured: c.configurations,
            notes: c.notes.clone(),
            profile_s: scaled(c.profile.by_s.runs(), 1e3),
            profile_t: scaled(c.profile.by_t.runs(), 1.0),
        }
    }
}

/// Runs with x multiplied by `kx` and the distance from m to mm.
fn scaled(runs: Vec<Vec<(f64, f64)>>, kx: f64) -> Vec<Vec<(f64, f64)>> {
    runs.into_iter()
        .map(|r| r.into_iter().map(|(x, d)| (x * kx, d * 1e3)).collect())
        .collect()
}
