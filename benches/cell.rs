//! The cell check's cost: the per-sample query of the demo arm with a two-body torch against
//! a cell of 20 primitives, over the joints of a 31,700-sample seam; the same with the plate
//! under the seam replaced by a 50,900-triangle STL part (a finely tessellated plate with
//! ribs underneath); and the whole check of that seam with and without the cell, in the same
//! run.
//!
//! Run: `cargo bench --bench cell` (`-- mesh` for the STL part alone)
#![allow(non_snake_case)]

use armpath::cell::CellProbe;
use armpath::check::{cell_model, check, CheckOptions};
use armpath::job::{self, Overrides};
use armpath::robot::{load_urdf, Robot};
use armpath::solve::{SampleRecord, SampleSink};
use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;
use std::time::Duration;

/// The demo seam (see benches/check.rs) with the rib cell's torch, sampled every 0.012 mm.
const PATH: &str = "units: {length: mm, angle: deg}
robot: ROBOT
CELL
tool:
  xyz: [0, 0, 180]
  rpy: [0, 0, 0]
  geometry:
    - {name: torch,  cylinder: {radius: 15, length: 130}, xyz: [0, 0, 85]}
    - {name: nozzle, cylinder: {radius: 8, length: 15}, xyz: [0, 0, 157.5]}
work_frame: {xyz: [850, -150, 250], rpy: [0, 0, 0]}
speed: 8
sampling: {step: 0.012, angle_step: 0.5}
waypoints:
  - {name: seam_start, xyz: [0, 0, 0],   rpy: [180, 45, 0]}
  - {name: seam_mid, xyz: [0, 150, 0],   rpy: [180, 45, -10]}
  - {name: seam_end, xyz: [0, 300, 0],   rpy: [180, 45, -10]}
  - {name: retract, xyz: [0, 300, 80],   rpy: [180, 45, -10]}
";

/// 20 primitives: floor, table, part and fixtures around the seam, posts and guards around
/// the cell (invented).
const CELL: &str = "bodies:
  - {name: floor, frame: base, box: [4000, 4000, 20], xyz: [0, 0, -10]}
  - {name: table, frame: base, box: [800, 1000, 40], xyz: [850, 0, 220]}
  - {name: plate, frame: work, box: [300, 400, 10], xyz: [150, 150, -5]}
  - {name: wall_a, frame: work, box: [10, 400, 60], xyz: [-20, 150, 30]}
  - {name: clamp_1, frame: work, box: [40, 40, 30], xyz: [200, 0, 15]}
  - {name: clamp_2, frame: work, box: [40, 40, 30], xyz: [200, 300, 15]}
  - {name: pin_1, frame: work, cylinder: {radius: 6, length: 40}, xyz: [250, 100, 20]}
  - {name: pin_2, frame: work, cylinder: {radius: 6, length: 40}, xyz: [250, 200, 20]}
  - {name: stop, frame: work, sphere: {radius: 15}, xyz: [280, 150, 15]}
  - {name: post_1, frame: base, cylinder: {radius: 50, length: 1800}, xyz: [-900, -900, 900]}
  - {name: post_2, frame: base, cylinder: {radius: 50, length: 1800}, xyz: [-900, 900, 900]}
  - {name: post_3, frame: base, cylinder: {radius: 50, length: 1800}, xyz: [1500, -900, 900]}
  - {name: post_4, frame: base, cylinder: {radius: 50, length: 1800}, xyz: [1500, 900, 900]}
  - {name: guard_left, frame: base, box: [2400, 20, 1800], xyz: [300, -1000, 900]}
  - {name: guard_right, frame: base, box: [2400, 20, 1800], xyz: [300, 1000, 900]}
  - {name: guard_back, frame: base, box: [20, 2000, 1800], xyz: [-1000, 0, 900]}
  - {name: cabinet, frame: base, box: [600, 400, 1200], xyz: [-600, -700, 600]}
  - {name: cleaner, frame: base, capsule: {radius: 60, length: 200}, xyz: [500, -700, 500]}
  - {name: lamp, frame: base, sphere: {radius: 80}, xyz: [800, 700, 1700]}
  - {name: feeder, frame: base, box: [300, 300, 300], xyz: [0, 800, 450]}
allowed_contacts:
  - {between: [base_link, floor], when: always}
  - {between: [nozzle, plate], when: process}
  - {between: [nozzle, wall_a], when: process}
";

/// The plate of [`CELL`] as a closed STL part in mm: 300 × 400 mm, top face z = 0 split into
/// 125 × 100 cells (two triangles each), a bottom at z = −10 with 6 mm ribs reaching z = −30
/// every 50 mm along x (the same grid, facing down), and side walls: 50,900 triangles.
fn ribbed_plate() -> Vec<[nalgebra::Point3<f64>; 3]> {
    use nalgebra::Point3;
    let (nx, ny) = (125usize, 100usize);
    let x = |i: usize| 300.0 * i as f64 / nx as f64;
    let y = |j: usize| 400.0 * j as f64 / ny as f64;
    let bottom = |i: usize| if x(i) % 50.0 < 6.0 { -30.0 } else { -10.0 };
    let top_at = |i: usize, j: usize| Point3::new(x(i), y(j), 0.0);
    let bot_at = |i: usize, j: usize| Point3::new(x(i), y(j), bottom(i));
    let mut t = Vec::with_capacity(4 * nx * ny + 4 * (nx + ny));
    for i in 0..nx {
        for j in 0..ny {
            let (a, b, c, d) = ((i, j), (i + 1, j), (i + 1, j + 1), (i, j + 1));
            t.push([top_at(a.0, a.1), top_at(b.0, b.1), top_at(c.0, c.1)]);
            t.push([top_at(a.0, a.1), top_at(c.0, c.1), top_at(d.0, d.1)]);
            t.push([bot_at(a.0, a.1), bot_at(c.0, c.1), bot_at(b.0, b.1)]);
            t.push([bot_at(a.0, a.1), bot_at(d.0, d.1), bot_at(c.0, c.1)]);
        }
    }
    // The top's border, counter-clockwise seen from above; each edge u → v gets a wall.
    let mut border = Vec::new();
    border.extend((0..nx).map(|i| ((i, 0), (i + 1, 0))));
    border.extend((0..ny).map(|j| ((nx, j), (nx, j + 1))));
    border.extend((0..nx).rev().map(|i| ((i + 1, ny), (i, ny))));
    border.extend((0..ny).rev().map(|j| ((0, j + 1), (0, j))));
    for (u, v) in border {
        let (ut, vt, ub, vb) = (
            top_at(u.0, u.1),
            top_at(v.0, v.1),
            bot_at(u.0, u.1),
            bot_at(v.0, v.1),
        );
        t.push([vt, ut, ub]);
        t.push([vt, ub, vb]);
    }
    t
}

