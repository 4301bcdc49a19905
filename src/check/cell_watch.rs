//! The cell watch: a sample sink that measures the cell model at every sample (and the motion
//! from the previous one) and turns the contacts and near passes into located `collision`
//! and `clearance` findings. Like the assessor, flagged samples of one body pair and kind
//! within one segment merge into one run; the run keeps its worst distance.

use crate::assess::{Finding, Kind, Quantity, Run, RunBook, Worst};
use crate::cell::{CellModel, CellProbe};
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::Robot;
use crate::solve::{Reach, SampleRecord, SampleSink};

/// The worst approach of a run: the smallest distance (m), and whether it was found between
/// two samples.
#[derive(Debug, Clone, Copy)]
struct Approach {
    distance: f64,
    between: bool,
}

impl Worst for Approach {
    fn badness(&self) -> f64 {
        -self.distance
    }
}

/// The runs of the cell watch: keyed by kind and body pair.
type Runs = RunBook<(Kind, usize), Approach>;

/// What the cell check covered, for the report. SI.
#[derive(Debug, Clone)]
pub struct CellSummary {
    /// Bodies in the model (robot links with geometry, tool bodies, cell bodies).
    pub bodies: usize,
    /// Body pairs tested.
    pub pairs: usize,
    /// Clearance limit (m).
    pub clearance: f64,
    /// The nearest approach of any tested pair at a sample, `None` without pairs.
    pub nearest: Option<Nearest>,
    /// Configurations measured: samples plus the midpoints of the between-samples rule.
    pub configurations: u64,
    /// What the model leaves out (links without geometry, pairs dropped as never meeting).
    pub notes: Vec<String>,
    /// The nearest distance of any tested pair at each sample, against path distance and
    /// against time, in bounded memory.
    pub profile: ClearanceProfile,
}

/// Slices of each [`ClearanceProfile`] series. The page's plots are about 1,100 px wide;
/// after a merge between half and all of these are in use, one slice per one to two pixels.
pub const PROFILE_SLICES: usize = 1000;

/// The smallest value per slice of x (path distance or time), the slices widening as x
/// grows: when x passes the last slice, neighbouring slices merge and the width doubles.
/// Memory is fixed at construction; [`MinSeries::add`] never allocates.
#[derive(Debug, Clone)]
pub struct MinSeries {
    width: f64,
    /// Per slice: the x of the smallest value and that value.
    slots: Vec<Option<(f64, f64)>>,
}

impl MinSeries {
    /// `slices` slices (at least 2) of first width `width` (replaced by 1 when not a positive
    /// number).
    pub fn new(slices: usize, width: f64) -> Self {
        MinSeries {
            width: if width.is_finite() && width > 0.0 {
                width
            } else {
                1.0
            },
            slots: vec![None; slices.max(2)],
        }
    }

    /// Adds value `v` at `x` (x ≥ 0 in path order; non-finite inputs are ignored).
    pub fn add(&mut self, x: f64, v: f64) {
        if !x.is_finite() || !v.is_finite() || x < 0.0 {
            return;
        }
        let n = self.slots.len();
        while x / self.width >= n as f64 {
            for i in 0..n / 2 {
                self.slots[i] = smaller(self.slots[2 * i], self.slots[2 * i + 1]);
            }
            if n % 2 == 1 {
                self.slots[n / 2] = self.slots[n - 1];
            }
            for slot in &mut self.slots[n.div_ceil(2)..] {
                *slot = None;
            }
            self.width *= 2.0;
        }
        let i = ((x / self.width) as usize).min(n - 1);
        self.slots[i] = smaller(self.slots[i], Some((x, v)));
    }

    /// Runs of consecutive filled slices as (x, smallest value) points; an empty slice (no
    /// sample measured there, as in an unreachable stretch) breaks the line.
    pub fn runs(&self) -> Vec<Vec<(f64, f64)>> {
        let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
        let mut open = false;
        for slot in &self.slots {
            match slot {
                Some(p) if open => runs.last_mut().into_iter().for_each(|r| r.push(*p)),
                Some(p) => {
                    runs.push(vec![*p]);
                    open = true;
                }
                None => open = false,
            }
        }
        runs
    }

    /// Current slice width (x unit).
    pub fn width(&self) -> f64 {
        self.width
    }
}

