//! Peak memory of a whole `check` per waypoint, measured on the binary by the OS: the
//! high-water mark of resident memory (`VmHWM` in `/proc/<pid>/status`), read while the
//! child runs. The fixed part (code, robot, buffers) is taken out by running two path
//! lengths and testing the slope.

mod common;

use std::io::Write;
use std::path::Path;
use std::process::Stdio;
use std::time::Duration;

/// The budget per waypoint. source: common practice (the project's stated budget).
const BUDGET_BYTES_PER_WAYPOINT: f64 = 100.0;

/// The CSV reader holds the whole file while it parses, so at the end of reading the file's
/// bytes per row come on top of the records; the allowance is that size, measured on the file.
fn file_bytes_per_row(path: &Path, n: usize) -> f64 {
    std::fs::metadata(path).unwrap().len() as f64 / n as f64
}

/// A reachable zig-zag of `n` waypoints near the demo seam (mm, deg; work frame 900 mm in
/// front of the base, 250 mm up), with a short name per row when `named`.
fn write_zigzag(path: &Path, n: usize, named: bool) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    writeln!(
        out,
        "{}x,y,z,roll,pitch,yaw",
        if named { "name," } else { "" }
    )
    .unwrap();
    for i in 0..n {
        let t = (i % 2000) as f64;
        let y = if t < 1000.0 {
            -100.0 + 0.2 * t
        } else {
            100.0 - 0.2 * (t - 1000.0)
        };
        let x = -50.0 + 2.0 * (i % 2) as f64;
        if named {
            write!(out, "p{i},").unwrap();
        }
        writeln!(out, "{x},{y:.1},0,180,0,0").unwrap();
    }
}

fn vm_hwm_kib(pid: u32) -> Option<u64> {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// Peak resident memory (bytes) of a check of `n` waypoints, and the file's bytes per row.
fn peak_bytes(dir: &Path, n: usize, named: bool) -> (f64, f64) {
    let csv = dir.join(format!("zigzag_{n}_{named}.csv"));
    write_zigzag(&csv, n, named);
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin("armpath"))
        .arg("check")
        .arg(&csv)
        .args(["--robot", &common::arm6(), "--speed", "10"])
        .args([
            "--tool",
            "0,0,180,0,0,0",
            "--work-frame",
            "900,0,250,0,0,0",
            "-q",
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut peak = 0;
    let status = loop {
        if let Some(kib) = vm_hwm_kib(child.id()) {
            peak = peak.max(kib);
        }
        if let Some(status) = child.try_wait().unwrap() {
            break status;
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    assert_eq!(
        status.code(),
        Some(0),
        "the zig-zag of {n} waypoints must pass"
    );
    assert!(peak > 0, "no VmHWM read for the check of {n} waypoints");
    (peak as f64 * 1024.0, file_bytes_per_row(&csv, n))
}

/// Bytes per waypoint between two path lengths, and the file's bytes per row.
fn slope(named: bool) -> (f64, f64) {
    let dir = tempfile::tempdir().unwrap();
    let (n1, n2) = (50_000, 200_000);
    let ((m1, _), (m2, row)) = (
        peak_bytes(dir.path(), n1, named),
        peak_bytes(dir.path(), n2, named),
    );
    let per = (m2 - m1) / (n2 - n1) as f64;
    eprintln!("named {named}: {m1} B at {n1}, {m2} B at {n2}: {per:.1} B per waypoint");
    (per, row)
}

#[test]
#[cfg(target_os = "linux")]
fn check_memory_per_unnamed_waypoint_stays_within_budget() {
    let (per, row) = slope(false);
    let budget = BUDGET_BYTES_PER_WAYPOINT + row;
    assert!(
        per <= budget,
        "{per:.1} bytes per waypoint, budget {BUDGET_BYTES_PER_WAYPOINT} + {row:.1} (file)"
    );
}

#[test]
#[cfg(target_os = "linux")]
fn check_memory_per_named_waypoint_stays_within_budget_plus_names() {
    // Names beyond the fixed record count extra: here `p<i>` (up to 7 bytes) and its 4-byte
    // offset in the name store, and while the file is read, its (longer) rows.
    let (per, row) = slope(true);
    let extra = 7.0 + 4.0;
    let budget = BUDGET_BYTES_PER_WAYPOINT + extra + row;
    assert!(
        per <= budget,
        "{per:.1} bytes per named waypoint, budget {BUDGET_BYTES_PER_WAYPOINT} + {extra} \
         (names) + {row:.1} (file)"
    );
}
