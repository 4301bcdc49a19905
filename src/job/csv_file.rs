//! CSV waypoint files.
//!
//! Format: the first row is a header naming the columns (any order, names are trimmed and
//! matched without regard to case). Each later row is one waypoint, in the units of the job
//! (the path file's `units:`, or `--units` when the CSV file is loaded directly).
//!
//! | column(s)             | required | meaning                                                |
//! |-----------------------|----------|--------------------------------------------------------|
//! | `x`, `y`, `z`         | yes      | TCP position in the work frame (length unit)            |
//! | `qw`, `qx`, `qy`, `qz`| one set  | orientation as a quaternion [w, x, y, z] (normalised)   |
//! | `roll`, `pitch`, `yaw`| one set  | orientation as URDF rpy, `Rz(yaw)·Ry(pitch)·Rx(roll)`   |
//! | `rx`, `ry`, `rz`      | one set  | orientation as a rotation vector, axis × angle          |
//! | `name`                | no       | waypoint name; empty = `wp<row number among waypoints>` |
//! | `speed`               | no       | TCP speed of the segment ending here (length unit/s)    |
//! | `motion`              | no       | `linear` (default when empty) or `joint`                |
//! | `process`             | no       | `true`/`false`/`1`/`0`; empty = false                   |
//! | `blend`               | no       | corner radius here (length unit); empty = 0, a stop     |
//!
//! Exactly one orientation set must be present, complete. Lines starting with `#` are comments
//! and empty lines are skipped; both still count for line numbers. Messages give the line
//! number (1-based, the header is line 1 when nothing precedes it) and the column name.
//!
//! Records are read one at a time into one reused buffer and line numbers are counted
//! incrementally, so time grows linearly with the number of rows.

use super::read::{check_file, read_file};
use super::units::{RawOrientation, Units};
use super::validate::{self, Loaded, Place};
use super::{InputWarning, Motion, NamesBuilder, Waypoint};
use crate::error::Error;
use std::path::Path;

/// Every column name the format knows, for messages.
const ALLOWED_COLUMNS: &str =
    "x, y, z, qw, qx, qy, qz, roll, pitch, yaw, rx, ry, rz, name, speed, motion, process, blend";

/// The orientation column sets, each with its columns in order.
const ORIENTATION_SETS: [(&str, &[&str]); 3] = [
    ("quaternion", &["qw", "qx", "qy", "qz"]),
    ("rpy", &["roll", "pitch", "yaw"]),
    ("rotation vector", &["rx", "ry", "rz"]),
];

/// Where each column sits in a record.
struct Columns {
    xyz: [usize; 3],
    /// Index into [`ORIENTATION_SETS`] and the column of each component.
    orientation: (usize, Vec<usize>),
    name: Option<usize>,
    speed: Option<usize>,
    motion: Option<usize>,
    process: Option<usize>,
    blend: Option<usize>,
    count: usize,
}

/// Reads the waypoints of a CSV file. `units` are the job's units; `referenced_by` explains
/// where the file name came from (for the not-found message), e.g. "named by `waypoints:` in
/// job.yaml". Quaternions off unit length add an [`InputWarning`] to `warnings`.
pub(super) fn read_waypoints(
    path: &Path,
    units: &Units,
    referenced_by: &str,
    warnings: &mut Vec<InputWarning>,
) -> Result<Loaded, Error> {
    check_file(path, "CSV waypoint file", referenced_by)?;
    // Read whole (at most MAX_FILE_BYTES): line numbers are counted from the bytes, because
    // the csv reader's own line count skips comment lines.
    let bytes = read_file(path, "CSV waypoint file")?;
    parse_waypoints(&bytes, path, units, warnings)
}

