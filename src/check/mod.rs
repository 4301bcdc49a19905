//! The check, end to end: job + robot → plan → walk (IK per sample) → assessment →
//! [`CheckOutcome`] (SI, typed), which the report converts to display units.

mod outcome;

mod cell_watch;
pub use cell_watch::{
    CellSummary, CellWatch, ClearanceProfile, MinSeries, Nearest, PROFILE_SLICES,
};
pub use outcome::{
    Advice, CheckOutcome, Feasibility, FirstStop, NonFinite, Verdict, SEGMENT_TABLE_ROWS,
};

use crate::assess::Finding;
use crate::assess::{Assessor, Thresholds};
use crate::configs::feasibility;
use crate::error::{Error, Result};
use crate::ik::analytic::{Config, OrthoParallel};
use crate::ik::IkOptions;
use crate::job::{ConfigRequest, Job, StartJoints};
use crate::plan::{plan, Plan, DEFAULT_MAX_SAMPLES};
use crate::robot::{Joints, Robot, SingularityModel};
use crate::solve::{
    choose_start, chunk_grid, residual, walk_in_chunks, Boundary, SampleRecord, SampleSink,
    StartChoice, StartSolver, WalkTotals, Walker, CHUNK_SAMPLES,
};
use std::sync::atomic::{AtomicBool, Ordering};

/// Settings of a check beyond the job.
#[derive(Debug, Clone, Copy)]
pub struct CheckOptions {
    /// IK tolerances and iteration limits.
    pub ik: IkOptions,
    /// Thresholds of the findings.
    pub thresholds: Thresholds,
    /// Refuse plans with more samples than this.
    pub max_samples: u64,
    /// Use the numerical solver even when the arm has a closed-form one (to compare, or to
    /// follow the motion through an exact wrist singularity by continuity).
    pub numeric_only: bool,
    /// Threads the check may use (at least 1; the result does not depend on it). With 1,
    /// the configuration table is built first and the main walk follows. From 2 on, the
    /// main walk starts at once, from the start chosen as if every configuration reaching
    /// the first pose ran the whole path, while the table is built on the other threads;
    /// where the table then chooses another start, the sinks are restarted
    /// ([`SampleSink::restart`]) and the walk is run again. A sink that cannot restart
    /// ([`SampleSink::restartable`], e.g. a joint CSV on standard output) keeps the order
    /// of one thread. The main walk itself is cut into chunks walked on these threads
    /// ([`crate::solve::walk_in_chunks`]), with the samples of one walk.
    pub threads: usize,
    /// Samples per chunk of the main walk ([`CHUNK_SAMPLES`]; at least 1). The singularity
    /// screen restarts at every chunk on any number of threads, so the report does not depend
    /// on the thread count; the plots' screened values (proven lower bounds, see
    /// [`SampleRecord::singularity`]) may depend on this.
    pub chunk_samples: usize,
}

impl Default for CheckOptions {
    fn default() -> Self {
        CheckOptions {
            ik: IkOptions::default(),
            thresholds: Thresholds::default(),
            max_samples: DEFAULT_MAX_SAMPLES,
            numeric_only: false,
            threads: 1,
            chunk_samples: CHUNK_SAMPLES,
        }
    }
}

/// Passes each sample to several sinks.
struct Fanout<'s, 'a> {
    sinks: &'s mut [&'a mut dyn SampleSink],
    /// Set (from the thread building the configuration table) when the walk under way
    /// started from a start the table does not choose: it will be walked again, so it may
    /// stop now. One relaxed load per sample, no lock.
    wasted: &'s AtomicBool,
}

impl SampleSink for Fanout<'_, '_> {
    fn done(&self) -> bool {
        // The walk that counts always runs to the end: every sink sees the whole path.
        self.wasted.load(Ordering::Relaxed)
    }
    fn begin(&mut self, robot: &Robot, estimated_samples: u64) {
        for s in self.sinks.iter_mut() {
            s.begin(robot, estimated_samples);
        }
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        for s in self.sinks.iter_mut() {
            s.sample(robot, rec);
        }
    }
    fn restart(&mut self) {
        for s in self.sinks.iter_mut() {
            s.restart();
        }
    }
    fn restartable(&self) -> bool {
        self.sinks.iter().all(|s| s.restartable())
    }
}

