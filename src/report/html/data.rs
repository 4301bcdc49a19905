//! What the page plots, collected while the path is walked, in bounded memory.
//!
//! Series against path distance go into an [`Envelope`]: a fixed number of buckets over s,
//! each keeping the smallest and the largest value (and where they occur). The length of the
//! path is not known while it is walked, so the bucket width starts at the sampling step and
//! doubles when the buckets run out, merging neighbouring pairs; extremes survive every merge.
//! The TCP path for the top and side views goes into a [`Trace`]: the points at least a
//! tolerance apart plus the waypoints (linear segments are straight between waypoints, so
//! this keeps their corners); when the trace fills up, the tolerance doubles and the trace is
//! thinned. Memory is independent of the number of samples.

use crate::job::{Job, Motion};
use crate::report::joint_display;
use crate::robot::{JointKind, Robot};
use crate::solve::{Reach, SampleRecord, SampleSink};

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

/// The extremes of one series within one bucket (display units; s in m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bucket {
    pub lo: f64,
    pub s_lo: f64,
    pub hi: f64,
    pub s_hi: f64,
}

impl Bucket {
    const EMPTY: Bucket = Bucket {
        lo: f64::INFINITY,
        s_lo: 0.0,
        hi: f64::NEG_INFINITY,
        s_hi: 0.0,
    };

    pub fn is_empty(&self) -> bool {
        self.lo > self.hi
    }

    fn add(&mut self, s: f64, v: f64) {
        if v < self.lo {
            self.lo = v;
            self.s_lo = s;
        }
        if v > self.hi {
            self.hi = v;
            self.s_hi = s;
        }
    }

    fn merge(a: Bucket, b: Bucket) -> Bucket {
        let mut m = a;
        if b.lo < m.lo {
            m.lo = b.lo;
            m.s_lo = b.s_lo;
        }
        if b.hi > m.hi {
            m.hi = b.hi;
            m.s_hi = b.s_hi;
        }
        m
    }
}

/// Min/max decimation of several series sharing one grid over path distance s.
#[derive(Debug, Clone)]
pub struct Envelope {
    series: usize,
    cap: usize,
    /// Bucket width (m); bucket i covers [i·width, (i+1)·width).
    width: f64,
    /// Series-major: bucket i of series k is `buckets[k * cap + i]`.
    buckets: Vec<Bucket>,
    /// Per bucket: an unreachable sample fell into it.
    unreachable: Vec<bool>,
    /// One past the highest bucket used.
    used: usize,
}

impl Envelope {
    /// `cap` buckets (rounded up to an even number, at least 2) of `width` m to start with.
    pub fn new(series: usize, cap: usize, width: f64) -> Self {
        let cap = (cap.max(2) + 1) & !1;
        let width = if width.is_finite() && width > 0.0 {
            width
        } else {
            1e-3
        };
        Envelope {
            series,
            cap,
            width,
            buckets: vec![Bucket::EMPTY; series * cap],
            unreachable: vec![false; cap],
            used: 0,
        }
    }

    /// The bucket for distance `s` (m, ≥ 0), widening the buckets until it fits.
    pub fn slot(&mut self, s: f64) -> usize {
        let s = s.max(0.0);
        loop {
            let i = (s / self.width).floor();
            if i < self.cap as f64 {
                let i = i as usize;
                self.used = self.used.max(i + 1);
                return i;
            }
            self.merge_pairs();
        }
    }

    /// Double the bucket width: bucket i becomes buckets 2i and 2i+1 merged.
    fn merge_pairs(&mut self) {
        let half = self.cap / 2;
        for k in 0..self.series {
            let b = &mut self.buckets[k * self.cap..(k + 1) * self.cap];
            for i in 0..half {
                b[i] = Bucket::merge(b[2 * i], b[2 * i + 1]);
            }
            b[half..].fill(Bucket::EMPTY);
        }
        for i in 0..half {
            self.unreachable[i] = self.unreachable[2 * i] || self.unreachable[2 * i + 1];
        }
        self.unreachable[half..].fill(false);
        self.used = self.used.div_ceil(2);
        self.width *= 2.0;
    }

    /// Add value `v` of series `k` at distance `s` into bucket `slot` (from [`Envelope::slot`]).
    /// Non-finite values are left out.
    pub fn add(&mut self, slot: usize, k: usize, s: f64, v: f64) {
        if v.is_finite() && k < self.series {
            self.buckets[k * self.cap + slot].add(s, v);
        }
    }

    pub fn mark_unreachable(&mut self, slot: usize) {
        self.unreachable[slot] = true;
    }

    /// Bucket width (m).
    pub fn width(&self) -> f64 {
        self.width
    }