/// The waypoints of CSV text already in memory; `path` names the file in messages.
pub(super) fn parse_waypoints(
    bytes: &[u8],
    path: &Path,
    units: &Units,
    warnings: &mut Vec<InputWarning>,
) -> Result<Loaded, Error> {
    let mut lines = LineCounter::new(bytes);
    let mut reader = csv::ReaderBuilder::new()
        // The header is read by hand so that its line number is known and checked like data.
        .has_headers(false)
        // Field counts are checked by hand to give a message with the expected count.
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(bytes);

    let file_name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string());
    let mut record = csv::StringRecord::new();

    if !read(&mut reader, &mut record, path, &mut lines)? {
        return Err(Error::input(
            path,
            "file",
            format!(
                "has no header row: the first line must name the columns, e.g. \
                 `name,x,y,z,roll,pitch,yaw` (allowed: {ALLOWED_COLUMNS})"
            ),
        ));
    }
    let header_line = lines.line_of(&record);
    let cols = parse_header(&record, header_line, path)?;

    // One waypoint per line at most: reserving that many at once avoids the transient double
    // allocation of a growing vector, which on a long file is the peak of the whole check.
    let rows = bytes.iter().filter(|&&b| b == b'\n').count();
    // Each row goes straight into its compact form: the pose record and, when the file has
    // a name column, the name appended to one shared text.
    let mut out = Loaded {
        waypoints: Vec::with_capacity(rows + 1),
        names: NamesBuilder::new(),
        first_motion_given: false,
        move_keys: Vec::new(),
    };
    while read(&mut reader, &mut record, path, &mut lines)? {
        let line = lines.line_of(&record);
        let index = out.waypoints.len();
        let (waypoint, name, motion_given) = parse_row(
            &record, &cols, line, index, units, path, &file_name, warnings,
        )?;
        if index == 0 {
            out.first_motion_given = motion_given;
        }
        let blend = blend_cell(&record, &cols, line, units, path)?;
        out.waypoints.push(waypoint);
        out.names.push(name);
        out.set_move_key(crate::motion::MoveKey {
            blend,
            ..Default::default()
        });
    }
    out.waypoints.shrink_to_fit();
    Ok(out)
}

/// Reads the next record; `false` at end of file. A line of only spaces (one empty field after
/// trimming) is skipped like an empty line.
fn read<R: std::io::Read>(
    reader: &mut csv::Reader<R>,
    record: &mut csv::StringRecord,
    path: &Path,
    lines: &mut LineCounter,
) -> Result<bool, Error> {
    loop {
        let more = read_one(reader, record, path, lines)?;
        let blank = more && record.len() == 1 && record[0].is_empty();
        if !blank {
            if more {
                check_fields(record, path, lines)?;
            }
            return Ok(more);
        }
    }
}

/// No field of the format spans lines or holds control characters: a line break inside a
/// field means a quote `"` was opened and not closed on its line (the reader would otherwise
/// take every later line into that field), and a NUL or other control character means a
/// binary file or a bad export.
fn check_fields(
    record: &csv::StringRecord,
    path: &Path,
    lines: &mut LineCounter,
) -> Result<(), Error> {
    for (i, f) in record.iter().enumerate() {
        let Some(c) = f.chars().find(|c| c.is_control() && *c != '\t') else {
            continue;
        };
        let line = lines.line_of(record);
        let message = if c == '\n' || c == '\r' {
            "the quote `\"` that opens this field is not closed on its line, so the field runs \
             on into the next lines: close the quote (write `\"\"` for a quote inside a quoted \
             field) or remove it"
                .to_string()
        } else {
            let what = if c == '\0' {
                "a NUL byte".to_string()
            } else {
                format!("the control character U+{:04X}", c as u32)
            };
            format!(
                "holds {what} (a binary file or a bad export?): remove it, or save the file as \
                 UTF-8 CSV text"
            )
        };
        return Err(Error::input(
            path,
            format!("line {line}, column {}", i + 1),
            message,
        ));
    }
    Ok(())
}

fn read_one<R: std::io::Read>(
    reader: &mut csv::Reader<R>,
    record: &mut csv::StringRecord,
    path: &Path,
    lines: &mut LineCounter,
) -> Result<bool, Error> {
    reader.read_record(record).map_err(|e| {
        let location = e
            .position()
            .map(|p| format!("line {}", lines.line_of_record_at(p.byte())))
            .unwrap_or_else(|| "file".to_string());
        // Own wording: the csv crate's message embeds its own line count, which skips
        // comment lines and would contradict `location`.
        let message = match e.kind() {
            csv::ErrorKind::Utf8 { err, .. } => format!(
                "field {} is not UTF-8 text: save the file as UTF-8 CSV (comma-separated)",
                err.field() + 1
            ),
            csv::ErrorKind::Io(io) => {
                format!("could not be read ({io}): check that the file is readable")
            }
            _ => format!("{e}: check the CSV syntax (commas, quotes) on that line"),
        };
        Error::input(path, location, message)
    })
}

/// 1-based line numbers of byte offsets, for offsets visited mostly in increasing order (then
/// the total work is one pass over the file).
struct LineCounter<'a> {
    bytes: &'a [u8],
    /// Offset up to which newlines have been counted, and the line at that offset.
    pos: usize,
    line: u64,
}

