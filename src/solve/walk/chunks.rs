//! The main walk in chunks on several threads, with the results of one thread.
//!
//! The path is cut at fixed samples ([`chunk_grid`]: about every [`CHUNK_SAMPLES`] samples,
//! in straight lines and joint moves alike; a function of the plan alone). Chunk 0 is walked
//! from the start; every other chunk, on a rayon worker, from a guess of the walk's state
//! where it begins: the joints one sample before [`PRIME`] priming samples, solved in a
//! quick pass from boundary to boundary along the path ([`guesses`]), on the configuration
//! that pass follows there. The priming samples are walked but not kept. What a walk carries into the
//! chunk's first sample (the previous sample, the last reached joints, the configuration
//! followed, the unreachable run and its measured distance) is then compared, bit for bit,
//! with the state the previous chunk really ended in. Equal, the chunk's samples are the
//! single walk's: the walker is a function of that state and the path from there on, because
//! the singularity screen restarts at every boundary in every walk
//! ([`super::Walker::with_grid`]) with a floor known before the chunk is walked
//! ([`State::floor`], handed to the chunk's walker). A chunk starting inside a joint move
//! begins the move from the joints guessed before it, and the move (its ends and samples) is
//! compared too. Different (a winding or configuration the guess got wrong, an unreachable
//! stretch across the boundary), the chunk is walked again on the calling thread from the
//! real state. The calling thread hands the samples to the sinks in path order, numbered and
//! timed as the single walk does; the sinks stay on that thread.
//!
//! The numerical follower is not chunked: its warm start carries more than this state.
//! Memory: at most two chunks per thread are held, each of at most twice the chunk size; a
//! longer one (segments too short to hold a boundary, or a joint move with many more samples
//! than the plan counted, between two boundaries) is abandoned by its worker and streamed by
//! the calling thread instead.

use super::super::{SampleRecord, SampleSink, StartChoice, WalkTotals};
use super::grid::{guesses, Boundary, Guess, Pos, PRIME};
use super::state::FLOOR_LAG;
use super::{State, Walker};
use crate::ik::analytic::{Config, OrthoParallel};
use crate::job::Motion;
use crate::plan::Plan;
use crate::robot::{Joints, Robot};
use nalgebra::Isometry3;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;

/// What each chunk's walker is made of: the main walker's settings (a [`Walker`] without its
/// follower and jump test, which each walker makes for itself) and the closed form it
/// follows.
struct Parts<'a> {
    robot: &'a Robot,
    job: &'a crate::job::Job,
    plan: &'a Plan,
    model: crate::robot::SingularityModel,
    options: crate::ik::IkOptions,
    class_below: f64,
    reach_centre: nalgebra::Vector3<f64>,
    reach_radius: f64,
    grid: &'a [Boundary],
    solver: &'a OrthoParallel,
}

impl<'a> Walker<'a> {
    /// The settings of this walker, to make walkers for chunks of its walk on the closed form
    /// `solver` ([`walk_in_chunks`]).
    fn parts(&self, solver: &'a OrthoParallel) -> Parts<'a> {
        Parts {
            robot: self.robot,
            job: self.job,
            plan: self.plan,
            model: self.model.clone(),
            options: self.options,
            class_below: self.class_below,
            reach_centre: self.reach_centre,
            reach_radius: self.reach_radius,
            grid: self.grid,
            solver,
        }
    }
}

impl<'a> Parts<'a> {
    /// A walker like the main one, following configuration `config`.
    fn walker(&self, config: Config) -> Walker<'a> {
        Walker {
            robot: self.robot,
            job: self.job,
            plan: self.plan,
            model: self.model.clone(),
            options: self.options,
            jump: super::JumpTest::new(self.robot, self.options),
            follower: Box::new(super::NumericContinuity::new(self.robot, self.options)),
            light: false,
            class_below: self.class_below,
            reach_centre: self.reach_centre,
            reach_radius: self.reach_radius,
            grid: self.grid,
            closed: None,
        }
        .with_closed_form(self.solver, config)
    }
}

