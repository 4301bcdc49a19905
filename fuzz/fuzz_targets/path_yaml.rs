//! Path files (YAML): any bytes given as the contents of `fuzz.yaml` must load or fail with an
//! error value, never panic or hang. No override is set, so every setting comes from the input.
#![no_main]

use armpath::job::{load_bytes, Overrides};
use libfuzzer_sys::fuzz_target;
use std::path::Path;

fuzz_target!(|data: &[u8]| {
    // `robot:` is only resolved here (not read), and a `waypoints: <file.csv>` is read
    // relative to the current folder, which is harmless.
    let _ = load_bytes(data, Path::new("fuzz.yaml"), &Overrides::default());
});
