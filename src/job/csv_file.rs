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
//!
//! Exactly one orientation set must be present, complete. Lines starting with `#` are comments
//! and empty lines are skipped; both still count for line numbers. Messages give the line
//! number (1-based, the header is line 1 when nothing precedes it) and the column name.
//!
//! Records are read one at a time into one reused buffer, so time and memory grow linearly
//! with the number of rows.

use super::units::{self, PoseError, RawOrientation, Units};
use super::yaml::{check_file, LoadedWaypoint};
use super::{InputWarning, Motion, Waypoint};
use crate::error::Error;
use std::path::Path;

/// Every column name the format knows, for messages.
const ALLOWED_COLUMNS: &str =
    "x, y, z, qw, qx, qy, qz, roll, pitch, yaw, rx, ry, rz, name, speed, motion, process";

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
) -> Result<Vec<LoadedWaypoint>, Error> {
    check_file(path, "CSV waypoint file", referenced_by)?;
    let file = std::fs::File::open(path).map_err(|e| {
        Error::input(
            path,
            "file",
            format!("cannot be opened ({e}): check that the file is readable"),
        )
    })?;
    let mut reader = csv::ReaderBuilder::new()
        // The header is read by hand so that its line number is known and checked like data.
        .has_headers(false)
        // Field counts are checked by hand to give a message with the expected count.
        .flexible(true)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(std::io::BufReader::new(file));

    let file_name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| path.display().to_string());
    let mut record = csv::StringRecord::new();

    if !read(&mut reader, &mut record, path)? {
        return Err(Error::input(
            path,
            "file",
            format!(
                "has no header row: the first line must name the columns, e.g. \
                 `name,x,y,z,roll,pitch,yaw` (allowed: {ALLOWED_COLUMNS})"
            ),
        ));
    }
    let header_line = line_of(&record);
    let cols = parse_header(&record, header_line, path)?;

    let mut out = Vec::new();
    while read(&mut reader, &mut record, path)? {
        let line = line_of(&record);
        let index = out.len();
        out.push(parse_row(
            &record, &cols, line, index, units, path, &file_name, warnings,
        )?);
    }
    Ok(out)
}

/// Reads the next record; `false` at end of file.
fn read<R: std::io::Read>(
    reader: &mut csv::Reader<R>,
    record: &mut csv::StringRecord,
    path: &Path,
) -> Result<bool, Error> {
    reader.read_record(record).map_err(|e| {
        let location = e
            .position()
            .map(|p| format!("line {}", p.line()))
            .unwrap_or_else(|| "file".to_string());
        let hint = match e.kind() {
            csv::ErrorKind::Utf8 { .. } => {
                "the file is not UTF-8 text: save it as UTF-8 CSV (comma-separated)"
            }
            csv::ErrorKind::Io(_) => "check that the file is readable",
            _ => "check the CSV syntax (commas, quotes) on that line",
        };
        Error::input(path, location, format!("{e}: {hint}"))
    })
}

fn line_of(record: &csv::StringRecord) -> u64 {
    record.position().map(|p| p.line()).unwrap_or(0)
}

fn parse_header(record: &csv::StringRecord, line: u64, path: &Path) -> Result<Columns, Error> {
    let names: Vec<String> = record
        .iter()
        .enumerate()
        // A spreadsheet may save a UTF-8 byte-order mark before the first name.
        .map(|(i, s)| {
            let s = if i == 0 { s.trim_start_matches('\u{feff}') } else { s };
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
                format!(
                    "unknown column `{n}`: rename or remove it (allowed: {ALLOWED_COLUMNS})"
                ),
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
        count: names.len(),
    })
}

#[allow(clippy::too_many_arguments)]
fn parse_row(
    record: &csv::StringRecord,
    cols: &Columns,
    line: u64,
    index: usize,
    units: &Units,
    path: &Path,
    file_name: &str,
    warnings: &mut Vec<InputWarning>,
) -> Result<LoadedWaypoint, Error> {
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
    let set_loc = format!("line {line}, columns {}", members.join(","));
    let (work_T_tcp, renormalised) = units::pose(xyz, Some(&raw), units).map_err(|e| match e {
        PoseError::Xyz(m) => Error::input(path, loc("x,y,z"), m),
        PoseError::Orientation(m) => Error::input(path, set_loc.clone(), m),
    })?;
    if let Some(norm) = renormalised {
        warnings.push(InputWarning {
            location: format!("{file_name} line {line}, columns {}", members.join(",")),
            message: format!(
                "the quaternion has length {norm}; armpath normalised it: write a unit \
                 quaternion to silence this warning"
            ),
            waypoint: Some(index),
        });
    }

    let name = cols.name.map(field).filter(|s| !s.is_empty());
    let name_given = name.is_some();
    let name = name
        .map(str::to_string)
        .unwrap_or_else(|| format!("wp{}", index + 1));

    let speed = match cols.speed.filter(|&i| !field(i).is_empty()) {
        None => None,
        Some(i) => {
            let v = number(i, "speed")?;
            if v <= 0.0 {
                return Err(Error::input(
                    path,
                    loc("speed"),
                    format!(
                        "must be greater than 0 (got {v}): give the TCP speed in {} or leave \
                         the cell empty to use the job's speed",
                        units.speed_name()
                    ),
                ));
            }
            Some(units.length(v))
        }
    };

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

    Ok(LoadedWaypoint {
        waypoint: Waypoint {
            name,
            work_T_tcp,
            motion,
            speed,
            process,
            origin: format!("{file_name} line {line}"),
        },
        location: format!("line {line}"),
        name_given,
    })
}