/// Equal bit for bit.
fn same(a: f64, b: f64) -> bool {
    a.to_bits() == b.to_bits()
}

fn same_joints(a: &Joints, b: &Joints) -> bool {
    a.len() == b.len() && a.iter().zip(b.iter()).all(|(x, y)| same(*x, *y))
}

fn same_pose(a: &Isometry3<f64>, b: &Isometry3<f64>) -> bool {
    let (ta, tb) = (&a.translation.vector, &b.translation.vector);
    let (qa, qb) = (&a.rotation.coords, &b.rotation.coords);
    ta.iter().zip(tb.iter()).all(|(x, y)| same(*x, *y))
        && qa.iter().zip(qb.iter()).all(|(x, y)| same(*x, *y))
}

/// The parts of a sample record the next sample is computed from, and the rest of what the
/// single walk would have (not the singularity measure, which restarts at a boundary, nor
/// the accelerations, which need the sample before).
fn same_record(a: &SampleRecord, b: &SampleRecord) -> bool {
    let same_jump = match (&a.jump, &b.jump) {
        (None, None) => true,
        (Some(x), Some(y)) => same_joints(&x.delta, &y.delta) && x.config_change == y.config_change,
        _ => false,
    };
    a.segment == b.segment
        && a.waypoint == b.waypoint
        && a.motion == b.motion
        && same(a.s, b.s)
        && same(a.dt, b.dt)
        && same_pose(&a.target, &b.target)
        && a.reach == b.reach
        && same(a.position_error, b.position_error)
        && same(a.orientation_error, b.orientation_error)
        && same_joints(&a.joints, &b.joints)
        && same_joints(&a.joint_speed, &b.joint_speed)
        && same(a.tcp_speed, b.tcp_speed)
        && same(a.tool_angular_speed, b.tool_angular_speed)
        && same_jump
}

/// A walk's state between two samples with the configuration it follows.
struct Carried {
    state: State,
    branch: Option<Config>,
}

impl Carried {
    /// Whether a walk in state `self` goes on exactly as one in `other` (see the module
    /// documentation for what is compared and why that is enough).
    fn continues_as(&self, other: &Carried) -> bool {
        let (a, b) = (&self.state, &other.state);
        let same_prev = match (&a.prev, &b.prev) {
            (None, None) => true,
            (Some(x), Some(y)) => same_record(x, y),
            _ => false,
        };
        let same_move = match (&a.joint, &b.joint) {
            (None, None) => true,
            (Some(x), Some(y)) => {
                x.seg == y.seg
                    && x.steps == y.steps
                    && same_joints(&x.q0, &y.q0)
                    && same_joints(&x.q1, &y.q1)
                    && same(x.end_errors.0, y.end_errors.0)
                    && same(x.end_errors.1, y.end_errors.1)
            }
            _ => false,
        };
        self.branch == other.branch
            && same_move
            && a.grid_next == b.grid_next
            && a.unreachable_run == b.unreachable_run
            && a.prev_speed_valid == b.prev_speed_valid
            && same(a.probe.0, b.probe.0)
            && same(a.probe.1, b.probe.1)
            && same_joints(&a.last_good, &b.last_good)
            && same_prev
    }
}

/// A chunk walked on a worker.
struct Walked {
    /// The state after the priming samples (for chunks after the first).
    entered: Option<Carried>,
    /// The state after the chunk's last sample.
    exit: Carried,
}

/// A worker's message: chunk `chunk`'s samples and how it ended (`None`: the walk panicked,
/// and the calling thread walks the chunk itself).
struct Done {
    chunk: usize,
    records: Vec<SampleRecord>,
    walked: Option<Walked>,
}

/// Keeps the samples of a chunk (or throws away priming samples, without `records`); stops
/// when the whole walk stops, or once it holds more than `cap` samples (the chunk is then
/// walked on the calling thread, which streams it: memory stays bounded however unevenly
/// the plan lets the boundaries fall).
struct Keep<'r> {
    records: Option<&'r mut Vec<SampleRecord>>,
    stop: &'r AtomicBool,
    cap: usize,
}