fn smaller(a: Option<(f64, f64)>, b: Option<(f64, f64)>) -> Option<(f64, f64)> {
    match (a, b) {
        (Some(a), Some(b)) => Some(if b.1 < a.1 { b } else { a }),
        (a, None) => a,
        (None, b) => b,
    }
}

/// The nearest distance (m) of any tested pair at each measured sample: against path
/// distance (m) and against time (s).
#[derive(Debug, Clone)]
pub struct ClearanceProfile {
    /// Against path distance s (m).
    pub by_s: MinSeries,
    /// Against time t (s).
    pub by_t: MinSeries,
}

/// The nearest approach of two bodies over the path.
#[derive(Debug, Clone)]
pub struct Nearest {
    /// Distance (m); negative is a penetration depth. For pairs far apart this is the
    /// distance of their bounding spheres, a lower bound.
    pub distance: f64,
    /// The two bodies.
    pub bodies: [String; 2],
    /// Index of the sample where it happens.
    pub sample: usize,
}

/// Measures the cell model along the walk; see the module doc.
pub struct CellWatch<'a> {
    model: &'a CellModel,
    job: &'a Job,
    plan: &'a Plan,
    probe: CellProbe,
    runs: Runs,
    findings: Vec<Finding>,
    process: bool,
    /// Smallest distance (m) of any tested pair over the path, its pair and sample.
    nearest: Option<(f64, usize, usize)>,
    profile: ClearanceProfile,
}

impl<'a> CellWatch<'a> {
    /// A watch over `model` for the walk of `plan` (allocates its scratch once).
    pub fn new(model: &'a CellModel, job: &'a Job, plan: &'a Plan) -> Self {
        CellWatch {
            model,
            job,
            plan,
            probe: CellProbe::new(model),
            runs: RunBook::with_capacity(2 * model.pairs().len() + 2),
            findings: Vec::new(),
            process: false,
            nearest: None,
            profile: ClearanceProfile {
                by_s: MinSeries::new(PROFILE_SLICES, job.sampling.step),
                by_t: MinSeries::new(PROFILE_SLICES, job.sampling.step / job.speed),
            },
        }
    }

    fn raise(&mut self, rec: &SampleRecord, pair: usize, distance: f64, between: bool) {
        let kind = if distance <= 0.0 {
            Kind::Collision
        } else {
            Kind::Clearance
        };
        let approach = Approach { distance, between };
        self.runs.raise(rec, (kind, pair), approach);
    }

    fn close_unseen(&mut self) {
        let (model, job, findings) = (self.model, self.job, &mut self.findings);
        self.runs
            .close_unseen(|run| findings.push(finding(model, job, &run)));
    }

    /// Closes the open runs and returns the findings (unsorted) and the summary.
    pub fn finish(mut self) -> (Vec<Finding>, CellSummary) {
        let (model, job, findings) = (self.model, self.job, &mut self.findings);
        self.runs
            .close_all(|run| findings.push(finding(model, job, &run)));
        let summary = CellSummary {
            bodies: model.bodies().len(),
            pairs: model.pairs().len(),
            clearance: model.clearance(),
            nearest: self.nearest.map(|(distance, pair, sample)| {
                let (a, b) = model.pair_names(pair);
                Nearest {
                    distance,
                    bodies: [a.to_string(), b.to_string()],
                    sample,
                }
            }),
            configurations: self.probe.evaluations(),
            notes: model.notes().to_vec(),
            profile: self.profile,
        };
        (self.findings, summary)
    }
}

