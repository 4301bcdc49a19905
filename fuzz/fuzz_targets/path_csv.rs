//! CSV waypoint files: any bytes given as the contents of `fuzz.csv` must load or fail with an
//! error value. The overrides supply what a CSV file cannot carry (robot, speed), as
//! `armpath check FILE.csv --robot R --speed V` does, so the rows themselves are exercised.
#![no_main]

use armpath::job::{load_bytes, Overrides};
use libfuzzer_sys::fuzz_target;
use std::path::{Path, PathBuf};

fuzz_target!(|data: &[u8]| {
    let overrides = Overrides {
        robot: Some(PathBuf::from("arm.urdf")),
        speed: Some(20.0),
        ..Overrides::default()
    };
    let _ = load_bytes(data, Path::new("fuzz.csv"), &overrides);
});
