//! The `armpath` command: parses flags, builds the job, runs the library, writes the outputs
//! and picks the exit code (0 pass or warnings, 1 error findings, 2 bad input or usage).

use armpath::check::{check, CheckOptions};
use armpath::error::{Error, Result};
use armpath::ik::analytic::OrthoParallel;
use armpath::ik::{IkOptions, NumericIk};
use armpath::job::{self, Overrides};
use armpath::output;
use armpath::report::html::HtmlReport;
use armpath::report::kinematics::{ClosedForm, IkReport, IkSolutionReport, PoseReport, RobotInfo};
use armpath::report::{render_text, JointsCsv, Style};
use armpath::robot::{load_urdf, Robot};
use armpath::solve::SampleSink;
use clap::{Args, Parser, Subcommand};
use nalgebra::{Isometry3, Translation3, Vector3};
use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// Checks offline-programmed tool paths for industrial robot arms: reach, joint limits,
/// configuration jumps, singularities, tool angular speed and joint speeds.
#[derive(Parser, Debug)]
#[command(name = "armpath", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Check a tool path (YAML path file, or CSV waypoints with --robot and --speed).
    Check(Box<CheckArgs>),
    /// Show a robot: joints, ranges, speeds, reach and wrist type.
    Robot(RobotArgs),
    /// Forward kinematics: the TCP pose for given joints.
    Fk(FkArgs),
    /// Inverse kinematics: joints for a TCP pose.
    Ik(IkArgs),
    /// Search speeds, arm configuration and tool spin that make a path pass; write the
    /// amended path file and compare the check before and after.
    Fix(armpath::fix::cli::FixArgs),
    /// Check the path with the work frame moved over a grid of placements.
    Place(armpath::fix::cli::PlaceArgs),
}

#[derive(Args, Debug)]
struct RobotSel {
    /// The robot's URDF file.
    robot: PathBuf,
    /// Tip link of the chain (default: the only leaf link).
    #[arg(long, value_name = "LINK")]
    tip: Option<String>,
    /// Tool: TCP in the tip-link frame as "x,y,z,roll,pitch,yaw" (mm, deg).
    #[arg(long, value_name = "X,Y,Z,R,P,Y")]
    tool: Option<String>,
}

#[derive(Args, Debug)]
struct RobotArgs {
    /// The robot's URDF file.
    robot: PathBuf,
    /// Tip link of the chain (default: the only leaf link).
    #[arg(long, value_name = "LINK")]
    tip: Option<String>,
    /// Also write the result as JSON to FILE ('-' for standard output).
    #[arg(long, value_name = "FILE")]
    json: Option<PathBuf>,
}

#[derive(Args, Debug)]
struct FkArgs {
    #[command(flatten)]
    sel: RobotSel,
    /// Joint values "j1,j2,..." in degrees (mm for prismatic joints).
    #[arg(long, value_name = "LIST", allow_hyphen_values = true)]
    joints: String,
    /// Joint values are in radians (m for prismatic joints).
    #[arg(long)]
    rad: bool,
    /// Also write the result as JSON to FILE ('-' for standard output).
    #[arg(long, value_name = "FILE")]
    json: Option<PathBuf>,
}

#[derive(Args, Debug)]
struct IkArgs {
    #[command(flatten)]
    sel: RobotSel,
    /// Target TCP pose "x,y,z,qw,qx,qy,qz" (mm; unit quaternion w first) in the base frame.
    #[arg(long, value_name = "LIST", allow_hyphen_values = true)]
    pose: String,
    /// Seed joints "j1,j2,..." (degrees; mm for prismatic); default: a search from many seeds.
    #[arg(long, value_name = "LIST", allow_hyphen_values = true)]
    seed: Option<String>,
    /// Seed joints are in radians (m for prismatic joints).
    #[arg(long)]
    rad: bool,
    /// List every solution inside the joint ranges with its arm configuration and winding
    /// (closed-form solver; arms with an ortho-parallel base and a spherical wrist).
    #[arg(long)]
    all: bool,
    /// Also write the result as JSON to FILE ('-' for standard output).
    #[arg(long, value_name = "FILE")]
    json: Option<PathBuf>,
}

