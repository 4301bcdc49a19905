//! Assessment: turns solved samples into located findings.
//!
//! Every per-sample check raises a flag for a (kind, joint) pair; consecutive flagged samples
//! of one pair within one segment merge into one run, and each run becomes one finding that
//! carries its extent (samples, path distance, time), its worst value and a message saying
//! what to try. The assessor sees one sample at a time and keeps only the open runs.

mod finding;
mod messages;
mod runs;

pub use finding::{Finding, Kind, Quantity, Severity};
pub use runs::{Run, RunBook, Span, Worst};

use crate::job::{Job, Motion};
use crate::plan::Plan;
pub use crate::robot::DEFAULT_SINGULARITY_THRESHOLD;

use crate::robot::{Joints, Robot, SingularityClass, MAX_DOF};
use crate::solve::{Reach, SampleRecord, SampleSink};

/// Speeds within this relative tolerance of their limit count as at the limit, not above:
/// a segment timed exactly at a limit must not be flagged through rounding.
const SPEED_TOLERANCE: f64 = 1e-9;

/// Joint accelerations within this relative tolerance of their limit count as at the limit:
/// finite differences of a profile that runs a joint exactly at its limit scatter by the
/// rounding of short sample intervals (1e-6 of the limit is far below any physical meaning).
const ACCELERATION_TOLERANCE: f64 = 1e-6;

/// Thresholds of the assessment, SI.
#[derive(Debug, Clone, Copy)]
pub struct Thresholds {
    /// Singularity measure below which a warning is raised.
    pub singularity: f64,
    /// IK position tolerance (m), reported as the limit of `unreachable` findings.
    pub position_tolerance: f64,
}

impl Default for Thresholds {
    fn default() -> Self {
        Thresholds {
            singularity: DEFAULT_SINGULARITY_THRESHOLD,
            position_tolerance: crate::ik::IkOptions::default().position_tolerance,
        }
    }
}

/// Extremes over the whole path, for the summary.
#[derive(Debug, Clone, Copy)]
pub struct Extremes {
    /// Smallest singularity measure over reached samples, and where.
    /// +∞ when no sample was reached.
    pub min_singularity: f64,
    /// Index of that sample; `None` when no sample was reached.
    pub min_singularity_sample: Option<usize>,
    /// Singularity class at that sample; `None` when the arm's singularities are not
    /// classified or no sample was reached.
    pub min_singularity_class: Option<SingularityClass>,
    /// Path distance (m) of that sample.
    pub min_singularity_s: Option<f64>,
    /// Largest tool angular speed on linear segments (rad/s), and where.
    /// 0 when there is no linear segment.
    pub max_tool_angular_speed: f64,
    /// Index of that sample; `None` when the tool never turned on a linear segment.
    pub max_tool_angular_speed_sample: Option<usize>,
    /// Largest joint speed over its allowed speed (velocity × scale), which joint, where.
    pub max_joint_speed_ratio: f64,
    /// Index of that joint; `None` when no joint moved.
    pub max_joint_speed_joint: Option<usize>,
    /// Index of that sample; `None` like the joint.
    pub max_joint_speed_sample: Option<usize>,
    /// The same over process segments only (the headroom the process keeps; joint moves,
    /// which run at a programmed share of the allowed speed, do not hide it).
    pub process_joint_speed_ratio: f64,
    /// Index of the joint of `process_joint_speed_ratio`; `None` when none moved there.
    pub process_joint_speed_joint: Option<usize>,
    /// Largest joint acceleration over its allowed acceleration, and which joint.
    pub max_joint_acceleration_ratio: f64,
    /// Index of the joint of `max_joint_acceleration_ratio`; `None` when none was measured.
    pub max_joint_acceleration_joint: Option<usize>,
    /// Lowest commanded TCP speed on process segments over the programmed speed (1 = never
    /// below it; `INFINITY` without process samples).
    pub min_process_speed_ratio: f64,
    /// Smallest margin to a joint limit over its half range (1 at mid-range, < 0 outside).
    /// +∞ when no joint with a finite range was measured.
    pub min_limit_margin_ratio: f64,
    /// Index of that joint; `None` when the ratio is +∞.
    pub min_limit_margin_joint: Option<usize>,
}

