//! The assembly of a [`Job`] from a path file's spec and the command-line [`Overrides`]:
//! every setting checked, defaults filled in, and every value converted to SI here, once.
//! A CSV waypoint file loaded directly assembles with an empty spec.

use super::csv_file;
use super::schema::{MotionSpec, PathFileSpec, SpeedSpec, WaypointSpec, WaypointsSpec};
use super::units::{self, check_finite_array, AngleUnit, LengthUnit, PoseError};
use super::units::{RawOrientation, Units};
use super::validate::{self, Loaded, Place};
use super::{
    ConfigRequest, InputWarning, Job, Motion, NamesBuilder, Overrides, StartJoints, Waypoint,
};
use crate::error::Error;
use nalgebra::Isometry3;
use std::path::{Path, PathBuf};

mod settings;

/// The job of a YAML path file `path` from its parsed `spec` (in the file's units) and the
/// overrides `ov` (in `override_units`, see [`Overrides::units`]).
pub(super) fn from_spec(
    path: &Path,
    spec: PathFileSpec,
    ov: &Overrides,
    override_units: Units,
) -> Result<Job, Error> {
    let file_units = match &spec.units {
        None => Units::default(),
        Some(u) => Units {
            length: u.length.unwrap_or(LengthUnit::Mm),
            angle: u.angle.unwrap_or(AngleUnit::Deg),
        },
    };
    build(
        path,
        spec,
        file_units,
        ov,
        override_units,
        Source::Yaml,
        Vec::new(),
    )
}

/// The job of a CSV waypoint file loaded directly, from its parsed waypoints (read in
/// `override_units`, which every setting then comes in too) and their warnings.
pub(super) fn from_csv(
    path: &Path,
    overrides: &Overrides,
    override_units: Units,
    loaded: Loaded,
    warnings: Vec<InputWarning>,
) -> Result<Job, Error> {
    build(
        path,
        PathFileSpec::default(),
        override_units,
        overrides,
        override_units,
        Source::Csv(loaded, path.to_path_buf()),
        warnings,
    )
}

/// Where the waypoints come from.
enum Source {
    /// From the path file's `waypoints:` (a list or a CSV file name).
    Yaml,
    /// A CSV file loaded directly (already read), and its path.
    Csv(Loaded, PathBuf),
}

/// Where a setting's value came from, for errors.
#[derive(Clone, Copy)]
enum At<'a> {
    /// A field of the path file.
    File(&'a Path, &'a str),
    /// A command-line option.
    Option(&'a str),
}

impl At<'_> {
    fn error(&self, msg: String) -> Error {
        match self {
            At::File(path, field) => Error::input(*path, *field, msg),
            At::Option(opt) => Error::usage(*opt, msg),
        }
    }
}

/// A value > 0, finite and in `range_si` (SI), given in a unit of `si` SI per unit; `what` and
/// `unit` complete the message.
fn positive(
    v: f64,
    at: At,
    what: &str,
    unit: &str,
    si: f64,
    range_si: (f64, f64),
) -> Result<f64, Error> {
    units::check_positive(v, si, range_si, what, unit).map_err(|m| at.error(m))?;
    Ok(v)
}

/// The orientation of a pose: at most one of the three forms.
fn one_orientation(
    rpy: Option<[f64; 3]>,
    quat: Option<[f64; 4]>,
    rotvec: Option<[f64; 3]>,
) -> Result<Option<RawOrientation>, String> {
    let given: Vec<RawOrientation> = [
        rpy.map(RawOrientation::Rpy),
        quat.map(RawOrientation::Quat),
        rotvec.map(RawOrientation::Rotvec),
    ]
    .into_iter()
    .flatten()
    .collect();
    match given.as_slice() {
        [] => Ok(None),
        [o] => Ok(Some(*o)),
        several => {
            let keys: Vec<&str> = several.iter().map(|o| o.key()).collect();
            Err(format!(
                "gives {}: give exactly one orientation (rpy, quat or rotvec)",
                keys.join(" and ")
            ))
        }
    }
}

/// A pose from a 6-value override `[x, y, z, roll, pitch, yaw]`.
fn override_pose(v: [f64; 6], option: &str, units: &Units) -> Result<Isometry3<f64>, Error> {
    let o = RawOrientation::Rpy([v[3], v[4], v[5]]);
    units::pose([v[0], v[1], v[2]], Some(&o), units)
        .map(|(p, _)| p)
        .map_err(|e| match e {
            PoseError::Xyz(m) | PoseError::Orientation(m) => Error::usage(option, m),
        })
}