#[derive(Args, Debug)]
struct CheckArgs {
    /// The path file (.yaml/.yml) or CSV waypoint file (.csv).
    path: PathBuf,
    /// Robot URDF (replaces the path file's `robot:`).
    #[arg(long, value_name = "URDF")]
    robot: Option<PathBuf>,
    /// Tip link (replaces `tip:`).
    #[arg(long, value_name = "LINK")]
    tip: Option<String>,
    /// TCP speed, length unit per second (replaces `speed:`).
    #[arg(long, value_name = "V", allow_negative_numbers = true)]
    speed: Option<f64>,
    /// Programmed reorientation speed, angle unit per second.
    #[arg(long, value_name = "W", allow_negative_numbers = true)]
    orientation_speed: Option<f64>,
    /// Tool "x,y,z,roll,pitch,yaw" in the tip-link frame (replaces `tool:` pose).
    #[arg(long, value_name = "X,Y,Z,R,P,Y", allow_hyphen_values = true)]
    tool: Option<String>,
    /// Work frame "x,y,z,roll,pitch,yaw" in the robot base frame (replaces `work_frame:`).
    #[arg(long, value_name = "X,Y,Z,R,P,Y", allow_hyphen_values = true)]
    work_frame: Option<String>,
    /// Joints at the first waypoint "j1,j2,..." (angle unit; length unit for prismatic).
    #[arg(long, value_name = "LIST", allow_hyphen_values = true)]
    start_joints: Option<String>,
    /// Use the start joints (--start-joints or `start_joints:`) only as a starting guess:
    /// the first pose is solved nearest them instead of requiring them to reach it.
    #[arg(long)]
    start_joints_as_seed: bool,
    /// Largest tool angular speed, angle unit per second.
    #[arg(long, value_name = "W", allow_negative_numbers = true)]
    tool_angular_speed: Option<f64>,
    /// Fraction of each joint's URDF velocity that may be used, in (0, 1].
    #[arg(long, value_name = "F", allow_negative_numbers = true)]
    joint_speed_scale: Option<f64>,
    /// Largest TCP step between samples, length unit.
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    step: Option<f64>,
    /// Largest orientation step between samples, angle unit.
    #[arg(long, value_name = "A", allow_negative_numbers = true)]
    angle_step: Option<f64>,
    /// Units of the values given on the command line (and of a CSV file loaded directly):
    /// "LENGTH,ANGLE" with LENGTH mm or m and ANGLE deg or rad (default mm,deg). A path file's
    /// own values keep the file's `units:`.
    #[arg(long, value_name = "LENGTH,ANGLE")]
    units: Option<String>,
    /// Singularity measure below which a warning is raised (dimensionless, default 0.01).
    #[arg(long, value_name = "X", allow_negative_numbers = true)]
    singularity_threshold: Option<f64>,
    /// Inverse kinematics along the path: `auto` (the closed form for arms that have one,
    /// with the configuration table; else numerical) or `numeric`.
    #[arg(long, value_name = "MODE", default_value = "auto", value_parser = ["auto", "numeric"])]
    ik: String,
    /// Refuse paths that would need more samples than N (default 100000000).
    #[arg(long, value_name = "N", allow_negative_numbers = true)]
    max_samples: Option<u64>,
    /// Write the report as JSON to FILE ('-' for standard output, replacing the text report).
    #[arg(long, value_name = "FILE")]
    json: Option<PathBuf>,
    /// Write the joint trajectory as CSV to FILE.
    #[arg(long, value_name = "FILE")]
    joints: Option<PathBuf>,
    /// Write a self-contained HTML page (verdict, findings, plots, path views) to FILE.
    #[arg(long, value_name = "FILE")]
    html: Option<PathBuf>,
    /// Print no text report (the exit code and any files still tell the result).
    #[arg(long, short)]
    quiet: bool,
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            use clap::error::ErrorKind;
            return match e.kind() {
                ErrorKind::DisplayHelp | ErrorKind::DisplayVersion => {
                    let _ = e.print();
                    ExitCode::SUCCESS
                }
                ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand => {
                    let _ = e.print();
                    ExitCode::from(2)
                }
                _ => {
                    eprintln!("armpath: error: {}", one_line_usage_error(&e));
                    ExitCode::from(2)
                }
            };
        }
    };
    let result = match cli.command {
        Command::Check(a) => run_check(*a),
        Command::Robot(a) => run_robot(a),
        Command::Fk(a) => run_fk(a),
        Command::Ik(a) => run_ik(a),
        Command::Fix(a) => armpath::fix::cli::run_fix(a),
        Command::Place(a) => armpath::fix::cli::run_place(a),
    };
    match result {
        Ok(code) => ExitCode::from(code),
        Err(e) => {
            eprintln!("armpath: error: {e}");
            ExitCode::from(2)
        }
    }
}

