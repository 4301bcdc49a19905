//! The main walk cut into chunks on several threads hands the sinks every sample of the
//! single walk, bit for bit, and gives the same report and totals: on every demo, at chunk
//! sizes from a few samples to the default, and where the guessed state at a chunk's start is
//! wrong (unreachable stretches across boundaries) so that the chunk is walked again.

mod common;
use armpath::check::{check, CheckOptions, CheckOutcome};
use armpath::robot::Robot;
use armpath::solve::{SampleRecord, SampleSink};
use common::*;

/// Every sample's record as text (`{:?}` prints each float so that it reads back to the
/// same bits).
#[derive(Default)]
struct Every(Vec<String>);

impl SampleSink for Every {
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        self.0.push(format!("{rec:?}"));
    }
    fn restart(&mut self) {
        self.0.clear();
    }
}

/// The check of `job` with `threads` and `chunk`: the outcome and every record.
fn run(job: &armpath::job::Job, threads: usize, chunk: usize) -> (CheckOutcome, Vec<String>) {
    let robot = armpath::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    let options = CheckOptions {
        threads,
        chunk_samples: chunk,
        ..Default::default()
    };
    let mut every = Every::default();
    let outcome = check(job, &robot, &options, &mut [&mut every]).unwrap();
    (outcome, every.0)
}

/// The report as JSON text, without its timing.
fn report(o: &CheckOutcome) -> String {
    let mut v = serde_json::to_value(armpath::report::Report::from_outcome(o).unwrap()).unwrap();
    v.as_object_mut().unwrap().remove("seconds");
    v.to_string()
}

/// Compares the chunked walks of `job` with its single walk; returns the chunks walked again.
fn compare(label: &str, job: &armpath::job::Job, chunk: usize) -> usize {
    let (one, every_one) = run(job, 1, chunk);
    assert_eq!(one.totals.rewalked_chunks, 0, "{label}");
    let mut rewalked = 0;
    for threads in [2, 3] {
        let (many, every_many) = run(job, threads, chunk);
        assert_eq!(every_many.len(), every_one.len(), "{label} chunk {chunk}");
        for (k, (a, b)) in every_one.iter().zip(&every_many).enumerate() {
            assert_eq!(
                a, b,
                "{label}, chunk {chunk}, {threads} threads: sample {k}"
            );
        }
        assert_eq!(report(&many), report(&one), "{label} chunk {chunk}");
        let (t1, tn) = (&one.totals, &many.totals);
        assert_eq!(
            (
                t1.samples,
                t1.ik_solves,
                t1.full_searches,
                t1.restarts,
                t1.beyond_reach
            ),
            (
                tn.samples,
                tn.ik_solves,
                tn.full_searches,
                tn.restarts,
                tn.beyond_reach
            ),
            "{label} chunk {chunk}: work counters"
        );
        assert_eq!(t1.duration.to_bits(), tn.duration.to_bits(), "{label}");
        assert_eq!(t1.length.to_bits(), tn.length.to_bits(), "{label}");
        rewalked += tn.rewalked_chunks;
    }
    rewalked
}

/// The demo `rel`, sampled every `step` mm when given.
fn load(rel: &str, step: Option<f64>) -> armpath::job::Job {
    let overrides = armpath::job::Overrides {
        step,
        ..Default::default()
    };
    armpath::job::load(&repo(rel), &overrides).unwrap()
}

#[test]
fn chunked_walks_hand_on_the_single_walks_samples_on_every_demo() {
    // source: common practice (the single walk is the reference, bit for bit).
    let mut demos = Vec::new();
    for entry in std::fs::read_dir(repo("paths")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) == Some("yaml") {
            demos.push(format!(
                "paths/{}",
                path.file_name().unwrap().to_str().unwrap()
            ));
        }
    }
    assert!(demos.len() >= 6);
    for rel in &demos {
        let job = load(rel, None);
        for chunk in [5, 64, 2048] {
            compare(rel, &job, chunk);
        }
    }
}

#[test]
fn chunks_starting_inside_an_unreachable_stretch_are_walked_again_to_the_same_samples() {
    // source: common practice. The beyond-reach demo runs out of reach for a stretch of
    // samples: a chunk starting inside it is guessed with no unreachable run behind it (the
    // single walk has one, which decides where it searches again), so the guess cannot meet
    // the real state and the chunk is walked again; the samples must still be the single
    // walk's.
    let job = load("paths/beyond_reach.yaml", None);
    assert!(compare("beyond_reach", &job, 64) > 0);
}

#[test]
fn a_wrist_swinging_about_half_a_turn_inside_a_chunk_gives_the_same_samples() {
    // source: common practice. The wrist-crossing demo at a fine step: joints 4 and 6 swing
    // about half a turn within a few millimetres near its middle, between two of the guess
    // pass's solves (one per 1,000 samples, 50 mm); the windings it guesses after the swing
    // must be the single walk's or be walked again.
    let job = load("paths/wrist_crossing.yaml", Some(0.05));
    compare("wrist_crossing at 0.05 mm", &job, 1000);
}

