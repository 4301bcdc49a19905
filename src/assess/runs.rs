//! Run bookkeeping shared by every sink that turns flagged samples into findings (the
//! assessor and the cell watch): consecutive samples flagged under one key within one segment
//! merge into one run; a run closes at the first sample that does not flag its key, and at a
//! segment change, so that each finding names one segment. A run keeps its extent and its
//! worst value. The open runs live in one vector whose capacity is kept, so the per-sample
//! calls allocate nothing once it has grown to the number of keys flagged at once.

use super::{Finding, Kind, Quantity};
use crate::job::Job;
use crate::robot::Joints;
use crate::solve::SampleRecord;

/// Where a run lies on the path: its segment, first and last sample, path distance (m) and
/// time (s) at both, and the sample of its worst value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Span {
    /// Segment index (0-based).
    pub segment: usize,
    /// First and last sample index.
    pub samples: [usize; 2],
    /// Path distance (m) at the first and last sample.
    pub s: [f64; 2],
    /// Time from the path start (s) at the first and last sample.
    pub t: [f64; 2],
    /// Sample index of the worst value.
    pub worst_sample: usize,
    /// Joints (rad or m) at the worst sample: the pose a report draws for the finding.
    pub worst_joints: Joints,
}

impl Span {
    /// A span of the one sample `rec`.
    fn at(rec: &SampleRecord) -> Span {
        Span {
            segment: rec.segment,
            samples: [rec.index, rec.index],
            s: [rec.s, rec.s],
            t: [rec.t, rec.t],
            worst_sample: rec.index,
            worst_joints: rec.joints,
        }
    }

    /// Extend the span to `rec`, a later sample of the same segment.
    fn extend(&mut self, rec: &SampleRecord) {
        self.samples[1] = rec.index;
        self.s[1] = rec.s;
        self.t[1] = rec.t;
    }

    /// A finding of `kind` located on this span (segment, the waypoint names of `job` it runs
    /// between, samples, distances, times, worst sample), with `message`; the value, limit,
    /// joint, bodies and deltas are left empty for the caller to set.
    pub fn finding(&self, job: &Job, kind: Kind, quantity: Quantity, message: String) -> Finding {
        Finding {
            kind,
            segment: Some(self.segment),
            from: Some(job.waypoint_name(self.segment)),
            to: Some(job.waypoint_name(self.segment + 1)),
            samples: Some(self.samples),
            s: Some(self.s),
            t: Some(self.t),
            joint: None,
            bodies: None,
            value: None,
            limit: None,
            quantity,
            deltas: None,
            worst_sample: Some(self.worst_sample),
            worst_joints: Some(self.worst_joints),
            message,
        }
    }
}

/// The worst value a run keeps, and how bad it is.
pub trait Worst: Copy {
    /// How bad the value is: larger is worse (a distance counts negated).
    fn badness(&self) -> f64;
    /// Take over from `worse`, a worse value of the same run. Replaces by default; a value
    /// may keep facts the worse sample lacks.
    fn replace_with(&mut self, worse: Self) {
        *self = worse;
    }
}

/// A run of samples flagged under one key `K`, with its worst value `W`.
#[derive(Debug, Clone, Copy)]
pub struct Run<K, W> {
    /// What was flagged (a finding kind with a joint, or with a body pair).
    pub key: K,
    /// Where the run lies.
    pub span: Span,
    /// The worst value over the run (largest [`Worst::badness`]; the first on a tie).
    pub worst: W,
    /// Flagged by the current sample.
    seen: bool,
}

/// The open runs of one sink; see the module doc.
#[derive(Debug, Clone)]
pub struct RunBook<K, W> {
    open: Vec<Run<K, W>>,
    /// Segment of the last sample entered; `None` before the first.
    segment: Option<usize>,
}

impl<K: PartialEq + Copy, W: Worst> RunBook<K, W> {
    /// An empty book with room for `keys` runs open at once.
    pub fn with_capacity(keys: usize) -> Self {
        RunBook {
            open: Vec::with_capacity(keys),
            segment: None,
        }
    }

    /// Call before raising flags for a sample of `segment`: when the segment differs from the
    /// previous sample's, every open run is handed to `close` (runs never cross a segment
    /// boundary). Returns whether the segment changed (true on the first sample).
    pub fn enter(&mut self, segment: usize, close: impl FnMut(Run<K, W>)) -> bool {
        if self.segment == Some(segment) {
            return false;
        }
        self.open.drain(..).for_each(close);
        self.segment = Some(segment);
        true
    }