/// Run the check. `robot` is the robot of the job without a tool (the job's tool is mounted
/// here); `sinks` receive every sample too (joint CSV, plots, progress).
pub fn check(
    job: &Job,
    robot: &Robot,
    options: &CheckOptions,
    sinks: &mut [&mut dyn SampleSink],
) -> Result<CheckOutcome> {
    let unit_hint = metres_look_like_mm(job, robot);
    let mut robot = robot.clone();
    robot.set_tool(job.tool.tip_T_tcp);
    job.apply_joint_accelerations(&mut robot)?;
    let start_si = match &job.start_joints {
        Some(sj) => Some(
            sj.to_si(&robot.prismatic_mask())
                .map_err(|m| Error::input(&job.source, sj.origin.clone(), m))?,
        ),
        None => None,
    };
    if let Some(q) = &start_si {
        for (j, v) in robot.joints().iter().zip(q) {
            if !j.contains(*v) {
                return Err(Error::input(
                    &job.source,
                    "start_joints",
                    format!(
                        "{} = {:.3} is outside its range {:.3} … {:.3} ({}): give joints inside the robot's limits",
                        j.name,
                        crate::units_display::joint_display(j.kind, *v),
                        crate::units_display::joint_display(j.kind, j.lower),
                        crate::units_display::joint_display(j.kind, j.upper),
                        crate::units_display::joint_unit(j.kind)
                    ),
                ));
            }
        }
    }
    let plan = plan(job, options.max_samples)?;
    let model = SingularityModel::new(&robot);
    let first = plan.first_base();
    let closed = if options.numeric_only {
        Err("the numerical solver was asked for (--ik numeric)".to_string())
    } else {
        OrthoParallel::from_robot(&robot)
    };
    if let (Some(sj), Some(q)) = (&job.start_joints, &start_si) {
        check_start_joints(job, sj, &robot, q, &first, closed.as_ref().ok())?;
    }
    let mut notes: Vec<Finding> = unit_hint.into_iter().map(note).collect();
    if let Err(reason) = &closed {
        if job.config != ConfigRequest::default() {
            notes.push(note(format!(
                "config: ignored, the arm has no closed-form solver ({reason}); the first pose's configuration comes from start_joints or the search"
            )));
        }
    }
    let mut assessor = Assessor::new(job, &plan, options.thresholds);
    let mut clock = crate::solve::WaypointClock::new(SEGMENT_TABLE_ROWS + 1);
    let cell_model = cell_model(job, &robot)?;
    let mut watch = cell_model.as_ref().map(|m| CellWatch::new(m, job, &plan));
    let mut all: Vec<&mut dyn SampleSink> = Vec::with_capacity(sinks.len() + 3);
    all.push(&mut assessor);
    all.push(&mut clock);
    if let Some(w) = watch.as_mut() {
        all.push(w);
    }
    for s in sinks.iter_mut() {
        all.push(&mut **s);
    }
    let wasted = AtomicBool::new(false);
    let mut fan = Fanout {
        sinks: &mut all,
        wasted: &wasted,
    };
    let grid = chunk_grid(&plan, options.chunk_samples);
    let main = MainWalk {
        robot: &robot,
        job,
        plan: &plan,
        options,
        closed: closed.as_ref().ok(),
        grid: &grid,
    };
    let (start, table, totals) = match &closed {
        Ok(solver) => {
            let choose = |running: &[Config]| {
                choose_start(
                    &robot,
                    &model,
                    &first,
                    start_si.as_ref(),
                    StartSolver::ClosedForm {
                        solver,
                        request: &job.config,
                        running,
                    },
                )
            };
            let table_on =
                |threads: usize| feasibility(&robot, job, &plan, solver, options.ik, threads);
            if options.threads >= 2 && fan.restartable() {
                // The usual answer, known before the table: every configuration that
                // reaches the first pose runs the whole path (or none does, which chooses
                // the same). The table is built on a rayon worker meanwhile; the sinks
                // stay on this thread.
                let guess = choose(&Config::ALL);
                let mut built = Vec::new();
                let mut chosen = None;
                let mut totals = rayon::in_place_scope(|scope| {
                    scope.spawn(|_| {
                        built = table_on(options.threads - 1);
                        let start = choose(&crate::configs::running(&built));
                        if start.config != guess.config || start.joints[..] != guess.joints[..] {
                            wasted.store(true, Ordering::Relaxed);
                        }
                        chosen = Some(start);
                    });
                    main.walk(&guess, &mut fan)
                });
                let start = chosen.unwrap_or_else(|| choose(&crate::configs::running(&built)));
                if wasted.swap(false, Ordering::Relaxed) {
                    fan.restart();
                    totals = WalkTotals {
                        discarded_walks: 1,
                        ..main.walk(&start, &mut fan)
                    };
                }
                (start, Some(built), totals)
            } else {
                let table = table_on(options.threads);
                let start = choose(&crate::configs::running(&table));
                let totals = main.walk(&start, &mut fan);
                (start, Some(table), totals)
            }
        }
        Err(_) => {
            let start = choose_start(
                &robot,
                &model,
                &first,
                start_si.as_ref(),
                StartSolver::Numeric(options.ik),
            );
            let totals = main.walk(&start, &mut fan);
            (start, None, totals)
        }
    };
    drop(all);
    let cell = watch.map(|w| {
        let (found, summary) = w.finish();
        assessor.add_findings(found);
        summary
    });
    let (mut findings, extremes) = assessor.finish(&robot);
    findings.splice(0..0, notes);
    let advice = table
        .as_deref()
        .and_then(|table| Advice::new(table, start.config));
    Ok(CheckOutcome {
        robot,
        job: job.clone(),
        plan,
        start,
        feasibility: table,
        findings,
        extremes,
        totals,
        segment_durations: clock.segment_durations(),
        thresholds: options.thresholds,
        advice,
        cell,
    })
}