impl<'a> LineCounter<'a> {
    fn new(bytes: &'a [u8]) -> Self {
        LineCounter {
            bytes,
            pos: 0,
            line: 1,
        }
    }

    fn line_at(&mut self, byte: u64) -> u64 {
        let byte = usize::try_from(byte)
            .unwrap_or(usize::MAX)
            .min(self.bytes.len());
        if byte < self.pos {
            self.pos = 0;
            self.line = 1;
        }
        let newlines = self.bytes[self.pos..byte]
            .iter()
            .filter(|&&b| b == b'\n')
            .count();
        self.line += newlines as u64;
        self.pos = byte;
        self.line
    }

    /// Line of a record. The reader's position for a record is where it started looking, which
    /// may be a comment or blank line it then skipped; those are stepped over here.
    fn line_of(&mut self, record: &csv::StringRecord) -> u64 {
        match record.position() {
            Some(p) => self.line_of_record_at(p.byte()),
            None => self.line,
        }
    }

    /// Line of the first record line at or after `byte`, skipping comment and empty lines.
    fn line_of_record_at(&mut self, byte: u64) -> u64 {
        let mut at = usize::try_from(byte).unwrap_or(usize::MAX);
        while at < self.bytes.len() {
            match self.bytes[at] {
                b'#' | b'\r' | b'\n' => {
                    if self.bytes[at] == b'#' || self.bytes[at] == b'\r' {
                        while at < self.bytes.len() && self.bytes[at] != b'\n' {
                            at += 1;
                        }
                    }
                    at += 1;
                }
                _ => break,
            }
        }
        self.line_at(at as u64)
    }
}

fn parse_header(record: &csv::StringRecord, line: u64, path: &Path) -> Result<Columns, Error> {
    let names: Vec<String> = record
        .iter()
        .enumerate()
        // A spreadsheet may save a UTF-8 byte-order mark before the first name.
        .map(|(i, s)| {
            let s = if i == 0 {
                s.trim_start_matches('\u{feff}')
            } else {
                s
            };
            s.trim().to_ascii_lowercase()
        })
        .collect();
    let err = |loc: String, msg: String| Error::input(path, loc, msg);
    let mut seen = std::collections::HashMap::new();
    for (i, n) in names.iter().enumerate() {
        let loc = format!("line {line}, column {}", i + 1);
        if n.is_empty() {
            return Err(err(
                loc,
                format!("the header has an empty column name: name every column (allowed: {ALLOWED_COLUMNS})"),
            ));
        }
        if !ALLOWED_COLUMNS.split(", ").any(|a| a == n) {
            return Err(err(
                loc,
                format!("unknown column `{n}`: rename or remove it (allowed: {ALLOWED_COLUMNS})"),
            ));
        }
        if let Some(first) = seen.insert(n.as_str(), i) {
            return Err(err(
                loc,
                format!(
                    "column `{n}` appears twice (columns {} and {}): keep one",
                    first + 1,
                    i + 1
                ),
            ));
        }
    }
    let find = |n: &str| names.iter().position(|c| c == n);
    let header_loc = format!("line {line}");
    let mut xyz = [0; 3];
    for (k, c) in ["x", "y", "z"].iter().enumerate() {
        xyz[k] = find(c).ok_or_else(|| {
            err(
                header_loc.clone(),
                format!("the header has no column `{c}`: x, y and z are required"),
            )
        })?;
    }
    let mut present = Vec::new();
    for (set, (label, members)) in ORIENTATION_SETS.iter().enumerate() {
        let found: Vec<Option<usize>> = members.iter().map(|m| find(m)).collect();
        let n_found = found.iter().flatten().count();
        if n_found == 0 {
            continue;
        }
        if n_found < members.len() {
            let missing: Vec<&str> = members
                .iter()
                .zip(&found)
                .filter(|(_, f)| f.is_none())
                .map(|(m, _)| *m)
                .collect();
            return Err(err(
                header_loc.clone(),
                format!(
                    "the {label} columns are incomplete (missing {}): give all of {}",
                    missing.join(", "),
                    members.join(", ")
                ),
            ));
        }
        present.push((set, found.into_iter().flatten().collect::<Vec<_>>()));
    }
    let orientation = match present.len() {
        1 => present.remove(0),
        0 => {
            return Err(err(
                header_loc,
                "the header has no orientation columns: add one set, qw,qx,qy,qz or \
                 roll,pitch,yaw or rx,ry,rz"
                    .to_string(),
            ))
        }
        _ => {
            let sets: Vec<String> = present
                .iter()
                .map(|(s, _)| ORIENTATION_SETS[*s].1.join(","))
                .collect();
            return Err(err(
                header_loc,
                format!(
                    "the header has more than one orientation set ({}): keep exactly one",
                    sets.join(" and ")
                ),
            ));
        }
    };
    Ok(Columns {
        xyz,
        orientation,
        name: find("name"),
        speed: find("speed"),
        motion: find("motion"),
        process: find("process"),
        blend: find("blend"),
        count: names.len(),
    })
}

