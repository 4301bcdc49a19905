//! The setting flags shared by `check`, `fix` and `place`: one set of names, one set of value
//! parsers, one conversion into [`Overrides`] and [`CheckOptions`].
//!
//! Malformed values are refused by clap's value parsers with a [`FlagError`]; the binary
//! prints those as `--option: what is wrong`.

use armpath::check::CheckOptions;
use armpath::error::Result as Checked;
use armpath::job::{self, Job, Overrides};
use armpath::output;
use std::path::{Path, PathBuf};

/// Why a flag's value was refused (the message says what to give instead).
#[derive(Debug, Clone, PartialEq)]
pub struct FlagError(pub String);

impl std::fmt::Display for FlagError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for FlagError {}

/// "a,b,c" into finite numbers (empty items are skipped); `count` is the expected number.
pub fn number_list(text: &str, count: Option<usize>) -> Result<Vec<f64>, FlagError> {
    let values: Vec<f64> = text
        .split(',')
        .map(str::trim)
        .filter(|s| !s.is_empty())
        .enumerate()
        .map(|(i, s)| {
            s.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| FlagError(format!("value {} ('{s}') is not a finite number", i + 1)))
        })
        .collect::<Result<_, _>>()?;
    match count {
        Some(n) if values.len() != n => Err(FlagError(format!(
            "expects {n} comma-separated numbers, got {}",
            values.len()
        ))),
        _ => Ok(values),
    }
}

/// A pose "x,y,z,roll,pitch,yaw".
pub fn pose6(text: &str) -> Result<[f64; 6], FlagError> {
    let v = number_list(text, Some(6))?;
    Ok([v[0], v[1], v[2], v[3], v[4], v[5]])
}

/// Joint values from the command line, in the command line's units (a type of its own so
/// that clap takes the list as one value).
#[derive(Debug, Clone, PartialEq)]
pub struct JointValues(pub Vec<f64>);

/// Any number of joint values "j1,j2,...".
pub fn joint_list(text: &str) -> Result<JointValues, FlagError> {
    number_list(text, None).map(JointValues)
}

/// `--units`: "LENGTH,ANGLE", either part may be left out.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct UnitsFlag {
    pub length: Option<String>,
    pub angle: Option<String>,
}

/// `mm,deg` → lengths and angles; `m` alone sets only the length unit.
pub fn units(text: &str) -> Result<UnitsFlag, FlagError> {
    let mut u = UnitsFlag::default();
    for part in text.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        match part {
            "mm" | "m" => u.length = Some(part.to_string()),
            "deg" | "rad" => u.angle = Some(part.to_string()),
            other => {
                return Err(FlagError(format!(
                    "'{other}' is not a unit: give LENGTH,ANGLE with LENGTH mm or m and ANGLE \
                     deg or rad"
                )))
            }
        }
    }
    Ok(u)
}

/// Most threads `--threads` accepts: far above any core count where splitting eight
/// configuration walks could help, low enough to refuse a typo.
pub const MAX_THREADS: usize = 256;

/// `--threads N`: a whole number from 1 to [`MAX_THREADS`].
pub fn threads(text: &str) -> Result<usize, FlagError> {
    match text.trim().parse::<usize>() {
        Ok(n) if (1..=MAX_THREADS).contains(&n) => Ok(n),
        _ => Err(FlagError(format!(
            "'{text}' is not a whole number from 1 to {MAX_THREADS}: give the threads to use"
        ))),
    }
}

/// `--singularity-threshold`: a number in (0, 1).
pub fn singularity_threshold(text: &str) -> Result<f64, FlagError> {
    let t: f64 = text
        .trim()
        .parse()
        .map_err(|_| FlagError(format!("'{text}' is not a number: give a value in (0, 1)")))?;
    if t.is_finite() && t > 0.0 && t < 1.0 {
        Ok(t)
    } else {
        Err(FlagError(format!(
            "{t} is not in (0, 1): the measure runs from 0 (singular) to 1"
        )))
    }
}

/// Inverse kinematics along the path.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum IkMode {
    /// The closed form for arms that have one, with the configuration table; else numerical.
    Auto,
    /// Always the numerical solver.
    Numeric,
}