    /// Buckets in use (≤ the cap).
    pub fn used(&self) -> usize {
        self.used
    }

    /// The buckets in use of series `k` (none for a series that does not exist).
    pub fn buckets(&self, k: usize) -> &[Bucket] {
        if k >= self.series {
            return &[];
        }
        &self.buckets[k * self.cap..k * self.cap + self.used]
    }

    /// The series as polylines in s order (s in m): each bucket gives its extremes in the
    /// order they occurred; an empty bucket breaks the line.
    pub fn runs(&self, k: usize) -> Vec<Vec<(f64, f64)>> {
        let mut runs = Vec::new();
        let mut cur: Vec<(f64, f64)> = Vec::new();
        for b in self.buckets(k) {
            if b.is_empty() {
                if !cur.is_empty() {
                    runs.push(std::mem::take(&mut cur));
                }
                continue;
            }
            let (a, z) = if b.s_lo <= b.s_hi {
                ((b.s_lo, b.lo), (b.s_hi, b.hi))
            } else {
                ((b.s_hi, b.hi), (b.s_lo, b.lo))
            };
            cur.push(a);
            if z != a {
                cur.push(z);
            }
        }
        if !cur.is_empty() {
            runs.push(cur);
        }
        runs
    }

    /// Stretches [s0, s1] (m) of buckets holding unreachable samples, neighbours joined.
    pub fn unreachable_stretches(&self) -> Vec<[f64; 2]> {
        let mut out: Vec<[f64; 2]> = Vec::new();
        for (i, &u) in self.unreachable[..self.used].iter().enumerate() {
            if !u {
                continue;
            }
            let (a, b) = (i as f64 * self.width, (i + 1) as f64 * self.width);
            match out.last_mut() {
                Some(last) if (last[1] - a).abs() < 1e-12 => last[1] = b,
                _ => out.push([a, b]),
            }
        }
        out
    }
}

/// One kept point of the TCP path (s in m, position in mm in the base frame).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TracePoint {
    pub s: f64,
    pub p: [f64; 3],
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
    cap: usize,
}

impl Trace {
    pub fn new(cap: usize, tol_mm: f64) -> Self {
        Trace {
            points: Vec::new(),
            last: None,
            tol: if tol_mm.is_finite() && tol_mm > 0.0 {
                tol_mm
            } else {
                1.0
            },
            cap: cap.max(4),
        }
    }

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

/// A joint as the plots need it (display units: deg or mm).
#[derive(Debug, Clone)]
pub struct PlotJoint {
    pub name: String,
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
    near_margin_angle: f64,
    near_margin_length: f64,
    step: f64,
    bucket_count: usize,
    joints: Vec<PlotJoint>,
    /// Allowed speed per joint (rad/s or m/s).
    allowed: Vec<f64>,
    env: Option<Envelope>,
    trace: Trace,
    /// (waypoint index, s in m, TCP position in mm).
    waypoints: Vec<(usize, f64, [f64; 3])>,
    length: f64,
    samples: u64,
}

impl PlotData {
    pub fn new(job: &Job) -> Self {
        PlotData::with_sizes(job, BUCKETS, TRACE_POINTS)
    }

    /// As [`PlotData::new`] with other bucket and trace sizes (tests).
    pub fn with_sizes(job: &Job, buckets: usize, trace_points: usize) -> Self {
        PlotData {
            joint_speed_scale: job.limits.joint_speed_scale,
            near_margin_angle: job.limits.near_limit_margin_angle,
            near_margin_length: job.limits.near_limit_margin_length,
            step: job.sampling.step,
            bucket_count: buckets,
            joints: Vec::new(),
            allowed: Vec::new(),
            env: None,
            // Half a sampling step: below a pixel on any plotted path, so short paths are
            // drawn from every sample.
            trace: Trace::new(trace_points, job.sampling.step * 1e3 * 0.5),
            waypoints: Vec::new(),
            length: 0.0,
            samples: 0,
        }
    }

    fn init(&mut self, robot: &Robot) {
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
        self.allowed = robot
            .joints()
            .iter()
            .map(|j| j.velocity * self.joint_speed_scale)
            .collect();
        self.env = Some(Envelope::new(
            2 * robot.dof() + 2,
            self.bucket_count,
            self.step,
        ));
    }