/// Kind of a scalar setting, which fixes its unit in a [`Units`].
#[derive(Clone, Copy)]
enum Quantity {
    Length,
    Angle,
    Speed,
    AngularSpeed,
}

impl Quantity {
    /// The accepted range (SI) of a positive setting of this kind: the sample steps for
    /// lengths and angles, the speed ranges for speeds.
    fn range(self) -> (f64, f64) {
        match self {
            Quantity::Length => units::STEP_RANGE_M,
            Quantity::Angle => units::ANGLE_STEP_RANGE_RAD,
            Quantity::Speed => units::SPEED_RANGE_M_S,
            Quantity::AngularSpeed => units::ANGULAR_SPEED_RANGE_RAD_S,
        }
    }

    /// SI per unit, and the unit's name for messages.
    fn unit(self, u: &Units) -> (f64, String) {
        match self {
            Quantity::Length => (u.length_to_m(), u.length.name().to_string()),
            Quantity::Angle => (u.angle_to_rad(), u.angle.name().to_string()),
            Quantity::Speed => (u.length_to_m(), u.speed_name()),
            Quantity::AngularSpeed => (u.angle_to_rad(), u.angular_speed_name()),
        }
    }
}

/// The `rpy`, `quat` and `rotvec` keys of a pose as read (at most one may be given).
type OrientationKeys = (Option<[f64; 3]>, Option<[f64; 4]>, Option<[f64; 3]>);

/// What every part of the job assembly needs: the file, both unit systems, the warnings.
struct Ctx<'a> {
    path: &'a Path,
    /// Units of the file's values.
    fu: Units,
    /// Units of the override values.
    ou: Units,
    warnings: Vec<InputWarning>,
}