#[test]
fn a_long_raster_in_default_chunks_needs_no_chunk_walked_twice() {
    // source: common practice. The panel raster at a 0.25 mm step (about 13,000 samples,
    // seven chunks): no joint turns half a turn between boundaries and every pose is reached,
    // so every guessed start meets the real one.
    let job = load("paths/panel_raster.yaml", Some(0.25));
    assert_eq!(compare("panel_raster at 0.25 mm", &job, 2048), 0);
}

#[test]
fn a_chunk_too_long_for_a_worker_is_streamed_by_the_calling_thread_to_the_same_samples() {
    // source: common practice. The wrist-crossing pass with a 20 mm joint move across the
    // point where axes 4 and 6 line up: the plan counts that move's samples by its 20 mm
    // (boundaries fall by that count), but joints 4 and 6 swing about half a turn in it,
    // hundreds of half-degree samples. With 8-sample chunks the chunk holding the swing
    // outgrows its cap (twice the chunk size) on the worker and is streamed by the calling
    // thread instead; the samples are still the single walk's.
    let yaml = format!(
        "units: {{length: mm, angle: deg}}
robot: {}
tool: {{xyz: [0, 0, 120], rpy: [0, 0, 0]}}
work_frame: {{xyz: [1050, 0, 940], rpy: [0, 0, 0]}}
speed: 100
waypoints:
  - {{name: a, xyz: [0, -60, 0], rpy: [0, 90, 0]}}
  - {{name: b, xyz: [0, -10, 0], rpy: [0, 90, 0]}}
  - {{name: c, xyz: [0, 10, 0], rpy: [0, 90, 0], motion: joint}}
  - {{name: d, xyz: [0, 60, 0], rpy: [0, 90, 0]}}
",
        arm6()
    );
    let (_dir, file) = path_file(&yaml);
    let job = armpath::job::load(&file, &Default::default()).unwrap();
    assert!(compare("joint move across the wrist line", &job, 8) > 0);
}

#[test]
fn boundaries_inside_a_joint_move_to_an_unreachable_end_are_passed_alike() {
    // source: common practice. A joint move to a waypoint 3 m away: the plan counts
    // thousands of samples for it and puts chunk boundaries inside, but the walk gives the
    // move one sample (its end is out of reach) and passes those boundaries there; on any
    // number of threads the samples are the single walk's.
    let yaml = format!(
        "units: {{length: mm, angle: deg}}
robot: {}
tool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}
work_frame: {{xyz: [850, -150, 250], rpy: [0, 0, 0]}}
speed: 50
waypoints:
  - {{name: a, xyz: [0, 0, 0], rpy: [180, 45, 0]}}
  - {{name: b, xyz: [0, 60, 0], rpy: [180, 45, 0]}}
  - {{name: far, xyz: [3000, 60, 0], rpy: [180, 45, 0], motion: joint}}
  - {{name: c, xyz: [0, 120, 0], rpy: [180, 45, 0], motion: joint}}
  - {{name: d, xyz: [0, 180, 0], rpy: [180, 45, 0]}}
",
        arm6()
    );
    let (_dir, file) = path_file(&yaml);
    let job = armpath::job::load(&file, &Default::default()).unwrap();
    let plan = armpath::plan::plan(&job, u64::MAX).unwrap();
    let grid = armpath::solve::chunk_grid(&plan, 8);
    assert!(
        grid.iter().filter(|b| b.pos.seg == 1).count() > 10,
        "boundaries in the move"
    );
    for chunk in [8, 64] {
        compare("unreachable joint move end", &job, chunk);
    }
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(24))]

    #[test]
    fn random_paths_in_random_chunks_give_the_single_walks_samples(
        points in proptest::collection::vec(
            (-500.0f64..500.0, -400.0f64..700.0, -150.0f64..700.0,
             140.0f64..220.0, 0.0f64..90.0, -180.0f64..180.0, proptest::bool::weighted(0.25)),
            2..6,
        ),
        step in 0.5f64..4.0,
        chunk in 3usize..300,
    ) {
        // source: common practice (the single walk is the reference, bit for bit). Waypoints
        // anywhere around the demo cell, some out of reach, a quarter reached by joint moves,
        // at random steps and chunk sizes.
        let mut yaml = format!(
            "units: {{length: mm, angle: deg}}
robot: {}
tool: {{xyz: [0, 0, 180], rpy: [0, 0, 0]}}
work_frame: {{xyz: [850, -150, 250], rpy: [0, 0, 0]}}
speed: 100
sampling: {{step: {step}}}
waypoints:
",
            arm6()
        );
        for (k, (x, y, z, rx, ry, rz, joint)) in points.iter().enumerate() {
            let motion = if *joint && k > 0 { ", motion: joint" } else { "" };
            yaml.push_str(&format!(
                "  - {{xyz: [{x:.1}, {y:.1}, {z:.1}], rpy: [{rx:.1}, {ry:.1}, {rz:.1}]{motion}}}\n"
            ));
        }
        let (_dir, file) = path_file(&yaml);
        let job = armpath::job::load(&file, &Default::default()).unwrap();
        compare("random path", &job, chunk);
    }
}
