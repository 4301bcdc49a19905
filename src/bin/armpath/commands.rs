//! The commands that look at a robot (`robot`, `fk`, `ik`) and `check`: their flags, how
//! the flags become library calls, and the outputs they write.

use crate::flags::SettingFlags;
use crate::progress::CheckProgress;
use armpath::check::check;
use armpath::error::{Error, Result};
use armpath::ik::analytic::OrthoParallel;
use armpath::ik::{IkOptions, NumericIk};
use armpath::output::{self, check_target, is_stdout, write_json};
use armpath::report::html::HtmlReport;
use armpath::report::kinematics::{ClosedForm, IkReport, IkSolutionReport, PoseReport, RobotInfo};
use armpath::report::{render_text, JointsCsv, Report, Style};
use armpath::robot::{load_urdf, Robot};
use armpath::solve::SampleSink;
use armpath::Joints;
use clap::Args;
use nalgebra::{Isometry3, Translation3, Vector3};
use std::io::IsTerminal;
use std::io::Write;
use std::path::{Path, PathBuf};

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
pub struct RobotArgs {
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
pub struct FkArgs {
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
pub struct IkArgs {
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
pub struct CheckArgs {
    /// The path file (.yaml/.yml) or CSV waypoint file (.csv).
    path: PathBuf,
    #[command(flatten)]
    settings: SettingFlags,
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

/// Parse "a,b,c" into numbers; `option` names the flag in messages.
fn numbers(option: &str, text: &str, count: Option<usize>) -> Result<Vec<f64>> {
    crate::flags::number_list(text, count).map_err(|e| Error::usage(option, e.0))
}

fn six(option: &str, text: &Option<String>) -> Result<Option<[f64; 6]>> {
    text.as_deref()
        .map(|t| crate::flags::pose6(t).map_err(|e| Error::usage(option, e.0)))
        .transpose()
}

/// Load the robot and mount the `--tool` (mm, deg).
fn load_robot(sel: &RobotSel) -> Result<Robot> {
    let mut robot = load_urdf(&sel.robot, sel.tip.as_deref())?;
    if let Some(t) = six("--tool", &sel.tool)? {
        armpath::robot::check_offset(
            "--tool",
            [t[0] * 1e-3, t[1] * 1e-3, t[2] * 1e-3],
            [t[3].to_radians(), t[4].to_radians(), t[5].to_radians()],
        )?;
        robot.set_tool(Isometry3::from_parts(
            Translation3::new(t[0] * 1e-3, t[1] * 1e-3, t[2] * 1e-3),
            armpath::rotation::from_rpy(t[3].to_radians(), t[4].to_radians(), t[5].to_radians()),
        ));
    }
    Ok(robot)
}

/// Joint values from the command line into SI, checking the count.
fn joints_si(robot: &Robot, option: &str, text: &str, rad: bool) -> Result<Joints> {
    let v = numbers(option, text, Some(robot.dof()))?;
    let mut q = Joints::zeros(robot.dof());
    for ((si, j), x) in q.iter_mut().zip(robot.joints()).zip(v) {
        *si = match (rad, j.kind.is_prismatic()) {
            (true, _) => x,
            (false, true) => x * 1e-3,
            (false, false) => x.to_radians(),
        };
    }
    robot.check_joint_values(option, &q)?;
    Ok(q)
}

/// The `--json` of a robot command: a writable place that is not the URDF itself.
fn check_json_target(json: Option<&Path>, urdf: &Path) -> Result<()> {
    check_target("--json", json)?;
    output::refuse_overwrite(&[("the URDF", urdf)], &[("--json", json)])
}

pub fn run_robot(a: RobotArgs) -> Result<u8> {
    check_json_target(a.json.as_deref(), &a.robot)?;
    let robot = load_urdf(&a.robot, a.tip.as_deref())?;
    let mut info = RobotInfo::new(&robot)?;
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
    if robot.links().iter().any(|l| !l.collisions.is_empty()) {
        let model = armpath::cell::CellModel::build(armpath::cell::CellInputs {
            robot: &robot,
            tool: &[],
            cell: None,
            base_T_work: Isometry3::identity(),
            clearance: 0.0,
        });
        // The kinematic facts stand without the collision geometry: a shape armpath cannot
        // read is reported here, and refused only by a check that needs it.
        info.collision = Some(match model {
            Ok(m) => armpath::report::kinematics::RobotCollision::new(&m),
            Err(e) => armpath::report::kinematics::RobotCollision {
                links: Vec::new(),
                self_pairs: Vec::new(),
                notes: vec![format!(
                    "the collision geometry cannot be used, so a check with a cell or tool geometry will stop: {e}"
                )],
            },
        });
    }
    if !is_stdout(a.json.as_deref()) {
        output::print(&info.render_text())?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &info)?;
    }
    Ok(0)
}

pub fn run_fk(a: FkArgs) -> Result<u8> {
    check_json_target(a.json.as_deref(), &a.sel.robot)?;
    let robot = load_robot(&a.sel)?;
    let q = joints_si(&robot, "--joints", &a.joints, a.rad)?;
    let outside: Vec<_> = robot
        .joints()
        .iter()
        .zip(&q)
        .filter(|(j, v)| !j.contains(**v))
        .map(|(j, _)| armpath::report::visible(&j.name))
        .collect();
    let pose = PoseReport::new(&robot.chain().fk(&q))?;
    if !is_stdout(a.json.as_deref()) {
        let mut text = pose.render_text();
        if !outside.is_empty() {
            text.push_str(&format!(
                "  note  outside the joint range: {} (the pose is computed anyway)\n",
                outside.join(", ")
            ));
        }
        output::print(&text)?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &pose)?;
    }
    Ok(0)
}

pub fn run_ik(a: IkArgs) -> Result<u8> {
    check_json_target(a.json.as_deref(), &a.sel.robot)?;
    let robot = load_robot(&a.sel)?;
    let p = numbers("--pose", &a.pose, Some(7))?;
    armpath::robot::check_pose(
        "--pose",
        [p[0] * 1e-3, p[1] * 1e-3, p[2] * 1e-3],
        [p[3], p[4], p[5], p[6]],
    )?;
    let (rot, norm) =
        armpath::rotation::quat_from_wxyz([p[3], p[4], p[5], p[6]]).ok_or_else(|| {
            Error::usage(
                "--pose",
                "the quaternion has zero length: give qw,qx,qy,qz of a rotation",
            )
        })?;
    if (norm - 1.0).abs() > 1e-6 {
        let _ = writeln!(
            std::io::stderr(),
            "armpath: note: --pose quaternion had length {norm:.6}; normalised"
        );
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
                    let mut r = IkSolutionReport::new(&robot, &s.joints, &target)?;
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
                    Ok(r)
                })
                .collect::<Result<_>>()?,
            solver: "closed_form",
        };
        if !is_stdout(a.json.as_deref()) {
            output::print(&report.render_text(&robot))?;
        }
        if let Some(p) = &a.json {
            write_json("--json", p, &report)?;
        }
        return Ok(if report.solutions.is_empty() { 1 } else { 0 });
    }
    let ik = NumericIk::new(&robot, IkOptions::default());
    let mut q = Joints::zeros(robot.dof());
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
            vec![IkSolutionReport::new(&robot, &q, &target)?]
        } else {
            Vec::new()
        },
        solver: "numeric",
    };
    if !is_stdout(a.json.as_deref()) {
        output::print(&report.render_text(&robot))?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    Ok(if outcome.converged { 0 } else { 1 })
}

