//! The cell watch: a sample sink that measures the cell model at every sample (and the motion
//! from the previous one) and turns the contacts and near passes into located `collision`
//! and `clearance` findings. Like the assessor, flagged samples of one body pair and kind
//! within one segment merge into one run; the run keeps its worst distance.

use crate::assess::{Finding, Kind, Quantity};
use crate::cell::{CellModel, CellProbe};
use crate::job::Job;
use crate::plan::Plan;
use crate::robot::Robot;
use crate::solve::{Reach, SampleRecord, SampleSink};

/// An open run of one pair and kind.
#[derive(Debug, Clone, Copy)]
struct Run {
    kind: Kind,
    pair: usize,
    segment: usize,
    first: usize,
    last: usize,
    s: [f64; 2],
    t: [f64; 2],
    /// Smallest distance (m) over the run, and where.
    distance: f64,
    worst_sample: usize,
    /// The worst value was found between two samples.
    between: bool,
    seen: bool,
}

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
    open: Vec<Run>,
    findings: Vec<Finding>,
    segment: Option<usize>,
    process: bool,
    /// Smallest distance (m) of any tested pair over the path, its pair and sample.
    nearest: Option<(f64, usize, usize)>,
}

impl<'a> CellWatch<'a> {
    /// A watch over `model` for the walk of `plan` (allocates its scratch once).
    pub fn new(model: &'a CellModel, job: &'a Job, plan: &'a Plan) -> Self {
        CellWatch {
            model,
            job,
            plan,
            probe: CellProbe::new(model),
            open: Vec::with_capacity(2 * model.pairs().len() + 2),
            findings: Vec::new(),
            segment: None,
            process: false,
            nearest: None,
        }
    }

    fn raise(&mut self, rec: &SampleRecord, pair: usize, distance: f64, between: bool) {
        let kind = if distance <= 0.0 {
            Kind::Collision
        } else {
            Kind::Clearance
        };
        if let Some(run) = self
            .open
            .iter_mut()
            .find(|r| r.kind == kind && r.pair == pair)
        {
            run.last = rec.index;
            run.s[1] = rec.s;
            run.t[1] = rec.t;
            run.seen = true;
            if distance < run.distance {
                run.distance = distance;
                run.worst_sample = rec.index;
                run.between = between;
            }
            return;
        }
        self.open.push(Run {
            kind,
            pair,
            segment: rec.segment,
            first: rec.index,
            last: rec.index,
            s: [rec.s, rec.s],
            t: [rec.t, rec.t],
            distance,
            worst_sample: rec.index,
            between,
            seen: true,
        });
    }

    fn close_unseen(&mut self) {
        let mut i = 0;
        while i < self.open.len() {
            if self.open[i].seen {
                self.open[i].seen = false;
                i += 1;
            } else {
                let run = self.open.swap_remove(i);
                self.close(run);
            }
        }
    }

    fn close(&mut self, run: Run) {
        let (a, b) = self.model.pair_names(run.pair);
        let from = self.job.waypoint_name(run.segment);
        let to = self.job.waypoint_name(run.segment + 1);
        let mm = |v: f64| format!("{:.2} mm", v * 1e3);
        let found = if run.between {
            " (found between two samples by the motion bound)"
        } else {
            ""
        };
        let message = match run.kind {
            Kind::Collision => format!(
                "{a} and {b} collide between {from} and {to}, up to {} deep{found}: move the part or \
                 fixture, change the tool orientation or the approach, or list the pair under \
                 allowed_contacts in the cell file if the contact is intended",
                mm(-run.distance)
            ),
            _ => format!(
                "{a} comes within {} of {b} between {from} and {to} (clearance {}){found}: \
                 make room, or lower limits.clearance if this is intended",
                mm(run.distance),
                mm(self.model.clearance())
            ),
        };
        self.findings.push(Finding {
            kind: run.kind,
            segment: Some(run.segment),
            from: Some(from),
            to: Some(to),
            samples: Some([run.first, run.last]),
            s: Some(run.s),
            t: Some(run.t),
            joint: None,
            bodies: Some([a.to_string(), b.to_string()]),
            value: Some(run.distance),
            limit: Some(if run.kind == Kind::Collision {
                0.0
            } else {
                self.model.clearance()
            }),
            quantity: Quantity::Length,
            deltas: None,
            worst_sample: Some(run.worst_sample),
            message,
        });
    }

    /// Closes the open runs and returns the findings (unsorted) and the summary.
    pub fn finish(mut self) -> (Vec<Finding>, CellSummary) {
        for run in std::mem::take(&mut self.open) {
            self.close(run);
        }
        let model = self.model;
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
        };
        (self.findings, summary)
    }
}

impl SampleSink for CellWatch<'_> {
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        if self.segment != Some(rec.segment) {
            let mut runs = std::mem::take(&mut self.open);
            for run in runs.drain(..) {
                self.close(run);
            }
            self.open = runs;
            self.segment = Some(rec.segment);
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
        for p in 0..self.model.pairs().len() {
            let d = self.probe.distance(p);
            if self.nearest.is_none_or(|(n, _, _)| d < n) {
                self.nearest = Some((d, p, rec.index));
            }
            if d < self.model.clearance() && !self.model.pairs()[p].allowed_at(self.process, d) {
                self.raise(rec, p, d, false);
            }
        }
        if let Some(w) = worst.filter(|w| w.between) {
            self.raise(rec, w.pair, w.distance, true);
        }
        self.close_unseen();
    }
}
