//! The joints at the first pose, for both solvers, and the margin score that ranks the
//! candidates (and, in `fix`, whole checks).

use super::RESTARTS;
use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::{IkOptions, NumericIk};
use crate::job::ConfigRequest;
use crate::robot::{Jacobian, Joints, Robot, SingularityModel};
use nalgebra::Isometry3;

/// Singularity measure of a well-conditioned pose of the demo arms. Dividing the measure by
/// it puts it on the footing of the limit ratio (1 = well clear, 0 = at the boundary), so the
/// two terms of [`margin`] can be compared; a measure above it counts as fully clear.
pub const WELL_CONDITIONED_MEASURE: f64 = 0.1;

/// The margin score of a pose (or of a whole walk, from its smallest values): the smaller of
/// `limit_ratio` (margin to the nearest joint limit over half that joint's range; 1 at
/// mid-range, 0 at a limit, see [`limit_ratio`]) and the singularity `measure` over
/// [`WELL_CONDITIONED_MEASURE`], capped at 1. Larger is better; whichever of the two is
/// closer to its boundary decides.
pub fn margin(limit_ratio: f64, measure: f64) -> f64 {
    limit_ratio.min((measure / WELL_CONDITIONED_MEASURE).min(1.0))
}

/// The smallest margin to a joint limit over half that joint's range, at joints `q` (1 when
/// no joint has a finite, non-empty range).
pub fn limit_ratio(robot: &Robot, q: &Joints) -> f64 {
    let mut ratio: f64 = 1.0;
    for (j, &v) in robot.joints().iter().zip(q) {
        let half = 0.5 * (j.upper - j.lower);
        if half.is_finite() && half > 0.0 {
            ratio = ratio.min(j.margin(v) / half);
        }
    }
    ratio
}

/// [`margin`] of the pose at joints `q`: its limit ratio and its singularity measure.
pub fn pose_margin(robot: &Robot, model: &SingularityModel, q: &Joints) -> f64 {
    let mut jac = Jacobian::zeros();
    robot.chain().fk_jacobian(q, &mut jac);
    margin(limit_ratio(robot, q), model.measure(&jac, robot.dof()))
}

/// How the first pose's joints were chosen.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum StartMethod {
    /// From the given start joints.
    StartJoints,
    /// The best of the solutions (or configurations) found for the first pose.
    Search,
    /// The first pose is not reachable.
    Unreachable,
    /// Set for one configuration's walk (the feasibility table).
    Configuration,
}

impl StartMethod {
    /// The word used in reports: `start_joints`, `search`, `unreachable`, `configuration`.
    pub fn name(self) -> &'static str {
        match self {
            StartMethod::StartJoints => "start_joints",
            StartMethod::Search => "search",
            StartMethod::Unreachable => "unreachable",
            StartMethod::Configuration => "configuration",
        }
    }
}

impl serde::Serialize for StartMethod {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.name())
    }
}

/// How the first pose's joints were chosen.
#[derive(Debug, Clone, serde::Serialize)]
pub struct StartChoice {
    /// How they were chosen.
    pub method: StartMethod,
    /// Joints at the first waypoint (rad / m).
    pub joints: Joints,
    /// Distinct in-range solutions the search found for the first pose (0 when given).
    pub alternatives: usize,
    /// The arm configuration followed, when the closed-form solver is used.
    #[serde(skip)]
    pub config: Option<Config>,
}

/// The solver the first pose is chosen with.
#[derive(Debug, Clone, Copy)]
pub enum StartSolver<'a> {
    /// Numerical IK from random seeds.
    Numeric(IkOptions),
    /// The closed form: one start per configuration allowed by `request`, those in `running`
    /// first.
    ClosedForm {
        /// The arm's closed-form solver.
        solver: &'a OrthoParallel,
        /// The path file's `config:` request.
        request: &'a ConfigRequest,
        /// The configurations that run the whole path.
        running: &'a [Config],
    },
}

/// Choose the joints at the first pose `base_T_start`.
///
/// - Given `start_joints`: numerically, refined by IK onto the pose; with the closed form, in
///   their configuration with windings nearest them.
/// - Else numerically: the best-[`pose_margin`] of the distinct solutions found from
///   [`RESTARTS`] seeds; with the closed form: among the configurations matching the request,
///   those that run the whole path first, then the best-[`pose_margin`] start.
pub fn choose_start(
    robot: &Robot,
    model: &SingularityModel,
    base_T_start: &Isometry3<f64>,
    start_joints: Option<&Joints>,
    by: StartSolver,
) -> StartChoice {
    match by {
        StartSolver::Numeric(options) => {
            numeric_start(robot, model, base_T_start, start_joints, options)
        }
        StartSolver::ClosedForm {
            solver,
            request,
            running,
        } => closed_start(
            robot,
            model,
            solver,
            base_T_start,
            start_joints,
            request,
            running,
        ),
    }
}

/// The start of no solution: the first pose is out of reach.
fn unreachable_start(joints: Joints, config: Option<Config>) -> StartChoice {
    StartChoice {
        method: StartMethod::Unreachable,
        joints,
        alternatives: 0,
        config,
    }
}