    /// Flag `key` at sample `rec` with value `worst`: extends the key's open run (keeping
    /// the worse value) or opens one.
    pub fn raise(&mut self, rec: &SampleRecord, key: K, worst: W) {
        if let Some(run) = self.open.iter_mut().find(|r| r.key == key) {
            run.span.extend(rec);
            run.seen = true;
            if worst.badness() > run.worst.badness() {
                run.worst.replace_with(worst);
                run.span.worst_sample = rec.index;
                run.span.worst_joints = rec.joints;
            }
            return;
        }
        self.open.push(Run {
            key,
            span: Span::at(rec),
            worst,
            seen: true,
        });
    }

    /// Call after raising a sample's flags: runs the sample did not flag are handed to
    /// `close`; the others wait for the next sample.
    pub fn close_unseen(&mut self, mut close: impl FnMut(Run<K, W>)) {
        let mut i = 0;
        while i < self.open.len() {
            if self.open[i].seen {
                self.open[i].seen = false;
                i += 1;
            } else {
                close(self.open.swap_remove(i));
            }
        }
    }

    /// Hand every open run to `close` (at the end of the walk).
    pub fn close_all(&mut self, close: impl FnMut(Run<K, W>)) {
        self.open.drain(..).for_each(close);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A distance-like value: smaller is worse; `note` is kept from the first sample that
    /// had one, as the assessor keeps a singularity class.
    #[derive(Debug, Clone, Copy, PartialEq)]
    struct Gap {
        d: f64,
        note: Option<u8>,
    }

    impl Worst for Gap {
        fn badness(&self) -> f64 {
            -self.d
        }
        fn replace_with(&mut self, worse: Self) {
            *self = Gap {
                d: worse.d,
                note: worse.note.or(self.note),
            };
        }
    }

    fn rec(index: usize, segment: usize) -> SampleRecord {
        SampleRecord {
            index,
            segment,
            waypoint: None,
            motion: crate::job::Motion::Linear,
            s: 0.01 * index as f64,
            t: 0.1 * index as f64,
            dt: 0.1,
            target: nalgebra::Isometry3::identity(),
            reach: crate::solve::Reach::Reached,
            position_error: 0.0,
            orientation_error: 0.0,
            // One joint holding the sample index: tells which sample's joints a run kept.
            joints: Joints::from_slice(&[index as f64]).unwrap(),
            joint_speed: Default::default(),
            joint_acceleration: Default::default(),
            tcp_speed: 0.0,
            tool_angular_speed: 0.0,
            singularity: 1.0,
            singularity_class: None,
            jump: None,
        }
    }

    fn gap(d: f64) -> Gap {
        Gap { d, note: None }
    }

    /// Feeds samples `(segment, [(key, distance)])` and returns the closed runs in the order
    /// they closed, the end of the walk closing the rest.
    fn walk(samples: &[(usize, &[(u8, f64)])]) -> Vec<Run<u8, Gap>> {
        let mut book = RunBook::with_capacity(2);
        let mut closed = Vec::new();
        for (i, (segment, flags)) in samples.iter().enumerate() {
            let r = rec(i, *segment);
            book.enter(*segment, |run| closed.push(run));
            for &(key, d) in flags.iter() {
                book.raise(&r, key, gap(d));
            }
            book.close_unseen(|run| closed.push(run));
        }
        book.close_all(|run| closed.push(run));
        closed
    }

    #[test]
    fn consecutive_flags_merge_and_keep_the_worst_value_and_its_sample() {
        // source: common practice (a run is a maximal stretch of consecutive flagged samples;
        // its worst value and where it occurs are what a finding reports)
        let runs = walk(&[
            (0, &[]),
            (0, &[(1, 0.5)]),
            (0, &[(1, 0.2)]),
            (0, &[(1, 0.3)]),
            (0, &[]),
        ]);
        assert_eq!(runs.len(), 1);
        let r = runs[0];
        assert_eq!(r.key, 1);
        assert_eq!(r.span.samples, [1, 3]);
        assert_eq!(r.span.worst_sample, 2);
        assert_eq!(r.span.worst_joints.as_slice(), &[2.0]);
        assert_eq!(r.worst.d, 0.2);
        assert_eq!(r.span.s, [0.01, 0.03]);
        assert_eq!(r.span.t, [0.1, 0.30000000000000004]);
        assert_eq!(r.span.segment, 0);
    }

    #[test]
    fn a_gap_closes_a_run_and_the_next_flag_opens_another() {
        // source: common practice (runs are separated by unflagged samples)
        let runs = walk(&[
            (0, &[(1, 0.5)]),
            (0, &[]),
            (0, &[(1, 0.4)]),
            (0, &[(1, 0.6)]),
        ]);
        assert_eq!(runs.len(), 2);
        assert_eq!(runs[0].span.samples, [0, 0]);
        assert_eq!(runs[1].span.samples, [2, 3]);
        assert_eq!(runs[1].span.worst_sample, 2);
    }

    #[test]
    fn a_segment_change_closes_every_run_even_while_flagged() {
        // source: common practice (each finding names one segment)
        let runs = walk(&[
            (0, &[(1, 0.5), (2, 0.1)]),
            (1, &[(1, 0.4)]),
            (1, &[(1, 0.3)]),
        ]);
        assert_eq!(runs.len(), 3);
        let first_segment: Vec<_> = runs.iter().filter(|r| r.span.segment == 0).collect();
        assert_eq!(first_segment.len(), 2);
        let later = runs.iter().find(|r| r.span.segment == 1).unwrap();
        assert_eq!((later.key, later.span.samples), (1, [1, 2]));
        assert_eq!(later.worst.d, 0.3);
    }

    #[test]
    fn keys_run_independently() {
        // source: common practice (one run per flagged key)
        let runs = walk(&[
            (0, &[(1, 0.5)]),
            (0, &[(1, 0.5), (2, 0.2)]),
            (0, &[(2, 0.1)]),
        ]);
        assert_eq!(runs.len(), 2);
        let one = runs.iter().find(|r| r.key == 1).unwrap();
        let two = runs.iter().find(|r| r.key == 2).unwrap();
        assert_eq!(one.span.samples, [0, 1]);
        // A tie keeps the first sample.
        assert_eq!(one.span.worst_sample, 0);
        assert_eq!((two.span.samples, two.span.worst_sample), ([1, 2], 2));
    }

    #[test]
    fn a_worse_value_keeps_facts_the_worse_sample_lacks() {
        // source: common practice (a classification seen earlier in the run stays known)
        let mut book = RunBook::with_capacity(1);
        book.enter(0, |_| {});
        book.raise(
            &rec(0, 0),
            7u8,
            Gap {
                d: 0.5,
                note: Some(3),
            },
        );
        book.raise(&rec(1, 0), 7u8, gap(0.1));
        let mut closed = Vec::new();
        book.close_all(|run| closed.push(run));
        assert_eq!(
            closed[0].worst,
            Gap {
                d: 0.1,
                note: Some(3)
            }
        );
    }

    #[test]
    fn a_located_finding_carries_the_span_and_the_waypoint_names() {
        // source: common practice (segment k runs from waypoint k to k + 1)
        let text = "robot: a.urdf\nspeed: 20\nwaypoints:\n  - {name: p, xyz: [0, 0, 0], rpy: [180, 0, 0]}\n  \
                    - {name: q, xyz: [300, 0, 0], rpy: [180, 0, 0]}\n  - {name: r, xyz: [300, 9, 0], rpy: [180, 0, 0]}\n";
        let job = crate::job::load_bytes(
            text.as_bytes(),
            std::path::Path::new("p.yaml"),
            &crate::job::Overrides::default(),
        )
        .unwrap();
        let span = Span {
            segment: 1,
            samples: [4, 9],
            s: [0.1, 0.2],
            t: [1.0, 2.0],
            worst_sample: 6,
            worst_joints: Joints::from_slice(&[0.1, 0.2, 0.3]).unwrap(),
        };
        let f = span.finding(&job, Kind::Clearance, Quantity::Length, "m".into());
        assert_eq!(f.segment, Some(1));
        assert_eq!((f.from.as_deref(), f.to.as_deref()), (Some("q"), Some("r")));
        assert_eq!(f.samples, Some([4, 9]));
        assert_eq!((f.s, f.t), (Some([0.1, 0.2]), Some([1.0, 2.0])));
        assert_eq!(f.worst_sample, Some(6));
        assert_eq!(f.worst_joints, Some(span.worst_joints));
        assert_eq!(f.quantity, Quantity::Length);
    }
}