impl Keep<'_> {
    fn overflowed(&self) -> bool {
        self.records.as_ref().is_some_and(|r| r.len() > self.cap)
    }
}

impl SampleSink for Keep<'_> {
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        let cap = self.cap;
        if let Some(r) = self.records.as_mut().filter(|r| r.len() <= cap) {
            r.push(*rec);
        }
    }
    fn done(&self) -> bool {
        self.stop.load(Ordering::Relaxed) || self.overflowed()
    }
    fn restart(&mut self) {
        if let Some(r) = self.records.as_mut() {
            r.clear();
        }
    }
}

/// Passes samples on numbered and timed as one walk over the whole path numbers and times
/// them (chunks count from their own start).
struct Renumber<'s> {
    sink: &'s mut dyn SampleSink,
    index: usize,
    t: f64,
    s: f64,
}

impl SampleSink for Renumber<'_> {
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        let mut r = *rec;
        r.index = self.index;
        // The same sum, in the same order, as the single walk's clock.
        self.t += r.dt;
        r.t = self.t;
        self.s = r.s;
        self.index += 1;
        self.sink.sample(robot, &r);
    }
    fn done(&self) -> bool {
        self.sink.done()
    }
    fn restart(&mut self) {
        self.sink.restart();
    }
    fn restartable(&self) -> bool {
        self.sink.restartable()
    }
}

impl Walker<'_> {
    /// Walk chunk `c` (from boundary `c - 1`, or the start, up to boundary `c` or the end)
    /// into `sink`. `from`: the state where the previous chunk ended, or a guess to prime.
    /// `floor`: the singularity screen's floor for the chunk ([`State::floor`]; for chunks
    /// after the first).
    fn walk_chunk(
        &mut self,
        start: &StartChoice,
        c: usize,
        from: ChunkFrom,
        floor: f64,
        sink: &mut dyn SampleSink,
        stop: &AtomicBool,
    ) -> Walked {
        let until = self.grid.get(c).map(|b| b.pos);
        let (entered, mut state) = match from {
            ChunkFrom::Start => (None, self.begin(start, sink)),
            ChunkFrom::State(carried) => {
                let Carried { state, branch } = *carried;
                let mut state = state;
                if let Some(config) = branch {
                    self.follower.set_branch(config);
                }
                state.work = WalkTotals::default();
                (None, state)
            }
            ChunkFrom::Guess(g) => {
                let b = self.grid[c - 1];
                let mut state = State::resumed(g.q);
                state.grid_next = c - 1;
                self.follower.set_branch(g.config);
                let mut discard = Keep {
                    records: None,
                    stop,
                    cap: 0,
                };
                let in_move = self
                    .plan
                    .segment(b.pos.seg)
                    .filter(|s| s.motion == Motion::Joint);
                if let Some(seg) = in_move {
                    // Begin the move from the joints guessed before it; an end out of reach
                    // (one sample for the move) leaves nothing to prime, and the chunk is
                    // walked where the previous one ends.
                    self.begin_joint_move(&seg, b.s0, &mut state, &mut discard);
                }
                let prime_from = Pos {
                    seg: b.pos.seg,
                    step: b.pos.step - PRIME,
                };
                self.walk_between(&mut state, prime_from, b.s0, Some(b.pos), &mut discard);
                let entered = Carried {
                    state: state.clone(),
                    branch: self.follower.branch(),
                };
                state.work = WalkTotals::default();
                (Some(entered), state)
            }
        };
        if c > 0 {
            let b = self.grid[c - 1];
            state.floor = floor;
            state.floor_given = true;
            self.walk_between(&mut state, b.pos, b.s0, until, sink);
        } else {
            self.walk_between(&mut state, Pos::FIRST, 0.0, until, sink);
        }
        Walked {
            entered,
            exit: Carried {
                state,
                branch: self.follower.branch(),
            },
        }
    }
}