/// One row: the waypoint, its name (if the row gives one) and whether the row gives a motion.
#[allow(clippy::too_many_arguments)]
fn parse_row<'r>(
    record: &'r csv::StringRecord,
    cols: &Columns,
    line: u64,
    index: usize,
    units: &Units,
    path: &Path,
    file_name: &str,
    warnings: &mut Vec<InputWarning>,
) -> Result<(Waypoint, Option<&'r str>, bool), Error> {
    if record.len() != cols.count {
        return Err(Error::input(
            path,
            format!("line {line}"),
            format!(
                "has {} fields but the header has {}: give one value per column \
                 (leave optional ones empty, e.g. `a,,b`)",
                record.len(),
                cols.count
            ),
        ));
    }
    let loc = |col: &str| format!("line {line}, column {col}");
    let field = |i: usize| record.get(i).unwrap_or("");
    let number = |i: usize, col: &str| -> Result<f64, Error> {
        let s = field(i);
        if s.is_empty() {
            return Err(Error::input(
                path,
                loc(col),
                format!("is empty: give a number for `{col}`"),
            ));
        }
        let v: f64 = s.parse().map_err(|_| {
            Error::input(
                path,
                loc(col),
                format!("`{s}` is not a number: write a decimal number such as -12.5"),
            )
        })?;
        if !v.is_finite() {
            return Err(Error::input(
                path,
                loc(col),
                format!("`{s}` is not a finite number: give a finite number"),
            ));
        }
        Ok(v)
    };

    let mut xyz = [0.0; 3];
    for (k, c) in ["x", "y", "z"].iter().enumerate() {
        xyz[k] = number(cols.xyz[k], c)?;
    }
    let (set, members) = ORIENTATION_SETS[cols.orientation.0];
    let mut o = [0.0; 4];
    for (k, &ci) in cols.orientation.1.iter().enumerate() {
        o[k] = number(ci, members[k])?;
    }
    let raw = match set {
        "quaternion" => RawOrientation::Quat(o),
        "rpy" => RawOrientation::Rpy([o[0], o[1], o[2]]),
        _ => RawOrientation::Rotvec([o[0], o[1], o[2]]),
    };
    let columns = members.join(",");
    let place = Place::Row {
        file_name,
        line,
        columns: &columns,
    };
    let work_T_tcp = validate::pose(xyz, Some(&raw), units, path, place, Some(index), warnings)?;

    let name = cols
        .name
        .and_then(|i| record.get(i))
        .filter(|s| !s.is_empty());

    let speed = match cols.speed.filter(|&i| !field(i).is_empty()) {
        None => None,
        Some(i) => {
            let v = number(i, "speed")?;
            Some(validate::segment_speed(v, units, path, place)?)
        }
    };

    let motion_given = !cols.motion.map(field).unwrap_or("").is_empty();
    let motion = match cols.motion.map(field).unwrap_or("") {
        "" => Motion::Linear,
        s if s.eq_ignore_ascii_case("linear") => Motion::Linear,
        s if s.eq_ignore_ascii_case("joint") => Motion::Joint,
        s => {
            return Err(Error::input(
                path,
                loc("motion"),
                format!("unknown motion `{s}`: use linear or joint (empty = linear)"),
            ))
        }
    };

    let process = match cols.process.map(field).unwrap_or("") {
        "" | "0" => false,
        "1" => true,
        s if s.eq_ignore_ascii_case("false") => false,
        s if s.eq_ignore_ascii_case("true") => true,
        s => {
            return Err(Error::input(
                path,
                loc("process"),
                format!("`{s}` is not a yes/no value: use true, false, 1 or 0 (empty = false)"),
            ))
        }
    };

    let waypoint = Waypoint {
        work_T_tcp,
        speed,
        // Lines are at most the file's bytes (512 MiB), which fit a u32.
        line: u32::try_from(line).unwrap_or(u32::MAX),
        motion,
        process,
    };
    Ok((waypoint, name, motion_given))
}

