//! The lockstep table against the reference: one separate light walk per configuration,
//! each ended by a sink at its first stopping error.

use super::*;
use crate::solve::{Reach, SampleRecord, SampleSink, StartChoice, StartMethod};

/// Records the first stopping error of a walk.
struct StopWatch {
    first: Option<FirstStop>,
}

impl StopWatch {
    fn at(kind: Kind, rec: &SampleRecord, joint: Option<usize>) -> Option<FirstStop> {
        Some(FirstStop {
            kind,
            segment: rec.segment,
            s: rec.s,
            joint,
        })
    }
}

impl SampleSink for StopWatch {
    fn restart(&mut self) {
        self.first = None;
    }
    fn done(&self) -> bool {
        self.first.is_some()
    }
    fn sample(&mut self, robot: &Robot, rec: &SampleRecord) {
        if self.first.is_some() {
            return;
        }
        if rec.reach == Reach::Unreachable {
            self.first = Self::at(Kind::Unreachable, rec, None);
        } else if rec.jump.is_some() {
            self.first = Self::at(Kind::JointJump, rec, None);
        } else if let Some(k) = robot
            .joints()
            .iter()
            .zip(rec.joints.iter())
            .position(|(j, q)| !j.contains(*q))
        {
            self.first = Self::at(Kind::JointLimit, rec, Some(k));
        }
    }
}

/// The table from eight separate walks, [`Config::ALL`] order.
fn feasibility_by_walks(
    robot: &Robot,
    job: &Job,
    plan: &Plan,
    solver: &OrthoParallel,
    options: IkOptions,
) -> Vec<Feasibility> {
    let model = SingularityModel::new(robot);
    let target = plan.first_base();
    Config::ALL
        .iter()
        .map(|&config| {
            let Some(start) = best_in_config(robot, &model, solver, &target, config) else {
                return Feasibility::not_at_start(config);
            };
            let choice = StartChoice {
                method: StartMethod::Configuration,
                joints: start,
                alternatives: 0,
                config: Some(config),
            };
            let mut walker = Walker::new(robot, job, plan, options)
                .with_closed_form(solver, config)
                .light();
            let mut stop = StopWatch { first: None };
            walker.walk(&choice, &mut stop);
            Feasibility {
                config,
                first_stop: stop.first,
                start_joints: Some(start),
            }
        })
        .collect()
}

/// Compare the lockstep table with the separate walks on `job`; false when the job has no
/// closed-form solver or plan. `stops` counts the reference's stops by kind.
fn compare(job: &Job, label: &str, stops: &mut [usize; 3]) -> bool {
    let mut robot = crate::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
    robot.set_tool(job.tool.tip_T_tcp);
    let Ok(solver) = OrthoParallel::from_robot(&robot) else {
        return false;
    };
    let Ok(plan) = crate::plan::plan(job, crate::plan::DEFAULT_MAX_SAMPLES) else {
        return false;
    };
    let options = IkOptions::default();
    let reference = feasibility_by_walks(&robot, job, &plan, &solver, options);
    for threads in [1, 2, 3] {
        let lockstep = feasibility(&robot, job, &plan, &solver, options, threads);
        assert_eq!(lockstep, reference, "{label}, {threads} threads");
    }
    for f in reference.iter().filter_map(|r| r.first_stop) {
        let k = match f.kind {
            Kind::Unreachable => 0,
            Kind::JointJump => 1,
            _ => 2,
        };
        stops[k] += 1;
    }
    true
}

#[test]
fn lockstep_table_equals_eight_separate_walks_on_every_demo() {
    // Every demo path on its robot, at its own sampling and at coarser and finer steps, with
    // its own work frame and shifted by 0.3 m (more stops of every kind), and a line through
    // an exact wrist singularity of the demo arm (jumps): the lockstep table is the separate
    // walks' table, stop for stop, to the bit. source: common practice (the reference is the
    // walk the table was made of before).
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut compared = 0;
    let mut stops = [0usize; 3];
    for entry in std::fs::read_dir(dir.join("paths")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("yaml") {
            continue;
        }
        for (step, shift) in [(None, 0.0), (Some(8.0), 0.0), (Some(0.5), 0.0), (None, 0.3)] {
            let base = crate::job::load(&path, &crate::job::Overrides::default()).unwrap();
            let mm = base.units.length == crate::job::LengthUnit::Mm;
            let mut ov = crate::job::Overrides {
                step: step.map(|s| if mm { s } else { s * 1e-3 }),
                ..Default::default()
            };
            if shift != 0.0 {
                let w = &base.base_T_work;
                let (r, p, y) = w.rotation.euler_angles();
                let f = if mm { 1e3 } else { 1.0 };
                let a = if base.units.angle == crate::job::AngleUnit::Deg {
                    180.0 / std::f64::consts::PI
                } else {
                    1.0
                };
                let t = w.translation.vector;
                ov.work_frame = Some([
                    (t.x + shift) * f,
                    t.y * f,
                    (t.z - shift) * f,
                    r * a,
                    p * a,
                    y * a,
                ]);
            }
            let Ok(job) = crate::job::load(&path, &ov) else {
                continue;
            };
            let label = format!("{} step {step:?} shift {shift}", path.display());
            compared += usize::from(compare(&job, &label, &mut stops));
        }
    }
    // A line along y through the height of axis 4 at the zero pose (c1 + c2 − a2 = 930 mm on
    // the demo arm) with the tool rolling: axes 4 and 6 align on the way (θ5 = 0) and the
    // branches meet there with different θ4, a jump in every configuration that gets there.
    // source: Siciliano et al. 2009, §3.3 (at θ5 = 0 only θ4 + θ6 is determined);
    // robots/arm6.urdf geometry.
    for (z, end) in [
        (930.0, "[30, 90, 0]"),
        (930.0, "[0, 90, 0]"),
        (940.0, "[30, 90, 0]"),
    ] {
        let yaml = format!(
            "robot: {}\ntool: {{xyz: [0, 0, 120], rpy: [0, 0, 0]}}\n\
             work_frame: {{xyz: [1050, 0, {z}], rpy: [0, 0, 0]}}\nspeed: 25\n\
             waypoints:\n  - {{name: left, xyz: [0, -200, 0], rpy: [0, 90, 0]}}\n  \
             - {{name: right, xyz: [0, 200, 0], rpy: {end}}}\n",
            dir.join("robots/arm6.urdf").display()
        );
        let job = crate::job::load_bytes(
            yaml.as_bytes(),
            &dir.join("wrist_line.yaml"),
            &crate::job::Overrides::default(),
        )
        .unwrap();
        compared += usize::from(compare(&job, &format!("wrist line {z} {end}"), &mut stops));
    }
    assert!(compared >= 15, "only {compared} tables compared");
    // The comparison covers every kind of stop. source: common practice.
    assert!(stops.iter().all(|&n| n > 0), "stops by kind: {stops:?}");
}