/// Collects every sample's joints.
struct Trajectory(Vec<armpath::Joints>);

impl SampleSink for Trajectory {
    fn restart(&mut self) {
        self.0.clear();
    }
    fn sample(&mut self, _robot: &Robot, rec: &SampleRecord) {
        self.0.push(rec.joints);
    }
}

fn bench(c: &mut Criterion) {
    let root = env!("CARGO_MANIFEST_DIR");
    let dir = std::env::temp_dir().join(format!("armpath-cell-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("cell.yaml"), CELL).unwrap();
    let plate = ribbed_plate();
    std::fs::write(
        dir.join("ribbed_plate.stl"),
        armpath::cell::stl::write_binary_stl(&plate),
    )
    .unwrap();
    let plate_line = "  - {name: plate, frame: work, box: [300, 400, 10], xyz: [150, 150, -5]}";
    assert!(CELL.contains(plate_line));
    std::fs::write(
        dir.join("cell_mesh.yaml"),
        CELL.replace(
            plate_line,
            "  - {name: plate, frame: work, mesh: {file: ribbed_plate.stl}, xyz: [0, -50, 0]}",
        ),
    )
    .unwrap();
    let with_mesh = dir.join("seam_mesh.yaml");
    std::fs::write(
        &with_mesh,
        PATH.replace("ROBOT", &format!("{root}/robots/arm6.urdf"))
            .replace("CELL", "cell: cell_mesh.yaml"),
    )
    .unwrap();
    let robot_line = format!("{root}/robots/arm6.urdf");
    let with_cell = dir.join("seam_cell.yaml");
    std::fs::write(
        &with_cell,
        PATH.replace("ROBOT", &robot_line)
            .replace("CELL", "cell: cell.yaml"),
    )
    .unwrap();
    let bare = dir.join("seam.yaml");
    let bare_text = PATH.replace("ROBOT", &robot_line).replace("CELL\n", "");
    let bare_text = bare_text[..bare_text.find("  geometry:").unwrap()].to_string()
        + &bare_text[bare_text.find("work_frame:").unwrap()..];
    std::fs::write(&bare, bare_text).unwrap();

    let job = job::load(&with_cell, &Overrides::default()).unwrap();
    let job_bare = job::load(&bare, &Overrides::default()).unwrap();
    let mut robot = load_urdf(&job.robot, None).unwrap();
    let options = CheckOptions::default();
    let mut joints = Trajectory(Vec::new());
    let outcome = check(&job, &robot, &options, &mut [&mut joints]).unwrap();
    eprintln!(
        "check with the cell: verdict {}, {} samples, {} pairs tested",
        outcome.verdict().name(),
        joints.0.len(),
        outcome.cell.as_ref().map_or(0, |c| c.pairs)
    );
    robot.set_tool(job.tool.tip_T_tcp);
    let model = cell_model(&job, &robot).unwrap().unwrap();
    let process: Vec<bool> = vec![false; joints.0.len()];
    let job_mesh = job::load(&with_mesh, &Overrides::default()).unwrap();
    let model_mesh = cell_model(&job_mesh, &robot).unwrap().unwrap();
    eprintln!(
        "mesh part: {} triangles, model notes: {:?}",
        plate.len(),
        model_mesh.notes()
    );

    let mut g = c.benchmark_group("cell");
    g.sample_size(10);
    g.measurement_time(Duration::from_secs(10));
    g.throughput(Throughput::Elements(joints.0.len() as u64));
    g.bench_function("probe_per_sample", |b| {
        let mut probe = CellProbe::new(&model);
        b.iter(|| {
            probe.restart();
            for (q, &p) in joints.0.iter().zip(&process) {
                black_box(probe.sample(&model, q, p));
            }
        })
    });
    g.bench_function("probe_per_sample_mesh_part", |b| {
        let mut probe = CellProbe::new(&model_mesh);
        b.iter(|| {
            probe.restart();
            for (q, &p) in joints.0.iter().zip(&process) {
                black_box(probe.sample(&model_mesh, q, p));
            }
        })
    });
    g.bench_function("check_with_cell", |b| {
        b.iter(|| black_box(check(&job, &robot, &options, &mut []).unwrap()))
    });
    g.bench_function("check_without_cell", |b| {
        b.iter(|| black_box(check(&job_bare, &robot, &options, &mut []).unwrap()))
    });
    g.finish();
    let _ = std::fs::remove_dir_all(&dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