pub fn run_check(a: CheckArgs) -> Result<u8> {
    let (job, options) = a.settings.load_job(
        &a.path,
        &[
            ("--json", a.json.as_deref()),
            ("--joints", a.joints.as_deref()),
            ("--html", a.html.as_deref()),
        ],
    )?;
    let robot = load_urdf(&job.robot, job.tip.as_deref())?;
    // Open outputs before the walk so that a bad output path fails early.
    let mut csv = a.joints.as_deref().map(JointsCsv::create).transpose()?;
    let mut html = a
        .html
        .as_deref()
        .map(|p| HtmlReport::create(p, &job))
        .transpose()?;
    // Progress goes to standard error, only on a terminal, never with JSON on stdout.
    let show_progress =
        !a.quiet && std::io::stderr().is_terminal() && !is_stdout(a.json.as_deref());
    let mut progress = CheckProgress::default();
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
    let report = Report::from_outcome(&report)?;
    progress.finish();
    if let Some(c) = csv.take() {
        c.finish()?;
    }
    if let Some(h) = html.take() {
        h.finish(&report)?;
    }
    if let Some(p) = &a.json {
        write_json("--json", p, &report)?;
    }
    if !a.quiet && !is_stdout(a.json.as_deref()) && !is_stdout(a.html.as_deref()) {
        let stdout = std::io::stdout();
        let color = stdout.is_terminal() && std::env::var_os("NO_COLOR").is_none();
        output::print(&render_text(&report, Style { color }))?;
    }
    Ok(report.exit_code() as u8)
}
