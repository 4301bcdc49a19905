//! Load a robot, compute the TCP pose for some joints, and solve IK back from a nearby seed.
//!
//! Run: `cargo run --release --example fk_ik`
#![allow(non_snake_case)]

use armpath::ik::{IkOptions, NumericIk};
use armpath::robot::load_urdf;
use nalgebra::{Isometry3, Translation3, UnitQuaternion};
use std::path::Path;

fn main() -> Result<(), armpath::Error> {
    let mut robot = load_urdf(Path::new("robots/arm6.urdf"), None)?;
    // A 180 mm straight tool on the flange.
    robot.set_tool(Isometry3::from_parts(
        Translation3::new(0.0, 0.0, 0.18),
        UnitQuaternion::identity(),
    ));
    let q_true = [0.2, 0.4, -0.3, 0.5, 1.1, -0.4];
    let base_T_tcp = robot
        .chain()
        .fk(&armpath::Joints::from_slice(&q_true).unwrap());
    println!(
        "{} ({} joints): TCP at {:.1?} mm",
        robot.name(),
        robot.dof(),
        (base_T_tcp.translation.vector * 1e3).as_slice()
    );
    let ik = NumericIk::new(&robot, IkOptions::default());
    let seed: Vec<f64> = q_true.iter().map(|v| v + 0.1).collect();
    let mut q = armpath::Joints::zeros(6);
    let out = ik.solve(
        &base_T_tcp,
        &armpath::Joints::from_slice(&seed).unwrap(),
        &mut q,
    );
    println!(
        "IK from a seed 0.1 rad off: converged {} in {} iterations, residual {:.2e} m / {:.2e} rad",
        out.converged, out.iterations, out.position_error, out.orientation_error
    );
    println!("joints (deg): {:.3?}", q.map(|_, v| v.to_degrees()));
    Ok(())
}