/// The settings a path file can take from the command line, shared by `check`, `fix` and
/// `place`.
#[derive(clap::Args, Debug, Clone)]
pub struct SettingFlags {
    /// Robot URDF (replaces the path file's `robot:`).
    #[arg(long, value_name = "URDF")]
    pub robot: Option<PathBuf>,
    /// Tip link (replaces `tip:`).
    #[arg(long, value_name = "LINK")]
    pub tip: Option<String>,
    /// TCP speed, length unit per second (replaces `speed:`).
    #[arg(long, value_name = "V", allow_negative_numbers = true)]
    pub speed: Option<f64>,
    /// Programmed reorientation speed, angle unit per second.
    #[arg(long, value_name = "W", allow_negative_numbers = true)]
    pub orientation_speed: Option<f64>,
    /// Tool "x,y,z,roll,pitch,yaw" in the tip-link frame (replaces `tool:` pose).
    #[arg(long, value_name = "X,Y,Z,R,P,Y", allow_hyphen_values = true, value_parser = pose6)]
    pub tool: Option<[f64; 6]>,
    /// Work frame "x,y,z,roll,pitch,yaw" in the robot base frame (replaces `work_frame:`).
    #[arg(long, value_name = "X,Y,Z,R,P,Y", allow_hyphen_values = true, value_parser = pose6)]
    pub work_frame: Option<[f64; 6]>,
    /// Joints at the first waypoint "j1,j2,..." (angle unit; length unit for prismatic).
    #[arg(long, value_name = "LIST", allow_hyphen_values = true, value_parser = joint_list)]
    pub start_joints: Option<JointValues>,
    /// Use the start joints (--start-joints or `start_joints:`) only as a starting guess:
    /// the first pose is solved nearest them instead of requiring them to reach it.
    #[arg(long)]
    pub start_joints_as_seed: bool,
    /// Largest tool angular speed, angle unit per second.
    #[arg(long, value_name = "W", allow_negative_numbers = true)]
    pub tool_angular_speed: Option<f64>,
    /// Fraction of each joint's URDF velocity that may be used, in (0, 1].
    #[arg(long, value_name = "F", allow_negative_numbers = true)]
    pub joint_speed_scale: Option<f64>,
    /// Largest TCP acceleration, length unit/s² (replaces `limits.tcp_acceleration`).
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    pub tcp_acceleration: Option<f64>,
    /// Largest tool angular acceleration, angle unit/s² (replaces
    /// `limits.tool_angular_acceleration`).
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    pub tool_angular_acceleration: Option<f64>,
    /// Factor on the default joint accelerations, 0.001 to 1000 (replaces
    /// `limits.joint_acceleration_scale`).
    #[arg(long, value_name = "F", allow_negative_numbers = true)]
    pub joint_acceleration_scale: Option<f64>,
    /// Share of the programmed speed a process segment may lose, in [0, 1) (replaces
    /// `limits.process_speed_tolerance`).
    #[arg(long, value_name = "F", allow_negative_numbers = true)]
    pub process_speed_tolerance: Option<f64>,
    /// Smallest gap kept between bodies of the cell model, length unit (replaces
    /// `limits.clearance`).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub clearance: Option<f64>,
    /// Largest TCP step between samples, length unit.
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub step: Option<f64>,
    /// Largest orientation step between samples, angle unit.
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    pub angle_step: Option<f64>,
    /// Units of the values given on the command line (and of a CSV file loaded directly):
    /// "LENGTH,ANGLE" with LENGTH mm or m and ANGLE deg or rad (default mm,deg). A path file's
    /// own values keep the file's `units:`.
    #[arg(long, value_name = "LENGTH,ANGLE", value_parser = units)]
    pub units: Option<UnitsFlag>,
    /// Singularity measure below which a warning is raised (dimensionless, default 0.01).
    #[arg(long, value_name = "X", allow_negative_numbers = true, value_parser = singularity_threshold)]
    pub singularity_threshold: Option<f64>,
    /// Inverse kinematics along the path.
    #[arg(long, value_name = "MODE", default_value = "auto", value_enum)]
    pub ik: IkMode,
    /// Cell file: the part's, fixtures' and cell's bodies and the allowed contacts (replaces
    /// the path file's `cell:`); with it the check tests collisions and clearance.
    #[arg(long, value_name = "FILE")]
    pub cell: Option<PathBuf>,
    /// Refuse paths that would need more samples than N (default 100000000).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    pub max_samples: Option<u64>,
    /// Threads for the check (default: the available cores; the result is the same with
    /// any number). From 2 on, the main walk runs beside the configuration table, whose
    /// walks share the other threads.
    #[arg(long, value_name = "N", allow_negative_numbers = true, value_parser = threads)]
    pub threads: Option<usize>,
}