/// The `blend` cell of a row (m): empty or absent = 0, a stop.
fn blend_cell(
    record: &csv::StringRecord,
    cols: &Columns,
    line: u64,
    units: &Units,
    path: &Path,
) -> Result<f64, Error> {
    let Some(cell) = cols
        .blend
        .and_then(|i| record.get(i))
        .filter(|s| !s.is_empty())
    else {
        return Ok(0.0);
    };
    let at = format!("line {line}, column blend");
    let v: f64 = cell.parse().map_err(|_| {
        Error::input(
            path,
            &at,
            format!(
                "`{cell}` is not a number: write a corner radius such as 5 (empty = 0, a stop)"
            ),
        )
    })?;
    super::motion_keys::blend(v, units, path, &at)
}

#[cfg(test)]
mod tests {
    use super::super::{load, Job, Overrides};
    use super::*;
    use approx::assert_relative_eq;
    use nalgebra::{Matrix3, Vector3};
    use std::f64::consts::PI;
    use std::path::PathBuf;
    use std::time::{Duration, Instant};

    fn rx(a: f64) -> Matrix3<f64> {
        Matrix3::new(1.0, 0.0, 0.0, 0.0, a.cos(), -a.sin(), 0.0, a.sin(), a.cos())
    }
    fn rz(a: f64) -> Matrix3<f64> {
        Matrix3::new(a.cos(), -a.sin(), 0.0, a.sin(), a.cos(), 0.0, 0.0, 0.0, 1.0)
    }

    fn overrides() -> Overrides {
        Overrides {
            robot: Some(PathBuf::from("cell/arm.urdf")),
            speed: Some(25.0),
            ..Default::default()
        }
    }

    /// Writes `text` as `name` in a fresh temp dir and loads it directly.
    fn load_csv(text: &str, ov: &Overrides) -> (Result<Job, Error>, tempfile::TempDir) {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("seam.csv");
        std::fs::write(&p, text).unwrap();
        (load(&p, ov), dir)
    }

    fn csv_err(text: &str) -> (String, String) {
        match load_csv(text, &overrides()).0 {
            Err(Error::Input {
                path,
                location,
                message,
            }) => {
                assert!(path.ends_with("seam.csv"), "{}", path.display());
                (location, message)
            }
            Err(e) => panic!("expected an input error, got {e}"),
            Ok(_) => panic!("expected an error"),
        }
    }

    fn assert_csv_err(text: &str, location: &str, phrases: &[&str]) {
        let (loc, msg) = csv_err(text);
        assert_eq!(loc, location, "{msg}");
        for p in phrases {
            assert!(msg.contains(p), "`{p}` not in `{msg}`");
        }
    }

    #[test]
    fn csv_named_by_a_path_file() {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/job/bracket_csv.yaml");
        let job = load(&path, &Overrides::default()).unwrap();
        // Units come from the path file (m, rad), so values pass through unchanged.
        // source: SI (metres and radians)
        assert_eq!(job.speed, 0.02);
        assert_eq!(job.waypoints.len(), 3);
        let w = &job.waypoints;
        assert_eq!(
            [0, 1, 2].map(|i| job.waypoint_name(i)),
            ["approach", "bead_a", "bead_b"]
        );
        // Line 2 is a comment, so the first waypoint is on line 3.
        assert_eq!(job.waypoint_origin(0), "bracket_bead.csv line 3");
        assert_eq!(job.waypoint_origin(2), "bracket_bead.csv line 5");
        assert_eq!(w[0].motion, Motion::Joint);
        assert_eq!(w[1].motion, Motion::Linear);
        assert_eq!(w[2].speed, Some(0.008));
        assert!(w[2].process && !w[1].process);
        assert_relative_eq!(
            w[2].work_T_tcp.translation.vector,
            Vector3::new(0.4, 0.0, 0.0)
        );
        // source: URDF spec / REP 103, R = Rz(yaw)·Ry(pitch)·Rx(roll)
        assert_relative_eq!(
            w[2].work_T_tcp.rotation.to_rotation_matrix().into_inner(),
            rz(0.5) * rx(PI),
            epsilon = 1e-15
        );
    }

