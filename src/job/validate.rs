//! The waypoint checks, worded once for both readers: a pose's position and orientation (and
//! the warning for a quaternion off unit length), a segment speed, and the checks across the
//! waypoints (count, unique names, segment keys on the first waypoint, repeated poses, turns
//! in place). The YAML list and the CSV rows differ only in how a [`Place`] names a value.

use super::units::{self, fmt_list, fmt_num, PoseError, RawOrientation, Units};
use super::{InputWarning, Motion, NamesBuilder, Waypoint, WaypointNames};
use crate::error::Error;
use crate::rotation;
use nalgebra::Isometry3;
use std::path::Path;

/// Two consecutive waypoints closer than this (m) are at the same position. 1 nm is far below
/// any robot's repeatability, so only exact repeats (up to unit-conversion rounding) match.
const SAME_POSITION: f64 = 1e-9;

/// Two consecutive orientations closer than this (rad) are the same, for the same reason.
const SAME_ORIENTATION: f64 = 1e-9;

/// for their messages.
#[derive(Debug)]
pub(super) struct Loaded {
    pub waypoints: Vec<Waypoint>,
    pub names: NamesBuilder,
    /// The file gave the first waypoint's motion (`motion:` key or a non-empty `motion` cell).
    pub first_motion_given: bool,
}

/// Location of waypoint `i` in its file for errors: `waypoints[2]` or `line 5`.
fn location(w: &Waypoint, i: usize) -> String {
    if w.line == 0 {
        format!("waypoints[{i}]")
    } else {
        format!("line {}", w.line)
    }
}

/// Where a pose's values sit in their file, which is all that differs between the readers'
/// messages.
#[derive(Debug, Clone, Copy)]
pub(super) enum Place<'a> {
    /// A mapping of a YAML path file, by its field path (`tool`, `work_frame`,
    /// `waypoints[3]`); the values are its keys (`waypoints[3].xyz`).
    Field(&'a str),
    /// A row of a CSV waypoint file: the file's name (for warnings, which carry no path), the
    /// 1-based line and the orientation columns in order (`qw,qx,qy,qz`).
    Row {
        file_name: &'a str,
        line: u64,
        columns: &'a str,
    },
}

impl Place<'_> {
    /// Location of the position values.
    fn xyz(&self) -> String {
        match self {
            Place::Field(f) => format!("{f}.xyz"),
            Place::Row { line, .. } => format!("line {line}, column x,y,z"),
        }
    }

    /// Location of the orientation values `o` (YAML names the key given).
    fn orientation(&self, o: Option<&RawOrientation>) -> String {
        match self {
            Place::Field(f) => format!("{f}.{}", o.map(|o| o.key()).unwrap_or("orientation")),
            Place::Row { line, columns, .. } => format!("line {line}, columns {columns}"),
        }
    }

    /// Location of a warning about the quaternion: warnings name the file themselves.
    fn quaternion_warning(&self) -> String {
        match self {
            Place::Field(f) => format!("{f}.quat"),
            Place::Row {
                file_name,
                line,
                columns,
            } => format!("{file_name} line {line}, columns {columns}"),
        }
    }

    /// Location of a segment speed, and how the message names the value: a CSV cell may be
    /// left empty to take the job's speed, which the message says.
    fn speed(&self) -> (String, &'static str) {
        match self {
            Place::Field(f) => (
                format!("{f}.speed"),
                "the TCP speed of the segment ending here",
            ),
            Place::Row { line, .. } => (
                format!("line {line}, column speed"),
                "the TCP speed (or leave the cell empty to use the job's speed)",
            ),
        }
    }
}

/// A pose from `xyz` (file length unit) and orientation `o` (identity when `None`) in `units`,
/// at `place` of file `path`. A quaternion off unit length is normalised and adds a warning
/// for `waypoint` (`None` for a tool or work frame) to `warnings`.
pub(super) fn pose(
    xyz: [f64; 3],
    o: Option<&RawOrientation>,
    units: &Units,
    path: &Path,
    place: Place,
    waypoint: Option<usize>,
    warnings: &mut Vec<InputWarning>,
) -> Result<Isometry3<f64>, Error> {
    let (pose, renormalised) = units::pose(xyz, o, units).map_err(|e| match e {
        PoseError::Xyz(m) => Error::input(path, place.xyz(), m),
        PoseError::Orientation(m) => Error::input(path, place.orientation(o), m),
    })?;
    if let (Some(norm), Some(RawOrientation::Quat(q))) = (renormalised, o) {
        warnings.push(InputWarning {
            location: place.quaternion_warning(),
            message: format!(
                "the quaternion {} has length {norm}; armpath normalised it: write a unit \
                 quaternion to silence this warning",
                fmt_list(q)
            ),
            waypoint,
        });
    }
    Ok(pose)
}

/// The TCP speed `v` (file length unit per second) of the segment ending at `place`, in m/s;
/// refused unless positive and within [`units::SPEED_RANGE_M_S`].
pub(super) fn segment_speed(
    v: f64,
    units: &Units,
    path: &Path,
    place: Place,
) -> Result<f64, Error> {
    let (location, what) = place.speed();
    units::check_positive(
        v,
        units.length_to_m(),
        units::SPEED_RANGE_M_S,
        what,
        &units.speed_name(),
    )
    .map_err(|m| Error::input(path, location, m))?;
    Ok(units.length(v))
}

