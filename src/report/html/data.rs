//! What the page plots, collected while the path is walked, in bounded memory.
//!
//! Series against path distance go into an [`Envelope`] (min/max per bucket of s, buckets
//! widening as the path grows), and the same series against time into a second one (a turn
//! on the spot or a joint move that barely moves the TCP has no width against s). The TCP path for the views goes into a [`Trace`]: the points
//! at least a tolerance apart plus the waypoints (linear segments are straight between
//! waypoints, so this keeps their corners); when the trace fills up, the tolerance doubles
//! and the trace is thinned. Memory is independent of the number of samples.

use crate::job::{Job, Motion};
use crate::report::joint_display;
use crate::robot::{JointKind, Joints, Robot};
use crate::solve::{Reach, SampleRecord, SampleSink};

use super::arm::ArmGeometry;
pub use super::envelope::{Bucket, Envelope};
use super::poses::{PoseKeeper, SLIDER_POSES};

/// Buckets across the full path. Plots are about 1,100 px wide at most; after a merge between
/// half and all of these are in use, so a drawn line keeps at least one bucket per 1.5 px.
pub const BUCKETS: usize = 1500;

/// Largest number of kept TCP points. The path views are about 560 px wide: 4,000 points keep
/// several points per pixel of path for all but the longest paths, at about 60 kB of SVG each.
pub const TRACE_POINTS: usize = 4000;

/// A thinning pass keeps a waypoint closer than the tolerance to the previous kept point as
/// long as it is at least this fraction of the tolerance away (corners matter more than the
/// spacing), so that thinning still makes progress on paths with many waypoints.
const PIN_FRACTION: f64 = 0.125;

/// One kept point of the TCP path (s in m, position in mm in the base frame).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TracePoint {
    /// Path distance of the sample (m).
    pub s: f64,
    /// Programmed TCP position at the sample (mm, base frame).
    pub p: [f64; 3],
    /// The sample stands at a waypoint; thinning prefers to keep such points.
    pub waypoint: bool,
}