impl Ctx<'_> {
    fn err(&self, location: &str, message: impl Into<String>) -> Error {
        Error::input(self.path, location, message)
    }

    /// A setting > 0 from the file (`field`) and/or an override (`option`), in SI; the override
    /// wins, but a file value is checked either way.
    fn pick(
        &self,
        file: Option<f64>,
        field: &str,
        over: Option<f64>,
        option: &str,
        what: &str,
        q: Quantity,
    ) -> Result<Option<f64>, Error> {
        let (f_si, f_name) = q.unit(&self.fu);
        let (o_si, o_name) = q.unit(&self.ou);
        let from_file = file
            .map(|v| {
                positive(
                    v,
                    At::File(self.path, field),
                    what,
                    &f_name,
                    f_si,
                    q.range(),
                )
            })
            .transpose()?;
        let from_option = over
            .map(|v| positive(v, At::Option(option), what, &o_name, o_si, q.range()))
            .transpose()?;
        Ok(from_option
            .map(|v| v * o_si)
            .or(from_file.map(|v| v * f_si)))
    }

    fn robot_and_tip(
        &self,
        spec: &PathFileSpec,
        ov: &Overrides,
        csv_direct: bool,
    ) -> Result<(PathBuf, Option<String>), Error> {
        let base = self.path.parent().unwrap_or(Path::new(""));
        let robot =
            match (&ov.robot, &spec.robot) {
                (_, Some(r)) if r.trim().is_empty() => {
                    return Err(self.err(
                        "robot",
                        "is empty: give the URDF file, relative to this file's folder",
                    ))
                }
                (Some(r), _) => r.clone(),
                (None, Some(r)) => base.join(r),
                (None, None) if csv_direct => {
                    return Err(self.err(
                        "robot",
                        "a CSV waypoint file names no robot: pass --robot <file.urdf>",
                    ))
                }
                (None, None) => return Err(self.err(
                    "robot",
                    "no robot given: add `robot: <file.urdf>` (relative to this file's folder) \
                     or pass --robot <file.urdf>",
                )),
            };
        if spec.tip.as_deref().is_some_and(|t| t.trim().is_empty()) {
            return Err(self.err(
                "tip",
                "is empty: give the tip link's name or remove the key",
            ));
        }
        if ov.tip.as_deref().is_some_and(|t| t.trim().is_empty()) {
            return Err(Error::usage(
                "--tip",
                "is empty: give the tip link's name or leave the option out",
            ));
        }
        Ok((robot, ov.tip.clone().or(spec.tip.clone())))
    }

    fn start_joints(
        &self,
        file: Option<&Vec<f64>>,
        file_seed: bool,
        ov: &Overrides,
    ) -> Result<Option<StartJoints>, Error> {
        let seed = file_seed || ov.start_joints_seed;
        let joints = |values: &Vec<f64>, u: &Units, at: At, origin: &str| {
            if values.is_empty() {
                return Err(at.error("is empty: give one value per joint, or leave it out".into()));
            }
            check_finite_array(values).map_err(|m| at.error(m))?;
            Ok(StartJoints {
                values: values.clone(),
                angle_to_rad: u.angle_to_rad(),
                length_to_m: u.length_to_m(),
                origin: origin.to_string(),
                seed,
            })
        };
        let from_file = file
            .map(|v| {
                joints(
                    v,
                    &self.fu,
                    At::File(self.path, "start_joints"),
                    "start_joints",
                )
            })
            .transpose()?;
        let from_option = ov
            .start_joints
            .as_ref()
            .map(|v| joints(v, &self.ou, At::Option("--start-joints"), "--start-joints"))
            .transpose()?;
        Ok(from_option.or(from_file))
    }

    /// A pose from the file (`field` = `tool`, `work_frame`, `waypoints[3]`), with a warning
    /// when a quaternion was normalised.
    fn file_pose(
        &mut self,
        field: &str,
        xyz: [f64; 3],
        (rpy, quat, rotvec): OrientationKeys,
        orientation_required: bool,
        waypoint: Option<usize>,
    ) -> Result<Isometry3<f64>, Error> {
        let o = one_orientation(rpy, quat, rotvec).map_err(|m| self.err(field, m))?;
        if o.is_none() && orientation_required {
            return Err(self.err(
                field,
                "has no orientation: add one of rpy: [roll, pitch, yaw], quat: [w, x, y, z] \
                 or rotvec: [x, y, z]",
            ));
        }
        validate::pose(
            xyz,
            o.as_ref(),
            &self.fu,
            self.path,
            Place::Field(field),
            waypoint,
            &mut self.warnings,
        )
    }

    /// The waypoints of a `waypoints:` list.
    fn list_waypoints(&mut self, list: Vec<WaypointSpec>) -> Result<Loaded, Error> {
        let mut out = Loaded {
            waypoints: Vec::with_capacity(list.len()),
            names: NamesBuilder::new(),
            first_motion_given: false,
            move_keys: Vec::new(),
        };
        for (i, w) in list.into_iter().enumerate() {
            let field = format!("waypoints[{i}]");
            let work_T_tcp =
                self.file_pose(&field, w.xyz, (w.rpy, w.quat, w.rotvec), true, Some(i))?;
            let joint_move = matches!(w.motion, Some(MotionSpec::Joint));
            let mut key = crate::motion::MoveKey::default();
            let speed = match w.speed {
                None => None,
                Some(SpeedSpec::Tcp(v)) => Some(validate::segment_speed(
                    v,
                    &self.fu,
                    self.path,
                    Place::Field(&field),
                )?),
                Some(SpeedSpec::Share(p)) => {
                    let at = format!("{field}.speed");
                    key.joint_speed_fraction = Some(super::motion_keys::joint_share(
                        p, joint_move, self.path, &at,
                    )?);
                    None
                }
            };
            if let Some(b) = w.blend {
                key.blend =
                    super::motion_keys::blend(b, &self.fu, self.path, &format!("{field}.blend"))?;
            }
            if w.name.as_deref().is_some_and(|n| n.trim().is_empty()) {
                return Err(self.err(
                    &format!("{field}.name"),
                    "is empty: give a name or remove the key",
                ));
            }
            if i == 0 {
                out.first_motion_given = w.motion.is_some();
            }
            out.names.push(w.name.as_deref());
            out.waypoints.push(Waypoint {
                work_T_tcp,
                speed,
                line: 0,
                motion: match w.motion {
                    Some(MotionSpec::Joint) => Motion::Joint,
                    Some(MotionSpec::Linear) | None => Motion::Linear,
                },
                process: w.process.unwrap_or(false),
            });
            out.set_move_key(key);
        }
        Ok(out)
    }
}