/// What the main walk needs besides its start and sinks.
struct MainWalk<'a> {
    /// The robot with the job's tool mounted.
    robot: &'a Robot,
    job: &'a Job,
    plan: &'a Plan,
    options: &'a CheckOptions,
    /// The closed-form solver, when the arm has one and it is used.
    closed: Option<&'a OrthoParallel>,
    /// Where the walk's chunks begin.
    grid: &'a [Boundary],
}

impl MainWalk<'_> {
    /// The walk from `start` into `sink`, on the start's configuration with the closed form,
    /// in chunks on the check's threads.
    fn walk(&self, start: &StartChoice, sink: &mut dyn SampleSink) -> WalkTotals {
        let walker = Walker::new(self.robot, self.job, self.plan, self.options.ik)
            .with_singularity_threshold(self.options.thresholds.singularity)
            .with_grid(self.grid);
        match (self.closed, start.config) {
            (Some(solver), Some(config)) => walk_in_chunks(
                walker.with_closed_form(solver, config),
                solver,
                config,
                start,
                sink,
                self.options.threads,
                self.options.chunk_samples,
            ),
            _ => {
                let mut walker = walker;
                walker.walk(start, sink)
            }
        }
    }
}

/// The cell model of a job that has a cell file or tool geometry (`robot` with the tool
/// mounted); `None` otherwise, and then the check measures nothing more.
pub fn cell_model(job: &Job, robot: &Robot) -> Result<Option<crate::cell::CellModel>> {
    if job.cell.is_none() && job.tool.geometry.is_empty() {
        return Ok(None);
    }
    crate::cell::CellModel::build(crate::cell::CellInputs {
        robot,
        tool: &job.tool.geometry,
        cell: job.cell.as_deref(),
        base_T_work: job.base_T_work,
        clearance: job.limits.clearance,
    })
    .map(Some)
}

/// How far (m) the TCP of given start joints may be from the first waypoint. Joints copied
/// from a controller display carry three decimals (±0.0005°); over six joints and a 2 m
/// lever that moves the TCP by up to about 0.1 mm and 0.003°, well inside these bounds,
/// while joints that belong to another pose, joint order, unit or tool miss by millimetres
/// or degrees. Within the bounds the first pose is solved exactly, nearest the given joints
/// (same configuration and windings).
pub const START_JOINTS_POSITION_TOLERANCE: f64 = 0.5e-3;