fn dist(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// The TCP path, thinned to at most a fixed number of points.
#[derive(Debug, Clone)]
pub struct Trace {
    points: Vec<TracePoint>,
    last: Option<TracePoint>,
    /// Smallest distance between kept points (mm), waypoints aside.
    tol: f64,
    /// `tol` as made: thinning doubles `tol`, [`Trace::clear`] puts this back.
    first_tol: f64,
    cap: usize,
}

impl Trace {
    /// An empty trace keeping at most `cap` points (at least 4), first `tol_mm` apart; a
    /// tolerance that is not a positive number becomes 1 mm.
    pub fn new(cap: usize, tol_mm: f64) -> Self {
        let tol = if tol_mm.is_finite() && tol_mm > 0.0 {
            tol_mm
        } else {
            1.0
        };
        Trace {
            points: Vec::new(),
            last: None,
            tol,
            first_tol: tol,
            cap: cap.max(4),
        }
    }

    /// Empty the trace and restore its first tolerance, keeping its storage.
    pub fn clear(&mut self) {
        self.points.clear();
        self.last = None;
        self.tol = self.first_tol;
    }

    /// Adds the next point in path order; points with a non-finite coordinate are ignored.
    /// When the cap is exceeded the tolerance doubles and the trace is thinned.
    pub fn push(&mut self, pt: TracePoint) {
        if !pt.p.iter().all(|v| v.is_finite()) {
            return;
        }
        self.last = Some(pt);
        let keep = match self.points.last() {
            None => true,
            Some(prev) => pt.waypoint || dist(&prev.p, &pt.p) >= self.tol,
        };
        if keep {
            self.points.push(pt);
        }
        while self.points.len() > self.cap {
            self.tol *= 2.0;
            self.thin();
        }
    }

    fn thin(&mut self) {
        let tol = self.tol;
        let mut kept: Vec<TracePoint> = Vec::with_capacity(self.points.len());
        for pt in self.points.drain(..) {
            let keep = match kept.last() {
                None => true,
                Some(prev) => {
                    let d = dist(&prev.p, &pt.p);
                    if d >= tol {
                        true
                    } else if pt.waypoint && !prev.waypoint {
                        // A corner displaces a plain point just before it.
                        kept.pop();
                        true
                    } else {
                        pt.waypoint && d >= tol * PIN_FRACTION
                    }
                }
            };
            if keep {
                kept.push(pt);
            }
        }
        self.points = kept;
    }

    /// The kept points in path order, ending with the last point pushed.
    pub fn points(&self) -> Vec<TracePoint> {
        let mut v = self.points.clone();
        if let Some(l) = self.last {
            if v.last() != Some(&l) {
                v.push(l);
            }
        }
        v
    }

    /// Current tolerance (mm).
    pub fn tolerance(&self) -> f64 {
        self.tol
    }
}

/// Position along the trace at distance `s` (m), interpolated between kept points.
pub fn position_at(points: &[TracePoint], s: f64) -> Option<[f64; 3]> {
    let first = points.first()?;
    let i = points.partition_point(|p| p.s < s);
    if i == 0 {
        return Some(first.p);
    }
    if i >= points.len() {
        return points.last().map(|p| p.p);
    }
    let (a, b) = (&points[i - 1], &points[i]);
    let u = if b.s > a.s {
        (s - a.s) / (b.s - a.s)
    } else {
        1.0
    };
    Some([0, 1, 2].map(|k| a.p[k] + (b.p[k] - a.p[k]) * u))
}

/// A waypoint reached by the walk.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaypointAt {
    /// Index in the path file's waypoints.
    pub index: usize,
    /// Path distance (m) and time (s) at the waypoint.
    pub s: f64,
    /// Time from the path start at the waypoint (s).
    pub t: f64,
    /// TCP position (mm, base frame).
    pub p: [f64; 3],
}

/// A joint as the plots need it (display units: deg or mm).
#[derive(Debug, Clone)]
pub struct PlotJoint {
    /// The URDF joint name.
    pub name: String,
    /// Revolute and continuous joints are plotted in deg, prismatic ones in mm.
    pub kind: JointKind,
    /// Range; `None` for a continuous joint.
    pub range: Option<[f64; 2]>,
    /// Margin that raises `near_joint_limit`.
    pub near_margin: f64,
}

/// The plot collector: a [`SampleSink`] that keeps, in bounded memory, what the HTML page
/// draws. Series are stored in display units: joint positions in deg (mm for prismatic
/// joints), joint speeds as a fraction of the allowed speed (URDF velocity × the job's
/// `joint_speed_scale`), the singularity measure, the tool angular speed in deg/s (linear
/// segments only, as assessed), TCP positions in mm in the base frame.
#[derive(Debug, Clone)]
pub struct PlotData {
    joint_speed_scale: f64,
    joint_acceleration_scale: f64,
    near_margin_angle: f64,
    near_margin_length: f64,
    step: f64,
    bucket_count: usize,
    joints: Vec<PlotJoint>,
    /// Allowed speed per joint (rad/s or m/s).
    allowed: Joints,
    /// Allowed acceleration per joint (rad/s² or m/s²).
    allowed_acc: Joints,
    env: Option<Envelope>,
    /// The same series against time.
    env_t: Option<Envelope>,
    /// Time per sampling step at the programmed speed (s): the time envelope's first width.
    time_step: f64,
    trace: Trace,
    waypoints: Vec<WaypointAt>,
    length: f64,
    duration: f64,
    samples: u64,
    poses: PoseKeeper,
    /// The arm with its tool, cloned at the first sample: FK of the drawn poses.
    robot: Option<Robot>,
    /// What the cell model is built from, for drawing the bodies.
    tool_bodies: Vec<crate::cell::BodySpec>,
    cell: Option<std::sync::Arc<crate::cell::CellFile>>,
    base_T_work: nalgebra::Isometry3<f64>,
    clearance: f64,
}

