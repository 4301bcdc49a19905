//! Free tool spin search (in progress).

use crate::check::CheckOptions;
use crate::error::Result;
use crate::job::Job;
use crate::robot::Robot;

/// What the spin search found (display units).
#[derive(Debug, Clone, serde::Serialize)]
pub struct SpinOutcome {
    pub config: String,
    pub angle_unit: &'static str,
    pub min_spin: f64,
    pub max_spin: f64,
    pub margin: f64,
    pub min_singularity: f64,
    pub min_limit_margin: f64,
    pub added_waypoints: usize,
}

/// A spin search result: the amended job and the outcome.
pub struct SpinFound {
    pub job: Job,
    pub outcome: SpinOutcome,
    pub changed: bool,
}

pub fn search(_job: &Job, _robot: &Robot, _options: &CheckOptions) -> Result<Option<SpinFound>> {
    Ok(None)
}