/// A command-line parse error as one line, like every other error: what is wrong (naming the
/// option), the parser's suggestion if any, and where to find the options.
fn one_line_usage_error(e: &clap::Error) -> String {
    let text = e.render().to_string();
    let lines: Vec<&str> = text
        .lines()
        .map(str::trim)
        .filter(|l| !l.is_empty())
        .collect();
    let is_aside = |l: &&str| l.starts_with("tip: ") || l.starts_with("Usage: ");
    // The message proper runs up to the first aside (a list of missing arguments follows
    // "not provided:" on lines of its own) and stops before the "For more information" line.
    let what = lines
        .iter()
        .take_while(|l| !is_aside(l) && !l.starts_with("For more information"))
        .copied()
        .collect::<Vec<_>>()
        .join(" ");
    let what = what.trim_start_matches("error: ");
    let tip = lines
        .iter()
        .find_map(|l| l.strip_prefix("tip: "))
        .map(|t| format!("{t}; "))
        .unwrap_or_default();
    let command = match std::env::args().nth(1).as_deref() {
        Some(c @ ("check" | "robot" | "fk" | "ik" | "fix" | "place")) => format!("armpath {c}"),
        _ => "armpath".to_string(),
    };
    format!("{what}: {tip}see `{command} --help` for the options")
}

/// Refuses an output path that cannot be written before any work is done: a folder, or a
/// file in a folder that does not exist. `-` (standard output) always passes.
fn check_output(option: &str, path: &Option<PathBuf>) -> Result<()> {
    let Some(p) = path.as_deref().filter(|p| p.as_os_str() != "-") else {
        return Ok(());
    };
    if p.is_dir() {
        return Err(Error::usage(
            option,
            format!(
                "{} is a folder: give a file name for the output",
                p.display()
            ),
        ));
    }
    if let Some(dir) = p.parent().filter(|d| !d.as_os_str().is_empty()) {
        if !dir.is_dir() {
            return Err(Error::usage(
                option,
                format!(
                    "the folder {} does not exist: create it or write the output elsewhere",
                    dir.display()
                ),
            ));
        }
    }
    Ok(())
}

/// Parse "a,b,c" into numbers; `option` names the flag in messages.
fn numbers(option: &str, text: &str, count: Option<usize>) -> Result<Vec<f64>> {
    let values: Vec<f64> = text
        .split(',')
        .map(|s| s.trim())
        .filter(|s| !s.is_empty())
        .enumerate()
        .map(|(i, s)| {
            s.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    Error::usage(
                        option,
                        format!("value {} ('{s}') is not a finite number", i + 1),
                    )
                })
        })
        .collect::<Result<_>>()?;
    if let Some(n) = count {
        if values.len() != n {
            return Err(Error::usage(
                option,
                format!("expects {n} comma-separated numbers, got {}", values.len()),
            ));
        }
    }
    Ok(values)
}