    #[test]
    fn csv_loaded_directly_uses_overrides() {
        let text = "x,y,z,qw,qx,qy,qz\n0,0,0,1,0,0,0\n100,0,0,0,1,0,0\n";
        let (job, _dir) = load_csv(text, &overrides());
        let job = job.unwrap();
        // source: SI definitions (25 mm/s = 0.025 m/s, 100 mm = 0.1 m)
        assert_relative_eq!(job.speed, 0.025);
        assert_eq!(job.robot, PathBuf::from("cell/arm.urdf"));
        assert!(job.source.ends_with("seam.csv"));
        assert_eq!(job.waypoint_name(0), "wp1");
        assert_eq!(job.waypoint_name(1), "wp2");
        assert_relative_eq!(job.waypoints[1].work_T_tcp.translation.x, 0.1);
        // [0, 1, 0, 0] is the half turn about x, Rx(π).
        // source: Rodrigues' formula at θ = π (Lynch & Park 2017, eq. 3.51)
        assert_relative_eq!(
            job.waypoints[1]
                .work_T_tcp
                .rotation
                .to_rotation_matrix()
                .into_inner(),
            rx(PI),
            epsilon = 1e-15
        );
        // Defaults still apply. source: common practice (documented 1 mm default step)
        assert_relative_eq!(job.sampling.step, 0.001);

        // --units applies to the CSV values when the CSV file is loaded directly.
        let ov = Overrides {
            units_length: Some("m".into()),
            units_angle: Some("rad".into()),
            speed: Some(0.5),
            tcp_acceleration: Some(4.0),
            tool_angular_acceleration: Some(6.0),
            joint_acceleration_scale: Some(3.0),
            process_speed_tolerance: Some(0.02),
            clearance: Some(0.015),
            ..overrides()
        };
        let text = "x,y,z,rx,ry,rz,speed\n0,0,0,0,0,0,\n2,0,0,0,0,1.5707963267948966,0.25\n";
        let (job, _dir) = load_csv(text, &ov);
        let job = job.unwrap();
        assert_eq!(job.speed, 0.5);
        assert_eq!(job.waypoints[1].work_T_tcp.translation.x, 2.0);
        assert_eq!(job.waypoints[1].speed, Some(0.25));
        assert_eq!(job.units.length.name(), "m");
        // The timing limits come from the flags too, in the flags' units (m/s², rad/s²).
        // source: SI definitions
        assert_eq!(job.limits.tcp_acceleration, 4.0);
        assert_eq!(job.limits.tool_angular_acceleration, 6.0);
        assert_eq!(job.limits.joint_acceleration_scale, 3.0);
        assert_eq!(job.limits.process_speed_tolerance, 0.02);
        assert_eq!(job.limits.clearance, 0.015);
        // source: Rodrigues' formula (Lynch & Park 2017, eq. 3.51): [0, 0, π/2] is Rz(π/2)
        assert_relative_eq!(
            job.waypoints[1]
                .work_T_tcp
                .rotation
                .to_rotation_matrix()
                .into_inner(),
            rz(PI / 2.0),
            epsilon = 1e-15
        );
    }