fn numeric_start(
    robot: &Robot,
    model: &SingularityModel,
    base_T_start: &Isometry3<f64>,
    start_joints: Option<&Joints>,
    options: IkOptions,
) -> StartChoice {
    let ik = NumericIk::new(robot, options);
    let mut q = Joints::zeros(robot.dof());
    if let Some(seed) = start_joints {
        let out = ik.solve(base_T_start, seed, &mut q);
        if !out.converged {
            return unreachable_start(*seed, None);
        }
        return StartChoice {
            method: StartMethod::StartJoints,
            joints: q,
            alternatives: 0,
            config: None,
        };
    }
    let mut rng = crate::rng::SplitMix64::new(0x57a7_7001);
    let mut found: Vec<Joints> = Vec::new();
    for k in 0..RESTARTS * 2 {
        // Mid-range first: the natural "home" guess.
        let seed = if k == 0 {
            robot.mid_range()
        } else {
            robot.random_config(&mut rng)
        };
        let out = ik.solve(base_T_start, &seed, &mut q);
        if out.converged
            && !found
                .iter()
                .any(|f| f.iter().zip(&q).all(|(a, b)| (a - b).abs() < 1e-4))
        {
            found.push(q);
        }
    }
    match found
        .iter()
        .max_by(|a, b| pose_margin(robot, model, a).total_cmp(&pose_margin(robot, model, b)))
        .copied()
    {
        Some(best) => StartChoice {
            method: StartMethod::Search,
            joints: best,
            alternatives: found.len(),
            config: None,
        },
        None => unreachable_start(robot.mid_range(), None),
    }
}

/// A configuration's start, as a candidate for the first pose.
struct Candidate {
    /// The configuration runs the whole path.
    runs: bool,
    /// [`pose_margin`] of the start.
    score: f64,
    config: Config,
    joints: Joints,
}

fn closed_start(
    robot: &Robot,
    model: &SingularityModel,
    solver: &OrthoParallel,
    base_T_start: &Isometry3<f64>,
    start_joints: Option<&Joints>,
    request: &ConfigRequest,
    running: &[Config],
) -> StartChoice {
    if let Some(q) = start_joints {
        let config = solver.config_of(q);
        let sol = config.and_then(|c| solver.solve_near(base_T_start, q, c));
        return match (config, sol) {
            (Some(c), Some(sol)) => StartChoice {
                method: StartMethod::StartJoints,
                joints: sol,
                alternatives: 0,
                config: Some(c),
            },
            _ => unreachable_start(*q, config),
        };
    }
    let mut best: Option<Candidate> = None;
    let mut alternatives = 0;
    for config in Config::ALL {
        if !request.admits(config) {
            continue;
        }
        let Some(joints) = best_in_config(robot, model, solver, base_T_start, config) else {
            continue;
        };
        alternatives += 1;
        let here = Candidate {
            runs: running.contains(&config),
            score: pose_margin(robot, model, &joints),
            config,
            joints,
        };
        if best
            .as_ref()
            .is_none_or(|b| (here.runs, here.score) > (b.runs, b.score))
        {
            best = Some(here);
        }
    }
    match best {
        Some(b) => StartChoice {
            method: StartMethod::Search,
            joints: b.joints,
            alternatives,
            config: Some(b.config),
        },
        None => unreachable_start(robot.mid_range(), None),
    }
}

/// The best-[`pose_margin`] in-range solution of configuration `config` at `base_T_target`
/// (all in-range windings considered), or `None` when that configuration cannot reach the
/// pose within the joint ranges.
pub fn best_in_config(
    robot: &Robot,
    model: &SingularityModel,
    solver: &OrthoParallel,
    base_T_target: &Isometry3<f64>,
    config: Config,
) -> Option<Joints> {
    solver
        .solve(base_T_target)
        .iter()
        .filter(|s| s.config == config)
        .map(|s| (pose_margin(robot, model, &s.joints), s.joints))
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, q)| q)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn margin_is_the_smaller_normalised_term() {
        // source: common practice (the smaller of two margins each scaled to 0…1), values
        // worked by hand from the definition above.
        // Singularity decides: 0.02 / 0.1 = 0.2 < 0.5.
        assert!((margin(0.5, 0.02) - 0.2).abs() < 1e-12);
        // Limit decides: 0.3 < min(0.5 / 0.1, 1) = 1.
        assert!((margin(0.3, 0.5) - 0.3).abs() < 1e-12);
        // A measure above the well-conditioned one counts as fully clear.
        assert_eq!(margin(1.0, 0.7), 1.0);
        // Beyond a limit the ratio is negative and decides.
        assert!((margin(-0.1, 0.05) + 0.1).abs() < 1e-12);
    }

    #[test]
    fn method_names_are_the_report_words() {
        // source: from memory (the words the JSON report has always carried)
        let names: Vec<&str> = [
            StartMethod::StartJoints,
            StartMethod::Search,
            StartMethod::Unreachable,
            StartMethod::Configuration,
        ]
        .iter()
        .map(|m| m.name())
        .collect();
        assert_eq!(
            names,
            ["start_joints", "search", "unreachable", "configuration"]
        );
        assert_eq!(
            serde_json::to_string(&StartMethod::Search).ok().as_deref(),
            Some("\"search\"")
        );
    }
}