impl Default for Extremes {
    fn default() -> Self {
        Extremes {
            min_singularity: f64::INFINITY,
            min_singularity_sample: None,
            min_singularity_class: None,
            min_singularity_s: None,
            max_tool_angular_speed: 0.0,
            max_tool_angular_speed_sample: None,
            max_joint_speed_ratio: 0.0,
            max_joint_speed_joint: None,
            max_joint_speed_sample: None,
            process_joint_speed_ratio: 0.0,
            process_joint_speed_joint: None,
            max_joint_acceleration_ratio: 0.0,
            max_joint_acceleration_joint: None,
            min_process_speed_ratio: f64::INFINITY,
            min_limit_margin_ratio: f64::INFINITY,
            min_limit_margin_joint: None,
        }
    }
}

/// One flag raised by a sample: the values a run keeps from its worst sample.
#[derive(Debug, Clone, Copy)]
struct Flag {
    kind: Kind,
    joint: Option<usize>,
    badness: f64,
    value: f64,
    limit: f64,
    class: Option<SingularityClass>,
    delta: Joints,
    orientation_error: f64,
    config_change: Option<(crate::ik::analytic::Config, crate::ik::analytic::Config)>,
}

impl Worst for Flag {
    fn badness(&self) -> f64 {
        self.badness
    }

    /// A singularity class or configuration change seen earlier in the run stays known when
    /// the worse sample has none.
    fn replace_with(&mut self, worse: Self) {
        *self = Flag {
            class: worse.class.or(self.class),
            config_change: worse.config_change.or(self.config_change),
            ..worse
        };
    }
}

/// The runs of the assessor: keyed by finding kind and joint.
type Runs = RunBook<(Kind, Option<usize>), Flag>;

impl Flag {
    fn new(kind: Kind, joint: Option<usize>, badness: f64, value: f64, limit: f64) -> Self {
        Flag {
            kind,
            joint,
            badness,
            value,
            limit,
            class: None,
            delta: Joints::default(),
            orientation_error: 0.0,
            config_change: None,
        }
    }
}

/// The assessor: a [`SampleSink`] that collects findings and extremes.
pub struct Assessor<'a> {
    job: &'a Job,
    plan: &'a Plan,
    thresholds: Thresholds,
    runs: Runs,
    findings: Vec<Finding>,
    extremes: Extremes,
    /// The job's and the plan's input findings, made once in `new`.
    inputs: Vec<Finding>,
    /// The current segment's programmed speed (m/s) and process flag, read from the plan
    /// when a sample enters a new segment.
    segment_speed: f64,
    segment_process: bool,
    /// The next segment is a process segment too (else the process ends with this one).
    next_process: bool,
    /// The segment those were read for.
    loaded: Option<usize>,
    /// For each waypoint that starts a segment with an input finding (sorted, made in `new`):
    /// the index of the first sample standing at it, where that finding sits in path order.
    /// Only those waypoints are kept, so memory follows the findings, not the path length.
    waypoint_sample: Vec<(usize, Option<usize>)>,
}

impl<'a> Assessor<'a> {
    /// An assessor for `job` planned as `plan`; the input findings of both are made here.
    pub fn new(job: &'a Job, plan: &'a Plan, thresholds: Thresholds) -> Self {
        Assessor {
            job,
            plan,
            thresholds,
            runs: RunBook::with_capacity(4 * MAX_DOF),
            findings: Vec::new(),
            extremes: Extremes::default(),
            segment_speed: 0.0,
            segment_process: false,
            next_process: false,
            loaded: None,
            inputs: Vec::new(),
            waypoint_sample: Vec::new(),
        }
        .with_inputs()
    }

    fn with_inputs(mut self) -> Self {
        self.inputs = messages::input_findings(self.job, self.plan);
        let mut wanted: Vec<usize> = self
            .inputs
            .iter()
            .filter(|f| f.samples.is_none())
            .filter_map(|f| f.segment)
            .collect();
        wanted.sort_unstable();
        wanted.dedup();
        self.waypoint_sample = wanted.into_iter().map(|w| (w, None)).collect();
        self
    }