impl PlotData {
    /// A collector for `job` with the page's bucket and trace sizes ([`BUCKETS`],
    /// [`TRACE_POINTS`]); the joints are taken from the robot at the first sample.
    pub fn new(job: &Job) -> Self {
        PlotData::with_sizes(job, BUCKETS, TRACE_POINTS)
    }

    /// As [`PlotData::new`] with other bucket and trace sizes (tests).
    pub fn with_sizes(job: &Job, buckets: usize, trace_points: usize) -> Self {
        // Half a sampling step: below a pixel on any plotted path, so short paths are
        // drawn from every sample.
        let trace = Trace::new(trace_points, job.sampling.step * 1e3 * 0.5);
        PlotData {
            joint_speed_scale: job.limits.joint_speed_scale,
            joint_acceleration_scale: job.limits.joint_acceleration_scale,
            near_margin_angle: job.limits.near_limit_margin_angle,
            near_margin_length: job.limits.near_limit_margin_length,
            step: job.sampling.step,
            bucket_count: buckets,
            joints: Vec::new(),
            allowed: Joints::default(),
            allowed_acc: Joints::default(),
            env: None,
            env_t: None,
            time_step: job.sampling.step / job.speed,
            trace,
            waypoints: Vec::new(),
            length: 0.0,
            duration: 0.0,
            samples: 0,
            poses: PoseKeeper::new(SLIDER_POSES),
            robot: None,
            tool_bodies: job.tool.geometry.clone(),
            cell: job.cell.clone(),
            base_T_work: job.base_T_work,
            clearance: job.limits.clearance,
        }
    }

    fn init(&mut self, robot: &Robot) {
        self.robot = Some(robot.clone());
        self.joints = robot
            .joints()
            .iter()
            .map(|j| PlotJoint {
                name: j.name.clone(),
                kind: j.kind,
                range: (j.lower.is_finite() && j.upper.is_finite()).then(|| {
                    [
                        joint_display(j.kind, j.lower),
                        joint_display(j.kind, j.upper),
                    ]
                }),
                near_margin: if j.kind.is_prismatic() {
                    self.near_margin_length * 1e3
                } else {
                    self.near_margin_angle.to_degrees()
                },
            })
            .collect();
        let mut allowed = Joints::zeros(robot.dof());
        let mut allowed_acc = Joints::zeros(robot.dof());
        for ((a, acc), j) in allowed
            .iter_mut()
            .zip(allowed_acc.iter_mut())
            .zip(robot.joints())
        {
            *a = j.velocity * self.joint_speed_scale;
            *acc = j.acceleration_limit(self.joint_acceleration_scale);
        }
        self.allowed = allowed;
        self.allowed_acc = allowed_acc;
        let series = 3 * robot.dof() + 3;
        self.env = Some(Envelope::new(series, self.bucket_count, self.step));
        self.env_t = Some(Envelope::new(series, self.bucket_count, self.time_step));
    }