    pub fn joints(&self) -> &[PlotJoint] {
        &self.joints
    }
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
    pub fn singularity_series(&self) -> usize {
        2 * self.dof()
    }
    pub fn tool_speed_series(&self) -> usize {
        2 * self.dof() + 1
    }
    /// The series against s; `None` before the first sample.
    pub fn envelope(&self) -> Option<&Envelope> {
        self.env.as_ref()
    }
    pub fn trace(&self) -> &Trace {
        &self.trace
    }
    /// Waypoints reached by the walk: (index, s in m, TCP position in mm).
    pub fn waypoints(&self) -> &[(usize, f64, [f64; 3])] {
        &self.waypoints
    }
    /// Path length seen (m).
    pub fn length(&self) -> f64 {
        self.length
    }
    pub fn samples(&self) -> u64 {
        self.samples
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
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if self.joints.is_empty() && robot.dof() > 0 {
            self.init(robot);
        }
        if !rec.s.is_finite() {
            return;
        }
        self.samples += 1;
        self.length = self.length.max(rec.s);
        let p = rec.target.translation.vector * 1e3;
        let p = [p.x, p.y, p.z];
        if let Some(w) = rec.waypoint {
            self.waypoints.push((w, rec.s, p));
        }
        self.trace.push(TracePoint {
            s: rec.s,
            p,
            waypoint: rec.waypoint.is_some(),
        });
        let n = self.joints.len();
        let Some(env) = self.env.as_mut() else {
            return;
        };
        let slot = env.slot(rec.s);
        if rec.reach == Reach::Unreachable {
            // The joints are the last reached ones: nothing to plot but the gap.
            env.mark_unreachable(slot);
            return;
        }
        for (k, j) in robot.joints().iter().enumerate().take(n) {
            env.add(slot, k, rec.s, joint_display(j.kind, rec.joints[k]));
            let allowed = self.allowed[k];
            if allowed > 0.0 {
                env.add(slot, n + k, rec.s, rec.joint_speed[k].abs() / allowed);
            }
        }
        env.add(slot, 2 * n, rec.s, rec.singularity);
        if rec.motion == Motion::Linear {
            env.add(slot, 2 * n + 1, rec.s, rec.tool_angular_speed.to_degrees());
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_spike_survives_any_number_of_merges() {
        // source: common practice (min/max decimation keeps every extreme of the raw series)
        let mut e = Envelope::new(1, 100, 1e-4);
        let n = 1_000_000;
        for i in 0..n {
            let s = i as f64 * 1e-4;
            let v = if i == 654_321 {
                50.0
            } else if i == 123_457 {
                -7.0
            } else {
                (i as f64 * 1e-3).sin()
            };
            let slot = e.slot(s);
            e.add(slot, 0, s, v);
        }
        assert!(e.used() <= 100, "{} buckets", e.used());
        assert!(e.used() >= 50);
        let b = e.buckets(0);
        let hi = b.iter().map(|b| b.hi).fold(f64::MIN, f64::max);
        let lo = b.iter().map(|b| b.lo).fold(f64::MAX, f64::min);
        assert_eq!(hi, 50.0);
        assert_eq!(lo, -7.0);
        // The spike keeps its place: 654,321 × 0.1 mm.
        let at = b.iter().find(|b| b.hi == 50.0).unwrap().s_hi;
        assert!((at - 65.4321).abs() < 1e-9, "{at}");
        // Drawn runs carry both extremes, in s order.
        let runs = e.runs(0);
        assert_eq!(runs.len(), 1);
        assert!(runs[0].windows(2).all(|w| w[0].0 <= w[1].0));
        assert!(runs[0].iter().any(|p| p.1 == 50.0));
    }

    #[test]
    fn buckets_stay_bounded_and_gaps_break_lines() {
        // source: common practice (an empty bucket means no plotted sample: the line breaks)
        let mut e = Envelope::new(2, 11, 1.0);
        assert_eq!(e.cap, 12, "rounded up to an even count");
        for i in 0..40 {
            let s = i as f64;
            let slot = e.slot(s);
            if (10..20).contains(&i) {
                e.mark_unreachable(slot);
            } else {
                e.add(slot, 1, s, 1.0);
            }
        }
        // 40 m over at most 12 buckets: width 4 m (1 → 2 → 4), 10 buckets in use.
        assert_eq!(e.width(), 4.0);
        assert_eq!(e.used(), 10);
        assert!(e.runs(0).is_empty(), "series 0 got no values");
        assert_eq!(e.runs(1).len(), 2, "{:?}", e.runs(1));
        assert_eq!(e.unreachable_stretches(), vec![[8.0, 20.0]]);
    }

    #[test]
    fn non_finite_values_are_left_out() {
        // source: common practice (NaN would poison min/max comparisons)
        let mut e = Envelope::new(1, 4, 1.0);
        let slot = e.slot(0.5);
        e.add(slot, 0, 0.5, f64::NAN);
        e.add(slot, 0, 0.5, f64::INFINITY);
        assert!(e.buckets(0)[0].is_empty());
        e.add(slot, 0, 0.5, 2.0);
        assert_eq!(e.buckets(0)[0].lo, 2.0);
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
    }
}