impl SettingFlags {
    /// The job overrides and check options these flags ask for. Range checks on the values
    /// (a speed > 0, a scale in (0, 1]) are the job loader's, which names the flag.
    pub fn settings(&self) -> (Overrides, CheckOptions) {
        let units = self.units.clone().unwrap_or_default();
        let overrides = Overrides {
            robot: self.robot.clone(),
            tip: self.tip.clone(),
            units_length: units.length,
            units_angle: units.angle,
            speed: self.speed,
            orientation_speed: self.orientation_speed,
            tool: self.tool,
            work_frame: self.work_frame,
            start_joints: self.start_joints.as_ref().map(|j| j.0.clone()),
            start_joints_seed: self.start_joints_as_seed,
            tool_angular_speed: self.tool_angular_speed,
            joint_speed_scale: self.joint_speed_scale,
            step: self.step,
            angle_step: self.angle_step,
            tcp_acceleration: self.tcp_acceleration,
            tool_angular_acceleration: self.tool_angular_acceleration,
            joint_acceleration_scale: self.joint_acceleration_scale,
            process_speed_tolerance: self.process_speed_tolerance,
            clearance: self.clearance,
            cell: self.cell.clone(),
        };
        let mut options = CheckOptions::default();
        if let Some(t) = self.singularity_threshold {
            options.thresholds.singularity = t;
        }
        if let Some(n) = self.max_samples {
            options.max_samples = n;
        }
        options.numeric_only = self.ik == IkMode::Numeric;
        options.threads = self.threads.unwrap_or_else(rayon::current_num_threads);
        (overrides, options)
    }

    /// The start of every command that checks a path: refuse unusable output paths, load the
    /// job from `path` with these settings, and refuse outputs that would replace one of its
    /// input files or each other. `outputs` are (option, path), `None` when not asked for.
    pub fn load_job(
        &self,
        path: &Path,
        outputs: &[(&str, Option<&Path>)],
    ) -> Checked<(Job, CheckOptions)> {
        for (option, p) in outputs {
            output::check_target(option, *p)?;
        }
        let (overrides, options) = self.settings();
        let job = job::load(path, &overrides)?;
        output::refuse_overwrite(&output::job_inputs(&job), outputs)?;
        Ok((job, options))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn number_lists_refuse_text_and_wrong_counts() {
        // source: common practice (comma-separated values, one message per fault)
        assert_eq!(number_list("1, 2,,3", None).unwrap(), vec![1.0, 2.0, 3.0]);
        assert_eq!(
            number_list("1,x", None).unwrap_err().0,
            "value 2 ('x') is not a finite number"
        );
        assert_eq!(
            pose6("1,2,3,4,5").unwrap_err().0,
            "expects 6 comma-separated numbers, got 5"
        );
        assert!(number_list("1,inf", None).is_err());
    }

    #[test]
    fn units_take_either_part() {
        // source: common practice
        let u = units("m").unwrap();
        assert_eq!(u.length.as_deref(), Some("m"));
        assert_eq!(u.angle, None);
        let u = units("rad,mm").unwrap();
        assert_eq!(
            (u.length.as_deref(), u.angle.as_deref()),
            (Some("mm"), Some("rad"))
        );
        assert!(units("inch")
            .unwrap_err()
            .0
            .contains("'inch' is not a unit"));
    }

    #[test]
    fn threads_must_be_a_whole_number_from_one() {
        // source: common practice (a thread count is a positive whole number)
        assert_eq!(threads("2").unwrap(), 2);
        assert_eq!(threads(&MAX_THREADS.to_string()).unwrap(), MAX_THREADS);
        for bad in ["0", "-1", "1.5", "x", "", "257"] {
            assert!(threads(bad).is_err(), "{bad}");
        }
    }

    #[test]
    fn singularity_threshold_must_lie_strictly_inside_zero_one() {
        // source: common practice (the measure is normalised to [0, 1])
        assert_eq!(singularity_threshold("0.05").unwrap(), 0.05);
        for bad in ["0", "1", "2", "-0.1", "nan", "x"] {
            assert!(singularity_threshold(bad).is_err(), "{bad}");
        }
    }
}