    /// The arm's joints for the plots; empty before the first sample.
    pub fn joints(&self) -> &[PlotJoint] {
        &self.joints
    }
    /// Number of joints plotted; 0 before the first sample.
    pub fn dof(&self) -> usize {
        self.joints.len()
    }
    /// Series index of joint k's position.
    pub fn position_series(&self, k: usize) -> usize {
        k
    }
    /// Series index of joint k's speed fraction.
    pub fn speed_series(&self, k: usize) -> usize {
        self.dof() + k
    }
    /// Series index of the singularity measure.
    pub fn singularity_series(&self) -> usize {
        2 * self.dof()
    }
    /// Series index of the tool angular speed (deg/s; linear segments only).
    pub fn tool_speed_series(&self) -> usize {
        2 * self.dof() + 1
    }
    /// Series index of joint k's acceleration as a fraction of its allowed acceleration.
    pub fn acceleration_series(&self, k: usize) -> usize {
        2 * self.dof() + 2 + k
    }
    /// Series index of the commanded TCP speed (mm/s, straight-line segments).
    pub fn tcp_speed_series(&self) -> usize {
        3 * self.dof() + 2
    }
    /// The series against s; `None` before the first sample.
    pub fn envelope(&self) -> Option<&Envelope> {
        self.env.as_ref()
    }
    /// The series against t (s); `None` before the first sample.
    pub fn time_envelope(&self) -> Option<&Envelope> {
        self.env_t.as_ref()
    }
    /// The thinned TCP path.
    pub fn trace(&self) -> &Trace {
        &self.trace
    }
    /// Waypoints reached by the walk, in path order.
    pub fn waypoints(&self) -> &[WaypointAt] {
        &self.waypoints
    }
    /// Path length seen (m).
    pub fn length(&self) -> f64 {
        self.length
    }
    /// Time of the last sample seen (s).
    pub fn duration(&self) -> f64 {
        self.duration
    }
    /// Number of samples taken in (those with a finite path distance and time).
    pub fn samples(&self) -> u64 {
        self.samples
    }
    /// The poses kept for drawing the arm: first, last and the slider's.
    pub fn poses(&self) -> &PoseKeeper {
        &self.poses
    }
    /// The arm's geometry for drawing (its collision bodies, the tool's and the cell's);
    /// `None` before the first sample.
    pub fn arm_geometry(&self) -> Option<ArmGeometry> {
        let robot = self.robot.as_ref()?;
        Some(ArmGeometry::new(
            robot,
            &crate::cell::CellInputs {
                robot,
                tool: &self.tool_bodies,
                cell: self.cell.as_deref(),
                base_T_work: self.base_T_work,
                clearance: self.clearance,
            },
        ))
    }
    /// Near-limit margins of the job: revolute (deg), prismatic (mm).
    pub fn near_margins(&self) -> (f64, f64) {
        (
            self.near_margin_angle.to_degrees(),
            self.near_margin_length * 1e3,
        )
    }
}

impl SampleSink for PlotData {
    /// Everything taken from samples goes back to its state in [`PlotData::new`]; the
    /// settings read from the job stay.
    fn restart(&mut self) {
        self.joints.clear();
        self.allowed = Joints::default();
        self.allowed_acc = Joints::default();
        self.env = None;
        self.env_t = None;
        self.trace.clear();
        self.waypoints.clear();
        self.length = 0.0;
        self.duration = 0.0;
        self.samples = 0;
        self.poses = PoseKeeper::new(SLIDER_POSES);
        self.robot = None;
    }
    fn begin(&mut self, _robot: &Robot, estimated_samples: u64) {
        self.poses.expect(estimated_samples);
    }

    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if self.joints.is_empty() && robot.dof() > 0 {
            self.init(robot);
        }
        if !rec.s.is_finite() || !rec.t.is_finite() {
            return;
        }
        self.samples += 1;
        self.poses.push(rec);
        self.length = self.length.max(rec.s);
        self.duration = self.duration.max(rec.t);
        let p = rec.target.translation.vector * 1e3;
        let p = [p.x, p.y, p.z];
        if let Some(w) = rec.waypoint {
            self.waypoints.push(WaypointAt {
                index: w,
                s: rec.s,
                t: rec.t,
                p,
            });
        }
        self.trace.push(TracePoint {
            s: rec.s,
            p,
            waypoint: rec.waypoint.is_some(),
        });
        if let Some(env) = self.env.as_mut() {
            add_sample(env, rec.s, robot, [&self.allowed, &self.allowed_acc], rec);
        }
        if let Some(env) = self.env_t.as_mut() {
            add_sample(env, rec.t, robot, [&self.allowed, &self.allowed_acc], rec);
        }
    }
}

