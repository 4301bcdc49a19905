//! armpath: checks offline-programmed tool paths for serial robot arms.
//!
//! Data flows one way: a robot (URDF → flat chain) and a job (path file → validated SI
//! settings and waypoints) go into a plan (samples along the path), the plan is solved
//! (joints per sample), the solution is assessed (located findings) and reported.
//!
//! Frames are named in identifiers: `base_T_tcp` is the pose of the TCP in the base frame,
//! composable left to right (`base_T_tcp = base_T_tip * tip_T_tcp`). The capital `T` carries
//! that meaning, hence the crate-wide allowance of non-snake-case names.
//!
//! ```
//! use armpath::ik::{IkOptions, NumericIk};
//! use armpath::robot::load_urdf;
//! use armpath::Joints;
//!
//! let robot = load_urdf(std::path::Path::new("robots/arm6.urdf"), None).unwrap();
//! let q_true = Joints::from([0.1, 0.2, -0.3, 0.4, 0.5, 0.6]);
//! let base_T_tcp = robot.chain().fk(&q_true);
//! let ik = NumericIk::new(&robot, IkOptions::default());
//! let mut q = Joints::zeros(robot.dof());
//! let seed = q_true.map(|_, v| v + 0.05);
//! let outcome = ik.solve(&base_T_tcp, &seed, &mut q);
//! assert!(outcome.converged && outcome.position_error < 1e-5);
//! ```
#![warn(missing_docs)]
#![allow(non_snake_case)]

mod arctan;
pub mod assess;
pub mod cell;
pub mod check;
pub mod configs;
pub mod error;
pub mod fix;
pub mod ik;
pub mod job;
pub mod motion;
pub mod output;
pub mod plan;
pub mod report;
pub mod rng;
pub mod robot;
pub mod rotation;
pub mod solve;
pub mod units;
pub mod units_display;

pub use error::{Error, Result};
pub use robot::Joints;