    fn raise(&mut self, rec: &SampleRecord, f: Flag) {
        self.runs.raise(rec, (f.kind, f.joint), f);
    }

    /// Read segment `k`'s programmed speed and process flag from the plan.
    fn load_segment(&mut self, k: usize) {
        let (speed, process) = self
            .plan
            .segment(k)
            .map_or((0.0, false), |s| (s.speed, s.process));
        self.segment_speed = speed;
        self.segment_process = process;
        self.next_process = self.plan.segment(k + 1).is_some_and(|s| s.process);
        self.loaded = Some(k);
    }

    fn close_unseen(&mut self, robot: &Robot) {
        let (job, plan, findings) = (self.job, self.plan, &mut self.findings);
        self.runs
            .close_unseen(|run| findings.push(messages::finding(robot, job, plan, &run)));
    }

    /// Adds findings made elsewhere (the cell watch's `collision` and `clearance`), to be
    /// sorted into path order with the rest by [`Assessor::finish`].
    pub fn add_findings(&mut self, findings: Vec<Finding>) {
        self.findings.extend(findings);
    }

    /// Close every open run and return the findings in path order: by first sample (an
    /// input finding on a segment sits at the segment's start, one on the file as a whole at
    /// the path's start), then segment, then kind (input first), then joint; with the extremes.
    pub fn finish(mut self, robot: &Robot) -> (Vec<Finding>, Extremes) {
        let (job, plan, closed) = (self.job, self.plan, &mut self.findings);
        self.runs
            .close_all(|run| closed.push(messages::finding(robot, job, plan, &run)));
        let mut findings = std::mem::take(&mut self.inputs);
        findings.append(&mut self.findings);
        let starts = &self.waypoint_sample;
        let start_of = |k: usize| {
            starts
                .binary_search_by_key(&k, |e| e.0)
                .ok()
                .and_then(|i| starts[i].1)
        };
        findings.sort_by_cached_key(|f| {
            let first = f
                .samples
                .map(|s| s[0])
                .or_else(|| f.segment.and_then(start_of))
                .unwrap_or(0);
            (first, f.segment, f.kind, f.joint.clone())
        });
        (findings, self.extremes)
    }
}

