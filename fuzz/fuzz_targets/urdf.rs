//! Robot descriptions: any text must give a robot or an error value, never a panic or hang.
//! A robot that loads also goes through what is computed from its flat chain straight after
//! loading: forward kinematics at the zero pose and the spherical-wrist check.
//!
//! Input layout: if the bytes contain a NUL, the part before it is the tip link name and the
//! part after it the URDF; otherwise all of it is the URDF and the tip is chosen by default.
#![no_main]

use armpath::robot::{from_urdf_str, spherical_wrist};
use libfuzzer_sys::fuzz_target;
use std::path::Path;

fuzz_target!(|data: &[u8]| {
    let (tip, urdf) = match data.iter().position(|&b| b == 0) {
        Some(i) => (std::str::from_utf8(&data[..i]).ok(), &data[i + 1..]),
        None => (None, data),
    };
    let Ok(text) = std::str::from_utf8(urdf) else {
        return;
    };
    if let Ok(robot) = from_urdf_str(text, Path::new("fuzz.urdf"), tip) {
        let q = vec![0.0; robot.dof()];
        let _ = robot.chain().fk(&q);
        let _ = spherical_wrist(&robot);
    }
});