    #[test]
    fn csv_direct_needs_robot_and_speed() {
        let text = "x,y,z,roll,pitch,yaw\n0,0,0,0,0,0\n1,0,0,0,0,0\n";
        let ov = Overrides {
            robot: None,
            ..overrides()
        };
        match load_csv(text, &ov).0 {
            Err(Error::Input {
                location, message, ..
            }) => {
                assert_eq!(location, "robot");
                assert!(message.contains("--robot"), "{message}");
            }
            other => panic!("{other:?}"),
        }
        let ov = Overrides {
            speed: None,
            ..overrides()
        };
        match load_csv(text, &ov).0 {
            Err(Error::Input {
                location, message, ..
            }) => {
                assert_eq!(location, "speed");
                assert!(message.contains("--speed <mm/s>"), "{message}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn header_errors() {
        assert_csv_err(
            "x,y,roll,pitch,yaw\n0,0,0,0,0\n",
            "line 1",
            &["no column `z`", "required"],
        );
        assert_csv_err(
            "x,y,z,roll,pitch,yaw,qw,qx,qy,qz\n",
            "line 1",
            &[
                "more than one orientation set",
                "qw,qx,qy,qz",
                "roll,pitch,yaw",
            ],
        );
        assert_csv_err(
            "x,y,z,qw,qx,qy\n",
            "line 1",
            &["quaternion columns are incomplete", "missing qz"],
        );
        assert_csv_err("x,y,z\n", "line 1", &["no orientation columns"]);
        assert_csv_err(
            "x,y,z,roll,pitch,yaw,colour\n",
            "line 1, column 7",
            &["unknown column `colour`", "allowed", "process"],
        );
        assert_csv_err(
            "x,y,z,roll,pitch,yaw,x\n",
            "line 1, column 7",
            &["`x` appears twice", "columns 1 and 7"],
        );
        assert_csv_err("x,,z\n", "line 1, column 2", &["empty column name"]);
        assert_csv_err("", "file", &["no header row"]);
        assert_csv_err("# only a comment\n\n", "file", &["no header row"]);
    }

    #[test]
    fn row_errors_name_line_and_column() {
        let h = "name,x,y,z,roll,pitch,yaw,speed,motion,process\n";
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,,,\nb,0,abc,0,0,0,0,,,\n"),
            "line 3, column y",
            &["`abc` is not a number"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,,,\nb,0,0,0,0,0\n"),
            "line 3",
            &["has 6 fields but the header has 10"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,,0,0,0,,,\n"),
            "line 2, column z",
            &["is empty", "number"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,NaN,0,0,,,\n"),
            "line 2, column roll",
            &["not a finite number"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,inf,,\n"),
            "line 2, column speed",
            &["not a finite number"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,-2,,\n"),
            "line 2, column speed",
            &["greater than 0", "mm/s"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,,circular,\n"),
            "line 2, column motion",
            &["`circular`", "linear or joint"],
        );
        assert_csv_err(
            &format!("{h}a,0,0,0,0,0,0,,,yes\n"),
            "line 2, column process",
            &["`yes`", "true, false, 1 or 0"],
        );
        // Comments and blank lines still count for line numbers.
        assert_csv_err(
            &format!("{h}# note\n\na,0,0,0,0,0,0,,,\nb,0,0,x1,0,0,0,,,\n"),
            "line 5, column z",
            &["`x1`"],
        );
        assert_csv_err(
            "x,y,z,qw,qx,qy,qz\n0,0,0,0,0,0,0\n",
            "line 2, columns qw,qx,qy,qz",
            &["zero length"],
        );
        let (loc, msg) = csv_err("x,y,z,qw,qx,qy,qz\n0,0,0,1,0,0,0\n1,0,0,\"1,0,0,0\n");
        assert!(loc.starts_with("line 3"), "{loc}: {msg}");
    }

    #[test]
    fn row_checks_shared_with_yaml() {
        // Fewer than two waypoints, duplicate names and turns in place are checked after
        // reading, with locations in the CSV file.
        assert_csv_err(
            "x,y,z,roll,pitch,yaw\n0,0,0,0,0,0\n",
            "waypoints",
            &["has 1 waypoint:"],
        );
        assert_csv_err(
            "name,x,y,z,roll,pitch,yaw\na,0,0,0,0,0,0\na,1,0,0,0,0,0\n",
            "line 3",
            &["`a`", "line 2", "line 3"],
        );
        assert_csv_err(
            "name,x,y,z,roll,pitch,yaw\na,0,0,0,0,0,0\nb,0,0,0,0,0,45\n",
            "line 3",
            &["set orientation_speed or move the TCP"],
        );
    }

    #[test]
    fn quirks_of_real_files() {
        // Byte-order mark, spaces around values, upper-case names, quoted names with commas.
        let text = "\u{feff}Name , X, Y, Z, QW, QX, QY, QZ, Motion, Process\n\"seam, start\", 0, 0, 0, 2, 0, 0, 0, JOINT, TRUE\nend,1,0,0,1,0,0,0,linear,0\n";
        let (job, _dir) = load_csv(text, &overrides());
        let job = job.unwrap();
        assert_eq!(job.waypoint_name(0), "seam, start");
        assert_eq!(job.waypoints[0].motion, Motion::Joint);
        assert!(job.waypoints[0].process);
        assert!(!job.waypoints[1].process);
        // The quaternion [2, 0, 0, 0] was normalised, with a warning naming file, line, columns.
        let w = job
            .warnings
            .iter()
            .find(|w| w.location == "seam.csv line 2, columns qw,qx,qy,qz")
            .unwrap_or_else(|| panic!("{:?}", job.warnings));
        assert_eq!(w.waypoint, Some(0));
        // source: common practice (|(2, 0, 0, 0)| = 2); the wording is the YAML reader's.
        assert!(
            w.message
                .starts_with("the quaternion [2, 0, 0, 0] has length 2; armpath normalised it"),
            "{}",
            w.message
        );
        // Comments and blank lines before the header and between rows keep line numbers right.
        assert_csv_err(
            "# made by hand\n   \nx,y,z,roll,pitch,yaw\n# first\n  \n\n0,0,0,0,0,0\r\n# two\r\n1,0,abc,0,0,0\n",
            "line 9, column z",
            &["`abc`"],
        );
        // A repeated pose is a warning, not an error.
        let (job, _dir) = load_csv(
            "x,y,z,roll,pitch,yaw\n0,0,0,0,0,0\n0,0,0,0,0,0\n5,0,0,0,0,0\n",
            &overrides(),
        );
        let job = job.unwrap();
        assert_eq!(job.warnings.len(), 1);
        assert_eq!(job.warnings[0].waypoint, Some(1));
        assert_eq!(job.warnings[0].location, "seam.csv line 3");
    }

    #[test]
    fn quaternion_warning_worded_as_in_yaml() {
        // The same quaternion off unit length in a CSV row and in a YAML waypoint: one message,
        // only the location differs (file line and columns, or the field path).
        let (csv_job, _dir) = load_csv(
            "x,y,z,qw,qx,qy,qz\n0,0,0,1,0,0,0.5\n1,0,0,1,0,0,0\n",
            &overrides(),
        );
        let csv_job = csv_job.unwrap();
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("job.yaml");
        let text = "robot: arm.urdf\nspeed: 20\nwaypoints:\n  - {xyz: [0, 0, 0], quat: [1, 0, 0, 0.5]}\n  - {xyz: [1, 0, 0], quat: [1, 0, 0, 0]}\n";
        std::fs::write(&p, text).unwrap();
        let yaml_job = load(&p, &Overrides::default()).unwrap();
        let (c, y) = (&csv_job.warnings[0], &yaml_job.warnings[0]);
        assert_eq!(c.location, "seam.csv line 2, columns qw,qx,qy,qz");
        assert_eq!(y.location, "waypoints[0].quat");
        assert_eq!((c.waypoint, y.waypoint), (Some(0), Some(0)));
        assert_eq!(c.message, y.message);
        // source: common practice, |(1, 0, 0, 0.5)| = sqrt(1.25)
        let norm = 1.25f64.sqrt();
        assert!(c.message.starts_with(&format!(
            "the quaternion [1, 0, 0, 0.5] has length {norm}; "
        )));
    }

    #[test]
    fn non_utf8_csv_is_an_error() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("bin.csv");
        std::fs::write(&p, b"x,y,z,roll,pitch,yaw\n# c\n0,0,\xff\xfe,0,0,0\n").unwrap();
        match load(&p, &overrides()) {
            Err(Error::Input {
                location, message, ..
            }) => {
                assert_eq!(location, "line 3");
                assert!(message.contains("field 3 is not UTF-8"), "{message}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn missing_csv_named_by_path_file() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("job.yaml");
        std::fs::write(&p, "robot: a.urdf\nspeed: 5\nwaypoints: gone.csv\n").unwrap();
        match load(&p, &Overrides::default()) {
            Err(Error::Input {
                path,
                location,
                message,
            }) => {
                assert_eq!(path, dir.path().join("gone.csv"));
                assert_eq!(location, "file");
                assert!(message.contains("does not exist"), "{message}");
                assert!(message.contains("named by `waypoints:`"), "{message}");
            }
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn hundred_thousand_rows_parse_fast() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("long.csv");
        let mut text = String::with_capacity(6_000_000);
        text.push_str("name,x,y,z,roll,pitch,yaw,speed\n");
        for i in 0..100_000 {
            let s = i as f64 * 0.5;
            text.push_str(&format!(
                "p{i},{s},{},{},180,0,{},\n",
                s.sin(),
                0.1 * s,
                i % 90
            ));
        }
        std::fs::write(&p, text).unwrap();
        let start = Instant::now();
        let job = load(&p, &overrides()).unwrap();
        let took = start.elapsed();
        assert_eq!(job.waypoints.len(), 100_000);
        assert_eq!(job.waypoint_origin(99_999), "long.csv line 100001");
        // Linear reading takes ~0.1 s with optimisation; a quadratic step (1e10 operations)
        // would take far longer than this generous bound for a shared machine.
        assert!(took < Duration::from_secs(3), "took {took:?}");
    }
}