/// The warning for segment keys on the first waypoint, which ends no segment: it names the
/// keys actually given (`motion: joint`, `speed`, `process: true`), or `None` when there are
/// none. `process: false` and an absent motion change nothing and are not mentioned.
fn first_waypoint_warning(w: &Waypoint, motion_given: bool, file: &Path) -> Option<InputWarning> {
    let mut keys = Vec::new();
    if motion_given {
        keys.push(match w.motion {
            Motion::Joint => "`motion: joint`",
            Motion::Linear => "`motion: linear`",
        });
    }
    if w.speed.is_some() {
        keys.push("`speed`");
    }
    if w.process {
        keys.push("`process: true`");
    }
    let (list, verb, pronoun) = match keys.split_last()? {
        (one, []) => (one.to_string(), "describes", "it"),
        (last, init) => (
            format!("{} and {last}", init.join(", ")),
            "describe",
            "them",
        ),
    };
    let joint_hint = if motion_given && w.motion == Motion::Joint {
        "; to reach it by a joint move, put a start waypoint (a home pose, say) before it"
    } else {
        ""
    };
    Some(InputWarning {
        location: super::origin(file, w.line, 0),
        message: format!(
            "{list} {verb} the segment ending at a waypoint, and the first waypoint ends none, \
             so armpath ignores {pronoun} there: remove {pronoun} or move {pronoun} to the \
             second waypoint{joint_hint}"
        ),
        waypoint: Some(0),
    })
}

/// Checks across waypoints: count, unique names, repeated poses, turns in place.
pub(super) fn check_waypoints(
    loaded: Loaded,
    file: &Path,
    orientation_speed: Option<f64>,
    units: &Units,
    warnings: &mut Vec<InputWarning>,
) -> Result<(Vec<Waypoint>, WaypointNames), Error> {
    let Loaded {
        waypoints,
        names,
        first_motion_given,
    } = loaded;
    let names = names.finish();
    if waypoints.len() < 2 {
        return Err(Error::input(
            file,
            "waypoints",
            format!(
                "has {} waypoint{}: a path needs at least two (a start and an end)",
                waypoints.len(),
                if waypoints.len() == 1 { "" } else { "s" }
            ),
        ));
    }
    check_unique_names(&waypoints, &names, file)?;
    if let Some(w) = first_waypoint_warning(&waypoints[0], first_motion_given, file) {
        warnings.push(w);
    }
    for (i, pair) in waypoints.windows(2).enumerate() {
        let (a, b) = (&pair[0], &pair[1]);
        let distance = (b.work_T_tcp.translation.vector - a.work_T_tcp.translation.vector).norm();
        if distance >= SAME_POSITION {
            continue;
        }
        let (a_name, b_name) = (
            names.get(i).unwrap_or_default(),
            names.get(i + 1).unwrap_or_default(),
        );
        let angle = rotation::angle_between(&a.work_T_tcp.rotation, &b.work_T_tcp.rotation);
        if angle < SAME_ORIENTATION {
            warnings.push(InputWarning {
                location: super::origin(file, b.line, i + 1),
                message: format!(
                    "`{b_name}` repeats the pose of `{a_name}` (the segment between them is \
                     empty): remove one of them"
                ),
                waypoint: Some(i + 1),
            });
        } else if b.motion == Motion::Linear && orientation_speed.is_none() {
            return Err(Error::input(
                file,
                location(b, i + 1),
                format!(
                    "the linear segment from `{a_name}` to `{b_name}` turns the tool by {} {} \
                     without moving the TCP, so the TCP speed gives it no duration: set \
                     orientation_speed or move the TCP (or use motion: joint)",
                    fmt_num(angle / units.angle_to_rad()),
                    units.angle.name()
                ),
            ));
        }
    }
    Ok((waypoints, names))
}

/// Refuses two waypoints of the same name. Generated names (`wp<n>`, n the 1-based position)
/// are unique among themselves, so only a given name can clash: with another given name, or
/// with the generated name of an unnamed waypoint. The pair reported is the one completed
/// first in path order. Given names are compared by sorting their indices (4 bytes each), so
/// a path of a million named waypoints needs no hash map; a path without names needs nothing.
fn check_unique_names(
    waypoints: &[Waypoint],
    names: &WaypointNames,
    file: &Path,
) -> Result<(), Error> {
    let given = |i: usize| names.given(i);
    let mut order: Vec<u32> = (0..names.len())
        .filter(|&i| given(i).is_some())
        .filter_map(|i| u32::try_from(i).ok())
        .collect();
    if order.is_empty() {
        return Ok(());
    }
    order.sort_unstable_by(|&a, &b| given(a as usize).cmp(&given(b as usize)).then(a.cmp(&b)));
    // The earliest waypoint whose name an earlier given name already has, with that one.
    let repeat = order
        .windows(2)
        .filter(|p| given(p[0] as usize) == given(p[1] as usize))
        .map(|p| (p[1] as usize, p[0] as usize))
        .min();
    drop(order);
    // The unnamed waypoint whose generated name the given name of `i` spells, if any.
    let clash = |i: usize| {
        let digits = given(i)?.strip_prefix("wp")?;
        let n = digits.parse::<usize>().ok()?;
        let j = n.checked_sub(1)?;
        let generated = n.to_string() == digits && j < names.len() && given(j).is_none();
        (generated && j != i).then_some(j)
    };
    let limit = repeat.map_or(names.len(), |(i, _)| i);
    let pair = (0..limit).find_map(|i| clash(i).map(|j| (i, j))).or(repeat);
    let Some((i, other)) = pair else {
        return Ok(());
    };
    let (first, second) = (other.min(i), other.max(i));
    let describe = |k: usize| {
        let l = location(&waypoints[k], k);
        if given(k).is_some() {
            l
        } else {
            format!("{l} (which has no name, so it got the default)")
        }
    };
    Err(Error::input(
        file,
        location(&waypoints[second], second),
        format!(
            "the name `{}` is also the name of {} and {}: give each waypoint its own name",
            names.get(second).unwrap_or_default(),
            describe(first),
            describe(second)
        ),
    ))
}