/// How far (rad) the tool orientation of given start joints may be from the first
/// waypoint's: 0.05°, for the same reason as [`START_JOINTS_POSITION_TOLERANCE`].
pub const START_JOINTS_ORIENTATION_TOLERANCE: f64 = 0.05 * std::f64::consts::PI / 180.0;

/// Given start joints must put the TCP on the first waypoint within the start tolerance (unless
/// they are only a seed), and with the closed-form solver their configuration must agree with
/// the `config:` request.
fn check_start_joints(
    job: &Job,
    sj: &StartJoints,
    robot: &Robot,
    q: &Joints,
    first: &nalgebra::Isometry3<f64>,
    solver: Option<&OrthoParallel>,
) -> Result<()> {
    let refuse = |message: String| {
        Err(if sj.origin.starts_with("--") {
            Error::usage(&sj.origin, message)
        } else {
            Error::input(&job.source, &sj.origin, message)
        })
    };
    if !sj.seed {
        let (pe, oe) = residual(robot, q, first);
        if pe > START_JOINTS_POSITION_TOLERANCE || oe > START_JOINTS_ORIENTATION_TOLERANCE {
            return refuse(format!(
                "these joints put the TCP {:.3} mm and {:.4}° away from the first waypoint '{}' (allowed {} mm, {}°): \
                 give the joints at the first waypoint, or set `start_joints_seed: true` (--start-joints-as-seed) \
                 to use them only as a starting guess",
                pe * 1e3,
                oe.to_degrees(),
                job.waypoint_name(0),
                START_JOINTS_POSITION_TOLERANCE * 1e3,
                START_JOINTS_ORIENTATION_TOLERANCE.to_degrees()
            ));
        }
    }
    if let Some(c) = solver.and_then(|s| s.config_of(q)) {
        if !job.config.admits(c) {
            return refuse(format!(
                "are in configuration {c} but `config:` asks for {}: drop `config:`, or give joints in that configuration",
                job.config
            ));
        }
    }
    Ok(())
}

/// With `units: m`, a hint when most waypoints lie outside the arm's reach sphere
/// ([`Robot::reach_bound`]) and most would lie inside it were every length of the file
/// (waypoints, work frame, tool) read as mm: the values look like mm. `robot` has no tool.
fn metres_look_like_mm(job: &Job, robot: &Robot) -> Option<String> {
    if job.units.length != crate::job::LengthUnit::M {
        return None;
    }
    let (centre, bare_radius) = robot.reach_bound();
    let tool = job.tool.tip_T_tcp.translation.vector.norm();
    let work = &job.base_T_work;
    let (mut beyond, mut inside_as_mm) = (0, 0);
    for w in job.waypoints.iter() {
        let p = work.translation.vector + work.rotation * w.work_T_tcp.translation.vector;
        beyond += usize::from((p - centre).norm() > bare_radius + tool);
        let p_mm = p * 1e-3;
        inside_as_mm += usize::from((p_mm - centre).norm() <= bare_radius + tool * 1e-3);
    }
    let most = |k: usize| 2 * k > job.waypoints.len();
    (most(beyond) && most(inside_as_mm)).then(|| {
        format!(
            "units: lengths are read as m, but {beyond} of {} waypoints lie beyond the arm's reach ({:.3} m from its first joint) \
             and {inside_as_mm} would be within it read as mm: the values look like mm; set `units: {{length: mm}}` (or --units mm,… for a CSV file)",
            job.waypoints.len(),
            bare_radius + tool
        )
    })
}

/// An `input` note not tied to a segment.
fn note(message: String) -> Finding {
    Finding::input(None, None, None, message)
}

/// The check of a demo path (relative to the repository) on the robot it names, default
/// options.
#[cfg(test)]
pub(crate) fn demo_outcome(path: &str) -> CheckOutcome {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let job = crate::job::load(&dir.join(path), &crate::job::Overrides::default()).unwrap();
    let robot = crate::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    check(&job, &robot, &CheckOptions::default(), &mut []).unwrap()
}