fn six(option: &str, text: &Option<String>) -> Result<Option<[f64; 6]>> {
    text.as_ref()
        .map(|t| {
            let v = numbers(option, t, Some(6))?;
            Ok([v[0], v[1], v[2], v[3], v[4], v[5]])
        })
        .transpose()
}

/// Load the robot and mount the `--tool` (mm, deg).
fn load_robot(sel: &RobotSel) -> Result<Robot> {
    let mut robot = load_urdf(&sel.robot, sel.tip.as_deref())?;
    if let Some(t) = six("--tool", &sel.tool)? {
        robot.set_tool(Isometry3::from_parts(
            Translation3::new(t[0] * 1e-3, t[1] * 1e-3, t[2] * 1e-3),
            armpath::rotation::from_rpy(t[3].to_radians(), t[4].to_radians(), t[5].to_radians()),
        ));
    }
    Ok(robot)
}

/// Joint values from the command line into SI, checking the count.
fn joints_si(robot: &Robot, option: &str, text: &str, rad: bool) -> Result<Vec<f64>> {
    let v = numbers(option, text, Some(robot.dof()))?;
    Ok(robot
        .joints()
        .iter()
        .zip(v)
        .map(|(j, x)| match (rad, j.kind.is_prismatic()) {
            (true, _) => x,
            (false, true) => x * 1e-3,
            (false, false) => x.to_radians(),
        })
        .collect())
}

fn write_json<T: serde::Serialize>(path: &Path, value: &T) -> Result<()> {
    let mut text = serde_json::to_string_pretty(value)
        .map_err(|e| Error::usage("--json", format!("could not serialise the report: {e}")))?;
    text.push('\n');
    output::write_all(path, text.as_bytes())
}

fn is_stdout(p: &Option<PathBuf>) -> bool {
    p.as_ref().is_some_and(|p| p.as_os_str() == "-")
}

fn run_robot(a: RobotArgs) -> Result<u8> {
    check_output("--json", &a.json)?;
    let robot = load_urdf(&a.robot, a.tip.as_deref())?;
    let mut info = RobotInfo::new(&robot);
    info.closed_form = Some(match OrthoParallel::from_robot(&robot) {
        Ok(solver) => ClosedForm {
            family: Some("ortho-parallel base with spherical wrist"),
            parameters: Some(solver.parameters()),
            reason: None,
        },
        Err(reason) => ClosedForm {
            family: None,
            parameters: None,
            reason: Some(reason),
        },
    });
    if !is_stdout(&a.json) {
        print!("{}", info.render_text());
    }
    if let Some(p) = &a.json {
        write_json(p, &info)?;
    }
    Ok(0)
}

fn run_fk(a: FkArgs) -> Result<u8> {
    check_output("--json", &a.json)?;
    let robot = load_robot(&a.sel)?;
    let q = joints_si(&robot, "--joints", &a.joints, a.rad)?;
    let outside: Vec<&str> = robot
        .joints()
        .iter()
        .zip(&q)
        .filter(|(j, v)| !j.contains(**v))
        .map(|(j, _)| j.name.as_str())
        .collect();
    let pose = PoseReport::new(&robot.chain().fk(&q));
    if !is_stdout(&a.json) {
        print!("{}", pose.render_text());
        if !outside.is_empty() {
            println!(
                "  note  outside the joint range: {} (the pose is computed anyway)",
                outside.join(", ")
            );
        }
    }
    if let Some(p) = &a.json {
        write_json(p, &pose)?;
    }
    Ok(0)
}