impl SampleSink for Assessor<'_> {
    /// Rebuilt as [`Assessor::new`] makes it (input findings included).
    fn restart(&mut self) {
        *self = Assessor::new(self.job, self.plan, self.thresholds);
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if let Some(w) = rec.waypoint {
            if let Ok(i) = self.waypoint_sample.binary_search_by_key(&w, |e| e.0) {
                self.waypoint_sample[i].1.get_or_insert(rec.index);
            }
        }
        let (job, plan, findings) = (self.job, self.plan, &mut self.findings);
        self.runs.enter(rec.segment, |run| {
            findings.push(messages::finding(robot, job, plan, &run))
        });
        if self.loaded != Some(rec.segment) {
            self.load_segment(rec.segment);
        }
        if rec.reach == Reach::Unreachable {
            let mut f = Flag::new(
                Kind::Unreachable,
                None,
                rec.position_error + rec.orientation_error * robot.reach(),
                rec.position_error,
                self.thresholds.position_tolerance,
            );
            f.orientation_error = rec.orientation_error;
            self.raise(rec, f);
            self.close_unseen(robot);
            return;
        }
        let limits = &self.job.limits;
        for (k, j) in robot.joints().iter().enumerate() {
            let q = rec.joints[k];
            let half = 0.5 * (j.upper - j.lower);
            if half.is_finite() && half > 0.0 {
                let ratio = j.margin(q) / half;
                if ratio < self.extremes.min_limit_margin_ratio {
                    self.extremes.min_limit_margin_ratio = ratio;
                    self.extremes.min_limit_margin_joint = Some(k);
                }
            }
            let bound = if q - j.lower < j.upper - q {
                j.lower
            } else {
                j.upper
            };
            if !j.contains(q) {
                self.raise(
                    rec,
                    Flag::new(Kind::JointLimit, Some(k), (q - bound).abs(), q, bound),
                );
            } else {
                let near = if j.kind.is_prismatic() {
                    limits.near_limit_margin_length
                } else {
                    limits.near_limit_margin_angle
                };
                if j.margin(q) < near {
                    self.raise(
                        rec,
                        Flag::new(Kind::NearJointLimit, Some(k), -j.margin(q), q, bound),
                    );
                }
            }
        }
        if let Some(jump) = rec.jump {
            let biggest = jump.delta.iter().fold(0.0f64, |m, d| m.max(d.abs()));
            let mut f = Flag::new(Kind::JointJump, None, biggest, biggest, 0.0);
            f.delta = jump.delta;
            f.config_change = jump.config_change;
            self.raise(rec, f);
        }
        if rec.singularity < self.extremes.min_singularity {
            self.extremes.min_singularity = rec.singularity;
            self.extremes.min_singularity_sample = Some(rec.index);
            self.extremes.min_singularity_class = rec.singularity_class;
            self.extremes.min_singularity_s = Some(rec.s);
        }
        if rec.singularity < self.thresholds.singularity {
            let mut f = Flag::new(
                Kind::Singularity,
                None,
                -rec.singularity,
                rec.singularity,
                self.thresholds.singularity,
            );
            f.class = rec.singularity_class;
            self.raise(rec, f);
        }
        if rec.motion == Motion::Linear {
            let w = rec.tool_angular_speed;
            if w > self.extremes.max_tool_angular_speed {
                self.extremes.max_tool_angular_speed = w;
                self.extremes.max_tool_angular_speed_sample = Some(rec.index);
            }
            let lim = limits.tool_angular_speed;
            if w > lim * (1.0 + SPEED_TOLERANCE) {
                self.raise(
                    rec,
                    Flag::new(Kind::ToolAngularSpeed, None, w / lim, w, lim),
                );
            }
        }
        let process = self.segment_process && rec.motion == Motion::Linear && rec.index > 0;
        for (k, j) in robot.joints().iter().enumerate() {
            let allowed = j.velocity * limits.joint_speed_scale;
            let v = rec.joint_speed[k].abs();
            let ratio = v / allowed;
            if ratio > self.extremes.max_joint_speed_ratio {
                self.extremes.max_joint_speed_ratio = ratio;
                self.extremes.max_joint_speed_joint = Some(k);
                self.extremes.max_joint_speed_sample = Some(rec.index);
            }
            if process && ratio > self.extremes.process_joint_speed_ratio {
                self.extremes.process_joint_speed_ratio = ratio;
                self.extremes.process_joint_speed_joint = Some(k);
            }
            if ratio > 1.0 + SPEED_TOLERANCE {
                self.raise(rec, Flag::new(Kind::JointSpeed, Some(k), ratio, v, allowed));
            }
            let allowed_acc = j.acceleration_limit(limits.joint_acceleration_scale);
            let acc = rec.joint_acceleration[k].abs();
            let acc_ratio = acc / allowed_acc;
            if acc_ratio > self.extremes.max_joint_acceleration_ratio {
                self.extremes.max_joint_acceleration_ratio = acc_ratio;
                self.extremes.max_joint_acceleration_joint = Some(k);
            }
            if acc_ratio > 1.0 + ACCELERATION_TOLERANCE {
                self.raise(
                    rec,
                    Flag::new(
                        Kind::JointAcceleration,
                        Some(k),
                        acc_ratio,
                        acc,
                        allowed_acc,
                    ),
                );
            }
        }
        // Where the process ends at a stop, the stop itself is the end of the bead, not a
        // dip in it: the samples before it still show the slowing down.
        let process_ends_here = rec.waypoint == Some(rec.segment + 1) && !self.next_process;
        if process && self.segment_speed > 0.0 && !process_ends_here {
            let ratio = rec.tcp_speed / self.segment_speed;
            self.extremes.min_process_speed_ratio =
                self.extremes.min_process_speed_ratio.min(ratio);
            let floor = (1.0 - limits.process_speed_tolerance) * self.segment_speed;
            if rec.tcp_speed < floor * (1.0 - SPEED_TOLERANCE) {
                self.raise(
                    rec,
                    Flag::new(
                        Kind::ProcessSpeed,
                        None,
                        floor - rec.tcp_speed,
                        rec.tcp_speed,
                        floor,
                    ),
                );
            }
        }
        self.close_unseen(robot);
    }
}