/// Where a chunk's walk starts from.
enum ChunkFrom {
    Start,
    State(Box<Carried>),
    Guess(Guess),
}

/// The floor of chunk `c` ([`State::floor`]) from `floors` (see [`walk_in_chunks`]): the
/// first sample's measure and the smallest of every chunk `FLOOR_LAG` or more back.
fn floor_of(c: usize, floors: &[f64], first: f64) -> f64 {
    match c.checked_sub(FLOOR_LAG) {
        Some(k) => floors[k],
        None => first,
    }
}

/// The exact singularity measure of the first sample, as the walk computes it there.
fn first_measure(w: &Walker, q: &Joints) -> f64 {
    let mut jac = crate::robot::Jacobian::zeros();
    w.robot.chain().fk_jacobian(q, &mut jac);
    crate::robot::SingularityScreen::new()
        .measure(&w.model, &jac, w.robot.dof(), f64::INFINITY)
        .value
}

/// Totals of the work counters of `a` and `b`.
fn add_work(a: &mut WalkTotals, b: &WalkTotals) {
    a.ik_solves += b.ik_solves;
    a.full_searches += b.full_searches;
    a.restarts += b.restarts;
    a.beyond_reach += b.beyond_reach;
}

/// The main walk from `start` into `sink` by `home` (a walker on the closed form `solver`,
/// following `config`, the start's configuration), in chunks (`chunk`: the samples per chunk
/// its grid was made with) on up to `threads` threads (the calling thread feeds the sinks),
/// with the samples and totals of [`Walker::walk`]. On one thread, or when called from a
/// rayon worker (whose waiting could hold up the chunks' own workers), it is that walk.
pub fn walk_in_chunks(
    mut home: Walker<'_>,
    solver: &OrthoParallel,
    config: Config,
    start: &StartChoice,
    sink: &mut dyn SampleSink,
    threads: usize,
    chunk: usize,
) -> WalkTotals {
    let grid = home.grid;
    // A chunk holding more samples than this (segments too short for a boundary, or a joint
    // move longer than the plan counted, between two boundaries) is walked on the calling
    // thread instead.
    let cap = 2 * chunk.max(1) + PRIME;
    if threads < 2 || grid.is_empty() || rayon::current_thread_index().is_some() {
        return home.walk(start, sink);
    }
    let parts = &home.parts(solver);
    let n = grid.len() + 1;
    let guessed = guesses(&home, solver, start, config);
    sink.begin(parts.robot, parts.plan.estimated_samples);
    let mut out = Renumber {
        sink,
        index: 0,
        t: 0.0,
        s: 0.0,
    };
    let mut work = WalkTotals::default();
    let stop_flag = AtomicBool::new(false);
    let stop = &stop_flag;
    // Never more chunks in flight than the floor lags: a chunk's floor needs the smallest
    // measures of the chunks FLOOR_LAG back, which the calling thread has handed on by then.
    let window = (2 * threads).min(FLOOR_LAG);
    let first = first_measure(&home, &start.joints);
    // floors[k]: the first sample's measure and the smallest of chunks 0..=k, in order.
    let mut floors: Vec<f64> = Vec::with_capacity(n);
    let (tx, rx) = mpsc::channel::<Done>();
    // Chunk c's message once received, and whether it was sent to a worker, in slot
    // c % window: the chunks in flight are never more than `window` apart.
    let mut arrived: Vec<Option<Done>> = (0..window).map(|_| None).collect();
    let mut launched = vec![false; window];
    let mut spare: Vec<Vec<SampleRecord>> = Vec::new();
    let robot = parts.robot;
    rayon::in_place_scope(|scope| {
        let spawn = |c: usize, mut records: Vec<SampleRecord>, floors: &[f64]| -> bool {
            let from = match c {
                0 => ChunkFrom::Start,
                _ => match guessed[c - 1] {
                    Some(g) => ChunkFrom::Guess(g),
                    None => return false,
                },
            };
            let tx = tx.clone();
            let floor = floor_of(c, floors, first);
            scope.spawn(move |_| {
                records.clear();
                let walked = catch_unwind(AssertUnwindSafe(|| {
                    let mut w = parts.walker(config);
                    let mut keep = Keep {
                        records: Some(&mut records),
                        stop,
                        cap,
                    };
                    let walked = w.walk_chunk(start, c, from, floor, &mut keep, stop);
                    (!keep.overflowed()).then_some(walked)
                }))
                .ok()
                .flatten();
                // The receiver outlives every worker of the scope.
                let _ = tx.send(Done {
                    chunk: c,
                    records,
                    walked,
                });
            });
            true
        };
        let mut next = 0;
        while next < n.min(window) {
            launched[next % window] = spawn(next, Vec::with_capacity(chunk + PRIME), &floors);
            next += 1;
        }
        let mut carried: Option<Carried> = None;
        for c in 0..n {
            if out.done() {
                break;
            }
            let mut done = None;
            if launched[c % window] {
                while arrived[c % window].is_none() {
                    match rx.recv() {
                        Ok(d) => {
                            let k = d.chunk % window;
                            arrived[k] = Some(d);
                        }
                        Err(_) => break,
                    }
                }
                done = arrived[c % window].take();
            }
            let mut took = None;
            if let Some(Done {
                records,
                walked: Some(walked),
                ..
            }) = done
            {
                let fits = match (&walked.entered, &carried) {
                    (None, None) => c == 0,
                    (Some(e), Some(real)) => e.continues_as(real),
                    _ => false,
                };
                if fits {
                    for r in &records {
                        out.sample(robot, r);
                    }
                    took = Some(walked.exit);
                }
                spare.push(records);
            } else if let Some(d) = done {
                spare.push(d.records);
            }
            let exit = match took {
                Some(exit) => exit,
                None => {
                    // The guess did not meet the real state (or there was none): walk the
                    // chunk here from where the previous one ended.
                    let from = match carried.take() {
                        Some(state) => ChunkFrom::State(Box::new(state)),
                        None => ChunkFrom::Start,
                    };
                    if c > 0 {
                        work.rewalked_chunks += 1;
                    }
                    home.walk_chunk(start, c, from, floor_of(c, &floors, first), &mut out, stop)
                        .exit
                }
            };
            add_work(&mut work, &exit.state.work);
            let before = floors.last().copied().unwrap_or(first);
            floors.push(before.min(exit.state.min_measure));
            carried = Some(exit);
            if next < n {
                let records = spare.pop().unwrap_or_default();
                launched[next % window] = spawn(next, records, &floors);
                next += 1;
            }
        }
        // Stopped early (the sinks are done): the workers still walking stop too.
        stop.store(true, Ordering::Relaxed);
    });
    WalkTotals {
        samples: out.index,
        length: out.s,
        duration: out.t,
        ..work
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_worker_keeps_no_more_than_its_cap_and_then_asks_to_stop() {
        // source: common practice (the cap is what bounds a worker's memory: a chunk holding a
        // long joint move must not be buffered whole).
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let robot = crate::robot::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap();
        let stop = AtomicBool::new(false);
        let mut records = Vec::new();
        let mut keep = Keep {
            records: Some(&mut records),
            stop: &stop,
            cap: 3,
        };
        let rec =
            super::super::lanes::light_record(Joints::zeros(6), Isometry3::identity(), 0.0, 0.0);
        for k in 0..10 {
            assert_eq!(keep.done(), k > 3, "after {k} samples");
            keep.sample(&robot, &rec);
        }
        assert!(keep.overflowed());
        assert_eq!(records.len(), 4);
        // The whole walk stopping stops every worker, full or not.
        let mut spare = Vec::new();
        let keep = Keep {
            records: Some(&mut spare),
            stop: &stop,
            cap: 3,
        };
        stop.store(true, Ordering::Relaxed);
        assert!(keep.done() && !keep.overflowed());
    }
}