fn run_ik(a: IkArgs) -> Result<u8> {
    check_output("--json", &a.json)?;
    let robot = load_robot(&a.sel)?;
    let p = numbers("--pose", &a.pose, Some(7))?;
    let (rot, norm) =
        armpath::rotation::quat_from_wxyz([p[3], p[4], p[5], p[6]]).ok_or_else(|| {
            Error::usage(
                "--pose",
                "the quaternion has zero length: give qw,qx,qy,qz of a rotation",
            )
        })?;
    if (norm - 1.0).abs() > 1e-6 {
        eprintln!("armpath: note: --pose quaternion had length {norm:.6}; normalised");
    }
    let target = Isometry3::from_parts(
        Translation3::from(Vector3::new(p[0], p[1], p[2]) * 1e-3),
        rot,
    );
    if a.all {
        let solver = OrthoParallel::from_robot(&robot).map_err(|reason| {
            Error::usage(
                "--all",
                format!("needs the closed-form solver, which this arm has not: {reason}"),
            )
        })?;
        let solutions = solver.solve(&target);
        let report = IkReport {
            solutions: solutions
                .iter()
                .map(|s| {
                    let mut r = IkSolutionReport::new(&robot, &s.joints, &target);
                    r.config = Some(s.config.to_string());
                    r.winding = Some(s.winding.iter().map(|&w| w as i32).collect());
                    let sp = &s.special;
                    for (on, name) in [
                        (sp.wrist_singular, "wrist singular"),
                        (sp.elbow_stretched, "elbow stretched"),
                        (sp.elbow_folded, "elbow folded"),
                        (sp.wrist_centre_on_axis1, "wrist centre on axis 1"),
                    ] {
                        if on {
                            r.flags.push(name.to_string());
                        }
                    }
                    r
                })
                .collect(),
            solver: "closed_form",
        };
        if !is_stdout(&a.json) {
            print!("{}", report.render_text(&robot));
        }
        if let Some(p) = &a.json {
            write_json(p, &report)?;
        }
        return Ok(if report.solutions.is_empty() { 1 } else { 0 });
    }
    let ik = NumericIk::new(&robot, IkOptions::default());
    let n = robot.dof();
    let mut q = vec![0.0; n];
    let outcome = match &a.seed {
        Some(s) => {
            let seed = joints_si(&robot, "--seed", s, a.rad)?;
            ik.solve(&target, &seed, &mut q)
        }
        None => {
            let mid = robot.mid_range();
            ik.solve_with_restarts(&target, &mid, armpath::solve::RESTARTS, &mut q)
        }
    };
    let report = IkReport {
        solutions: if outcome.converged {
            vec![IkSolutionReport::new(&robot, &q, &target)]
        } else {
            Vec::new()
        },
        solver: "numeric",
    };
    if !is_stdout(&a.json) {
        print!("{}", report.render_text(&robot));
    }
    if let Some(p) = &a.json {
        write_json(p, &report)?;
    }
    Ok(if outcome.converged { 0 } else { 1 })
}

/// `--units mm,deg` → (length, angle); either part may be left out (`--units m`).
fn split_units(text: Option<&str>) -> Result<(Option<String>, Option<String>)> {
    let (mut length, mut angle) = (None, None);
    for part in text
        .unwrap_or("")
        .split(',')
        .map(str::trim)
        .filter(|p| !p.is_empty())
    {
        match part {
            "mm" | "m" => length = Some(part.to_string()),
            "deg" | "rad" => angle = Some(part.to_string()),
            other => {
                return Err(Error::usage(
                    "--units",
                    format!("'{other}' is not a unit: give LENGTH,ANGLE with LENGTH mm or m and ANGLE deg or rad"),
                ))
            }
        }
    }
    Ok((length, angle))
}

/// Progress on a terminal for long checks. Updated every 4,096 samples so that the bar's
/// internal lock stays out of the per-sample loop; hidden for short paths.
struct Progress {
    bar: Option<indicatif::ProgressBar>,
    count: u64,
}

impl Progress {
    /// Paths below this many samples finish in well under a second: no bar.
    const MIN_SAMPLES: u64 = 200_000;
    const EVERY: u64 = 4096;
}