impl SampleSink for CellWatch<'_> {
    /// Rebuilt as [`CellWatch::new`] makes it (the probe's evaluation count too).
    fn restart(&mut self) {
        *self = CellWatch::new(self.model, self.job, self.plan);
    }
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        let (model, job, findings) = (self.model, self.job, &mut self.findings);
        if self
            .runs
            .enter(rec.segment, |run| findings.push(finding(model, job, &run)))
        {
            self.process = self.plan.segment(rec.segment).is_some_and(|s| s.process);
        }
        if rec.reach == Reach::Unreachable {
            // The joints are the last reached ones, not a pose of the path: nothing to
            // measure, and no motion to test into the next reached sample.
            self.probe.restart();
            self.close_unseen();
            return;
        }
        if rec.jump.is_some() {
            // Across a jump the arm does not move along the straight joint interpolation.
            self.probe.restart();
        }
        let dof = self.model.chain.dof();
        let worst = self
            .probe
            .sample(self.model, &rec.joints[..dof], self.process);
        let mut sample_nearest = f64::INFINITY;
        for p in 0..self.model.pairs().len() {
            let d = self.probe.distance(p);
            sample_nearest = sample_nearest.min(d);
            if self.nearest.is_none_or(|(n, _, _)| d < n) {
                self.nearest = Some((d, p, rec.index));
            }
            if d < self.model.clearance() && !self.model.pairs()[p].allowed_at(self.process, d) {
                self.raise(rec, p, d, false);
            }
        }
        self.profile.by_s.add(rec.s, sample_nearest);
        self.profile.by_t.add(rec.t, sample_nearest);
        if let Some(w) = worst.filter(|w| w.between) {
            self.raise(rec, w.pair, w.distance, true);
        }
        self.close_unseen();
    }
}

/// Smallest collision depth (m) the message states as a number: half the last digit shown
/// (0.01 mm).
const SHOWN_DEPTH: f64 = 0.005e-3;

/// The finding of a closed run of `model`'s pair, with its message.
fn finding(model: &CellModel, job: &Job, run: &Run<(Kind, usize), Approach>) -> Finding {
    let ((kind, pair), near) = (run.key, run.worst);
    let (a, b) = model.pair_names(pair);
    let from = job.waypoint_name(run.span.segment);
    let to = job.waypoint_name(run.span.segment + 1);
    let mm = |v: f64| format!("{:.2} mm", v * 1e3);
    let found = if near.between {
        " (found between two samples by the motion bound)"
    } else {
        ""
    };
    // A depth that prints as 0.00 mm is a touch, or a body crossing an STL surface, whose
    // crossing depth reads 0 (see `cell::surface`): "up to 0.00 mm deep" would read as no
    // contact at all.
    let how = if -near.distance < SHOWN_DEPTH {
        " (they touch, or one crosses the other's mesh surface, where no depth is measured)"
            .to_string()
    } else {
        format!(", up to {} deep", mm(-near.distance))
    };
    let message = match kind {
        Kind::Collision => format!(
            "{a} and {b} collide between {from} and {to}{how}{found}: move the part or \
             fixture, change the tool orientation or the approach, or list the pair under \
             allowed_contacts in the cell file if the contact is intended"
        ),
        _ => format!(
            "{a} comes within {} of {b} between {from} and {to} (clearance {}){found}: \
             make room, or lower limits.clearance if this is intended",
            mm(near.distance),
            mm(model.clearance())
        ),
    };
    Finding {
        bodies: Some([a.to_string(), b.to_string()]),
        value: Some(near.distance),
        limit: Some(if kind == Kind::Collision {
            0.0
        } else {
            model.clearance()
        }),
        ..run.span.finding(job, kind, Quantity::Length, message)
    }
}

#[cfg(test)]
mod tests {
    use super::MinSeries;

    #[test]
    fn min_series_keeps_each_slice_minimum_in_fixed_memory() {
        // source: common practice (min-per-bucket decimation); values chosen by hand
        let mut m = MinSeries::new(4, 1.0);
        for (x, v) in [(0.5, 3.0), (0.7, 2.0), (1.5, 5.0), (3.2, 1.0)] {
            m.add(x, v);
        }
        assert_eq!(
            m.runs(),
            vec![vec![(0.7, 2.0), (1.5, 5.0)], vec![(3.2, 1.0)]]
        );
        // x = 6 is past 4 slices of 1: slices merge pairwise into width 2.
        m.add(6.0, 4.0);
        assert_eq!(m.width(), 2.0);
        assert_eq!(
            m.runs(),
            vec![vec![(0.7, 2.0), (3.2, 1.0)], vec![(6.0, 4.0)]]
        );
        // Far beyond: widths double until x fits; the overall minimum survives.
        m.add(1000.0, 7.0);
        assert_eq!(m.width(), 256.0);
        assert_eq!(m.runs(), vec![vec![(3.2, 1.0)], vec![(1000.0, 7.0)]]);
    }
}