/// Assembles the job from the parsed file (`spec`, in units `fu`; an empty spec for a CSV file
/// loaded directly) and the overrides (in units `ou`).
fn build(
    path: &Path,
    spec: PathFileSpec,
    fu: Units,
    ov: &Overrides,
    ou: Units,
    source: Source,
    warnings: Vec<InputWarning>,
) -> Result<Job, Error> {
    let csv_direct = matches!(source, Source::Csv(..));
    let mut cx = Ctx {
        path,
        fu,
        ou,
        warnings,
    };
    let (robot, tip) = cx.robot_and_tip(&spec, ov, csv_direct)?;

    let speed = cx
        .pick(
            spec.speed,
            "speed",
            ov.speed,
            "--speed",
            "the TCP speed",
            Quantity::Speed,
        )?
        .ok_or_else(|| {
            let msg = if csv_direct {
                format!(
                    "a CSV waypoint file carries no job speed: pass --speed <{}>",
                    ou.speed_name()
                )
            } else {
                format!(
                    "no TCP speed given: add `speed: <{}>` or pass --speed",
                    fu.speed_name()
                )
            };
            cx.err("speed", msg)
        })?;
    let orientation_speed = cx.pick(
        spec.orientation_speed,
        "orientation_speed",
        ov.orientation_speed,
        "--orientation-speed",
        "the reorientation speed",
        Quantity::AngularSpeed,
    )?;
    let limits = cx.limits(spec.limits.as_ref(), ov)?;
    let joint_accelerations =
        super::motion_keys::joint_accelerations(spec.limits.as_ref(), &fu, path)?;
    let sampling = cx.sampling(spec.sampling.as_ref(), ov)?;
    let tool = cx.tool(spec.tool.as_ref(), ov)?;

    let mut base_T_work = match &spec.work_frame {
        None => Isometry3::identity(),
        Some(w) => cx.file_pose("work_frame", w.xyz, (w.rpy, w.quat, w.rotvec), false, None)?,
    };
    if let Some(v) = ov.work_frame {
        base_T_work = override_pose(v, "--work-frame", &ou)?;
    }

    let start_joints = cx.start_joints(
        spec.start_joints.as_ref(),
        spec.start_joints_seed.unwrap_or(false),
        ov,
    )?;
    let config = spec
        .config
        .as_ref()
        .map(|c| ConfigRequest {
            shoulder: c.shoulder,
            elbow: c.elbow,
            wrist: c.wrist,
        })
        .unwrap_or_default();

    let (loaded, waypoint_file) = match source {
        Source::Csv(wps, p) => (wps, p),
        Source::Yaml => match spec.waypoints {
            WaypointsSpec::Csv(name) => {
                if name.trim().is_empty() {
                    return Err(cx.err(
                        "waypoints",
                        "is empty: give a list of waypoints or a CSV file name",
                    ));
                }
                let base = path.parent().unwrap_or(Path::new(""));
                let csv_path = base.join(name.trim());
                let by = format!(
                    "named by `waypoints:` in {}, relative to its folder",
                    path.display()
                );
                let wps = csv_file::read_waypoints(&csv_path, &fu, &by, &mut cx.warnings)?;
                (wps, csv_path)
            }
            WaypointsSpec::List(list) => (cx.list_waypoints(list)?, path.to_path_buf()),
        },
    };
    let cell = match (&ov.cell, &spec.cell) {
        (Some(p), _) => Some(crate::cell::load_cell(p)?),
        (None, Some(name)) => {
            let base = path.parent().unwrap_or(Path::new(""));
            Some(crate::cell::load_cell(&base.join(name.trim()))?)
        }
        (None, None) => None,
    };
    let mut warnings = cx.warnings;
    let mut loaded = loaded;
    let move_keys = loaded.take_move_keys();
    let (waypoints, names) = validate::check_waypoints(
        loaded,
        &waypoint_file,
        orientation_speed,
        &fu,
        &mut warnings,
    )?;

    Ok(Job {
        source: path.to_path_buf(),
        waypoints_file: waypoint_file,
        robot,
        tip,
        tool,
        base_T_work,
        start_joints,
        config,
        speed,
        orientation_speed,
        limits,
        sampling,
        units: fu,
        waypoints: std::sync::Arc::new(waypoints),
        names,
        move_keys: std::sync::Arc::new(move_keys),
        warnings,
        cell: cell.map(std::sync::Arc::new),
        joint_accelerations,
    })
}