impl SampleSink for Progress {
    fn begin(&mut self, _robot: &Robot, estimated_samples: u64) {
        if estimated_samples >= Self::MIN_SAMPLES {
            let bar = indicatif::ProgressBar::new(estimated_samples);
            bar.set_style(
                indicatif::ProgressStyle::with_template(
                    "checking {bar:32} {pos}/{len} samples · {elapsed} elapsed, ~{eta} left",
                )
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
            );
            self.bar = Some(bar);
        }
    }
    fn sample(&mut self, _robot: &Robot, _rec: &armpath::solve::SampleRecord) {
        self.count += 1;
        if self.count.is_multiple_of(Self::EVERY) {
            if let Some(b) = &self.bar {
                if self.count > b.length().unwrap_or(0) {
                    b.set_length(self.count);
                }
                b.set_position(self.count);
            }
        }
    }
}

fn run_check(a: CheckArgs) -> Result<u8> {
    check_output("--json", &a.json)?;
    check_output("--joints", &a.joints)?;
    check_output("--html", &a.html)?;
    let (units_length, units_angle) = split_units(a.units.as_deref())?;
    let overrides = Overrides {
        robot: a.robot.clone(),
        tip: a.tip.clone(),
        units_length,
        units_angle,
        speed: a.speed,
        orientation_speed: a.orientation_speed,
        tool: six("--tool", &a.tool)?,
        work_frame: six("--work-frame", &a.work_frame)?,
        start_joints: a
            .start_joints
            .as_ref()
            .map(|s| numbers("--start-joints", s, None))
            .transpose()?,
        start_joints_seed: a.start_joints_as_seed,
        tool_angular_speed: a.tool_angular_speed,
        joint_speed_scale: a.joint_speed_scale,
        step: a.step,
        angle_step: a.angle_step,
    };
    let job = job::load(&a.path, &overrides)?;
    let robot = load_urdf(&job.robot, job.tip.as_deref())?;
    let mut options = CheckOptions::default();
    if let Some(t) = a.singularity_threshold {
        if !(t.is_finite() && t > 0.0 && t < 1.0) {
            return Err(Error::usage(
                "--singularity-threshold",
                format!("{t} is not in (0, 1): the measure runs from 0 (singular) to 1"),
            ));
        }
        options.thresholds.singularity = t;
    }
    if let Some(n) = a.max_samples {
        options.max_samples = n;
    }
    options.numeric_only = a.ik == "numeric";
    // Open outputs before the walk so that a bad output path fails early.
    let mut csv = a.joints.as_deref().map(JointsCsv::create).transpose()?;
    let mut html = a
        .html
        .as_deref()
        .map(|p| HtmlReport::create(p, &job))
        .transpose()?;
    // Progress goes to standard error, only on a terminal, never with JSON on stdout.
    let show_progress = !a.quiet && std::io::stderr().is_terminal() && !is_stdout(&a.json);
    let mut progress = Progress {
        bar: None,
        count: 0,
    };
    let report = {
        let mut sinks: Vec<&mut dyn SampleSink> = Vec::new();
        if let Some(c) = csv.as_mut() {
            sinks.push(c);
        }
        if let Some(h) = html.as_mut() {
            sinks.push(h);
        }
        if show_progress {
            sinks.push(&mut progress);
        }
        check(&job, &robot, &options, &mut sinks)?
    };
    if let Some(b) = progress.bar.take() {
        b.finish_and_clear();
    }
    if let Some(c) = csv.take() {
        c.finish()?;
    }
    if let Some(h) = html.take() {
        h.finish(&report)?;
    }
    if let Some(p) = &a.json {
        write_json(p, &report)?;
    }
    if !a.quiet && !is_stdout(&a.json) && !is_stdout(&a.html) {
        let stdout = std::io::stdout();
        let color = stdout.is_terminal() && std::env::var_os("NO_COLOR").is_none();
        print!("{}", render_text(&report, Style { color }));
    }
    Ok(report.exit_code() as u8)
}