/// Add one sample's series at coordinate `x` (s or t) to an envelope; `allowed` holds each
/// joint's allowed speed and acceleration.
fn add_sample(
    env: &mut Envelope,
    x: f64,
    robot: &Robot,
    [allowed, allowed_acc]: [&Joints; 2],
    rec: &SampleRecord,
) {
    let n = allowed.len();
    let slot = env.slot(x);
    if rec.reach == Reach::Unreachable {
        // The joints are the last reached ones: nothing to plot but the gap.
        env.mark_unreachable(slot);
        return;
    }
    for (k, j) in robot.joints().iter().enumerate().take(n) {
        env.add(slot, k, x, joint_display(j.kind, rec.joints[k]));
        if allowed[k] > 0.0 {
            env.add(slot, n + k, x, rec.joint_speed[k].abs() / allowed[k]);
        }
        if allowed_acc.get(k).is_some_and(|a| *a > 0.0) {
            let a = rec.joint_acceleration[k].abs() / allowed_acc[k];
            env.add(slot, 2 * n + 2 + k, x, a);
        }
    }
    env.add(slot, 2 * n, x, rec.singularity);
    if rec.motion == Motion::Linear {
        env.add(slot, 2 * n + 1, x, rec.tool_angular_speed.to_degrees());
        env.add(slot, 3 * n + 2, x, rec.tcp_speed * 1e3);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_restarted_collector_is_a_new_one() {
        // source: common practice (a restart forgets every sample: the collector fed one
        // path, restarted and fed another equals one fed only the second, field by field)
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let run = |rel: &str, data: &mut PlotData| {
            let job = crate::job::load(&dir.join(rel), &Default::default()).unwrap();
            let robot = crate::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
            let options = crate::check::CheckOptions::default();
            crate::check::check(&job, &robot, &options, &mut [data]).unwrap();
            job
        };
        let job = crate::job::load(&dir.join("paths/rib_weld.yaml"), &Default::default()).unwrap();
        let mut once = PlotData::new(&job);
        let mut twice = once.clone();
        run("paths/rib_weld.yaml", &mut once);
        run("paths/panel_raster.yaml", &mut twice);
        assert_ne!(format!("{twice:?}"), format!("{once:?}"));
        twice.restart();
        run("paths/rib_weld.yaml", &mut twice);
        assert_eq!(format!("{twice:?}"), format!("{once:?}"));
    }

    #[test]
    fn trace_is_bounded_and_keeps_corners() {
        // source: common practice (radial-distance thinning; corners of a raster sit at
        // waypoints, which thinning prefers)
        let mut t = Trace::new(500, 0.05);
        // A raster: 100 lines of 100 mm, 10 mm apart, sampled every 0.1 mm.
        let mut s = 0.0;
        for line in 0..100 {
            let y = line as f64 * 10.0;
            for i in 0..=1000 {
                let x = if line % 2 == 0 {
                    i as f64 * 0.1
                } else {
                    100.0 - i as f64 * 0.1
                };
                t.push(TracePoint {
                    s,
                    p: [x, y, 0.0],
                    waypoint: i == 0 || i == 1000,
                });
                s += 1e-4;
            }
        }
        let pts = t.points();
        assert!(pts.len() <= 501, "{}", pts.len());
        assert!(pts.len() >= 200, "{}", pts.len());
        // Every line end (a corner) is still there.
        for line in 0..100 {
            let y = line as f64 * 10.0;
            for x in [0.0, 100.0] {
                assert!(
                    pts.iter().any(|p| p.p == [x, y, 0.0]),
                    "corner ({x}, {y}) lost; tolerance {}",
                    t.tolerance()
                );
            }
        }
        let mid = position_at(&pts, pts[10].s).unwrap();
        assert_eq!(mid, pts[10].p);
        // Cleared (a walk started over), the trace is as made: empty, first tolerance.
        // source: common practice
        assert!(t.tolerance() > 0.05);
        t.clear();
        assert!(t.points().is_empty());
        assert_eq!(t.tolerance(), 0.05);
    }
}
