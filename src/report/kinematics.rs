//! Reports of the small commands: `robot`, `fk`, `ik`.

use super::escape::{count, visible as v};
use super::{joint_display, RobotReport};
use crate::error::{Error, Result};
use crate::robot::{spherical_wrist, Joints, Robot};
use crate::rotation;
use nalgebra::Isometry3;
use serde::Serialize;
use std::fmt::Write;

/// `armpath robot`: the robot and its geometric facts.
#[derive(Debug, Clone, Serialize)]
pub struct RobotInfo {
    /// The arm as a check report describes it (its JSON keys sit at the top level).
    #[serde(flatten)]
    pub robot: RobotReport,
    /// Wrist centre at the zero configuration (mm, base frame), when spherical.
    pub wrist_centre_mm: Option<[f64; 3]>,
    /// Why the wrist is not spherical.
    pub wrist_note: Option<String>,
    /// Whether the closed-form solver applies, with its parameters or the reason it does not
    /// (filled by the caller).
    pub closed_form: Option<ClosedForm>,
    /// The robot's own collision geometry and the self-collision pairs it gives (filled by
    /// the caller); absent when no link has a `<collision>` element.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub collision: Option<RobotCollision>,
}

/// The robot's collision geometry as the cell check uses it.
#[derive(Debug, Clone, Serialize)]
pub struct RobotCollision {
    /// Links with collision geometry.
    pub links: Vec<String>,
    /// Link pairs tested for self-collision (neighbours and pairs that never meet left out).
    pub self_pairs: Vec<[String; 2]>,
    /// What is left out of the test, and why.
    pub notes: Vec<String>,
}

impl RobotCollision {
    /// The collision facts of a cell model built from the robot alone.
    pub fn new(model: &crate::cell::CellModel) -> Self {
        RobotCollision {
            links: model.bodies().iter().map(|b| b.name.clone()).collect(),
            self_pairs: (0..model.pairs().len())
                .map(|p| {
                    let (a, b) = model.pair_names(p);
                    [a.to_string(), b.to_string()]
                })
                .collect(),
            notes: model.notes().to_vec(),
        }
    }
}

/// The closed-form IK family of an arm, or why it has none.
#[derive(Debug, Clone, Serialize)]
pub struct ClosedForm {
    /// The family name, or null when the arm is not in it.
    pub family: Option<&'static str>,
    /// Its geometric parameters (m, rad), derived from the URDF.
    pub parameters: Option<crate::ik::analytic::Parameters>,
    /// The condition that fails, when the arm is not in the family.
    pub reason: Option<String>,
}

impl RobotInfo {
    /// The robot's facts for display; an error when any computed length is not finite.
    pub fn new(robot: &Robot) -> Result<Self> {
        let w = spherical_wrist(robot);
        let info = RobotInfo {
            robot: RobotReport::new(robot),
            wrist_centre_mm: w
                .centre_at_zero
                .map(|c| [c[0] * 1e3, c[1] * 1e3, c[2] * 1e3]),
            wrist_note: w.reason,
            closed_form: None,
            collision: None,
        };
        ensure_finite("robot reach (mm)", &[info.robot.reach_mm])?;
        ensure_finite(
            "wrist centre (mm)",
            &info.wrist_centre_mm.unwrap_or_default(),
        )?;
        Ok(info)
    }

    /// The facts as terminal text: chain, wrist, IK solver, then one row per joint.
    pub fn render_text(&self) -> String {
        let r = &self.robot;
        let mut o = String::new();
        let _ = writeln!(o, "{} · {}", v(&r.name), v(&r.urdf));
        let _ = writeln!(
            o,
            "  chain    {} → {} · {} · reach ≈ {:.0} mm (sampled, from joint 1's origin)",
            v(&r.root_link),
            v(&r.tip_link),
            count(r.dof, "joint"),
            r.reach_mm
        );
        match (&self.wrist_centre_mm, &self.wrist_note) {
            (Some(c), _) => {
                let _ = writeln!(
                    o,
                    "  wrist    spherical, centre at zero pose ({:.1}, {:.1}, {:.1}) mm",
                    c[0], c[1], c[2]
                );
            }
            (None, Some(n)) => {
                let _ = writeln!(o, "  wrist    not spherical: {}", v(n));
            }
            _ => {}
        }
        match &self.closed_form {
            Some(ClosedForm {
                family: Some(f),
                parameters: Some(p),
                ..
            }) => {
                let _ = writeln!(
                    o,
                    "  IK       closed form ({f}): a1 {:.1}, a2 {:.1}, b {:.1}, c1 {:.1}, c2 {:.1}, c3 {:.1}, c4 {:.1} mm",
                    p.a1 * 1e3,
                    p.a2 * 1e3,
                    p.b * 1e3,
                    p.c1 * 1e3,
                    p.c2 * 1e3,
                    p.c3 * 1e3,
                    p.c4 * 1e3
                );
            }
            Some(ClosedForm {
                reason: Some(r), ..
            }) => {
                let _ = writeln!(o, "  IK       numerical (no closed form: {})", v(r));
            }
            _ => {}
        }
        if let Some(c) = &self.collision {
            let pairs: Vec<String> = c
                .self_pairs
                .iter()
                .map(|[a, b]| format!("{} ⟷ {}", v(a), v(b)))
                .collect();
            let shapes = if c.links.is_empty() {
                "no usable shapes".to_string()
            } else {
                format!(
                    "shapes on {}",
                    c.links.iter().map(|l| v(l)).collect::<Vec<_>>().join(", ")
                )
            };
            let _ = writeln!(
                o,
                "  collide  {shapes}; self-collision pairs tested: {}",
                if pairs.is_empty() {
                    "none".to_string()
                } else {
                    pairs.join(", ")
                }
            );
            for n in &c.notes {
                let _ = writeln!(o, "           {}", v(n));
            }
        }
        let _ = writeln!(o);
        let _ = writeln!(
            o,
            "  {:<12} {:<11} {:>22} {:>14}",
            "joint", "kind", "range", "max speed"
        );
        for j in &r.joints {
            let range = match (j.lower, j.upper) {
                (Some(a), Some(b)) => format!("{a:.1} … {b:.1} {}", j.unit),
                _ => "unlimited".into(),
            };
            let kind = format!("{:?}", j.kind).to_lowercase();
            let _ = writeln!(
                o,
                "  {:<12} {:<11} {:>22} {:>9.1} {}/s",
                v(&j.name),
                kind,
                range,
                j.velocity,
                j.unit
            );
        }
        o
    }
}

/// A TCP pose for display: mm, quaternion (w ≥ 0) and rpy in degrees.
#[derive(Debug, Clone, Serialize)]
pub struct PoseReport {
    /// Position (mm) of the child frame's origin in the parent frame (for `base_T_work`, the
    /// work frame's origin in the base frame).
    pub xyz_mm: [f64; 3],
    /// Orientation as a unit quaternion, scalar first, w ≥ 0.
    pub quat_wxyz: [f64; 4],
    /// The same orientation as URDF roll, pitch, yaw about the fixed X, Y, Z axes (deg).
    pub rpy_deg: [f64; 3],
}

/// Refuse a report value that is not a finite number: NaN or infinity must never reach text
/// or JSON. `what` names the quantity, `values` its components.
fn ensure_finite(what: &str, values: &[f64]) -> Result<()> {
    if values.iter().all(|v| v.is_finite()) {
        return Ok(());
    }
    let shown: Vec<String> = values.iter().map(|v| v.to_string()).collect();
    Err(Error::usage(
        what,
        format!(
            "came out as ({}), not finite numbers: check the robot's origins, the tool and the \
             joint values for extreme magnitudes",
            shown.join(", ")
        ),
    ))
}

impl PoseReport {
    /// The pose in display units, as it is (a report that embeds it checks its numbers with
    /// [`crate::report::Report::first_non_finite`]).
    pub fn of(pose: &Isometry3<f64>) -> Self {
        let t = pose.translation.vector * 1e3;
        let (r, p, y) = rotation::to_rpy(&pose.rotation);
        // `+ 0.0` turns −0.0 into 0.0, so that no report shows a signed zero.
        let q = rotation::quat_to_wxyz(&pose.rotation);
        PoseReport {
            xyz_mm: [t.x + 0.0, t.y + 0.0, t.z + 0.0],
            quat_wxyz: q.map(|v| v + 0.0),
            rpy_deg: [r.to_degrees(), p.to_degrees(), y.to_degrees()].map(|v| v + 0.0),
        }
    }

    /// The pose for display; an error when any of its numbers is not finite.
    pub fn new(pose: &Isometry3<f64>) -> Result<Self> {
        let report = Self::of(pose);
        ensure_finite("TCP position (mm)", &report.xyz_mm)?;
        ensure_finite("TCP quaternion", &report.quat_wxyz)?;
        ensure_finite("TCP rpy (deg)", &report.rpy_deg)?;
        Ok(report)
    }

    /// Three lines of terminal text: position, quaternion and rpy.
    pub fn render_text(&self) -> String {
        let [x, y, z] = self.xyz_mm;
        let [w, qx, qy, qz] = self.quat_wxyz;
        let [r, p, yaw] = self.rpy_deg;
        format!(
            "  xyz   {x:.3}, {y:.3}, {z:.3} mm\n  quat  {w:.9}, {qx:.9}, {qy:.9}, {qz:.9} (w, x, y, z)\n  rpy   {r:.4}, {p:.4}, {yaw:.4} deg (fixed axes X, Y, Z)\n"
        )
    }
}

/// One IK solution for display.
#[derive(Debug, Clone, Serialize)]
pub struct IkSolutionReport {
    /// Joints in deg (mm for prismatic joints).
    pub joints_deg: Vec<f64>,
    /// Distance between the TCP at these joints and the target position (mm).
    pub residual_mm: f64,
    /// Angle between the TCP orientation at these joints and the target's (deg).
    pub residual_deg: f64,
    /// Arm configuration label (closed-form solver only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub config: Option<String>,
    /// Joint windings (multiples of 360° added to the base solution), closed-form only.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub winding: Option<Vec<i32>>,
    /// Special-pose flags (closed-form only).
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub flags: Vec<String>,
}

impl IkSolutionReport {
    /// A solution `q` (SI) with its residual against `target` computed by FK; an error when
    /// any of its numbers is not finite.
    pub fn new(robot: &Robot, q: &Joints, target: &Isometry3<f64>) -> Result<Self> {
        let pose = robot.chain().fk(q);
        let report = IkSolutionReport {
            joints_deg: robot
                .joints()
                .iter()
                .zip(q)
                .map(|(j, v)| joint_display(j.kind, *v))
                .collect(),
            residual_mm: (pose.translation.vector - target.translation.vector).norm() * 1e3,
            residual_deg: rotation::angle_between(&pose.rotation, &target.rotation).to_degrees(),
            config: None,
            winding: None,
            flags: Vec::new(),
        };
        ensure_finite("IK solution joints", &report.joints_deg)?;
        ensure_finite(
            "IK solution residual (mm, deg)",
            &[report.residual_mm, report.residual_deg],
        )?;
        Ok(report)
    }
}

/// `armpath ik`: the solutions found.
#[derive(Debug, Clone, Serialize)]
pub struct IkReport {
    /// The solutions found; empty when the pose has none within tolerance and joint limits.
    pub solutions: Vec<IkSolutionReport>,
    /// `numeric` or `closed_form`.
    pub solver: &'static str,
}

impl IkReport {
    /// One row per solution (joints in `robot`'s display units, residuals, configuration), or
    /// one line saying what to try when there is none.
    pub fn render_text(&self, robot: &Robot) -> String {
        let mut o = String::new();
        if self.solutions.is_empty() {
            let _ = writeln!(
                o,
                "no solution within tolerance and joint limits: the pose is out of reach, or try --seed near the expected joints"
            );
            return o;
        }
        let names: Vec<String> = robot
            .joints()
            .iter()
            .map(|j| v(&j.name).into_owned())
            .collect();
        let _ = writeln!(
            o,
            "{} ({} solver)",
            count(self.solutions.len(), "solution"),
            self.solver
        );
        let _ = write!(o, "  {:>4}", "#");
        for n in &names {
            let _ = write!(o, " {n:>9}");
        }
        let _ = writeln!(o, "  {:>11}  {:>11}  config", "residual mm", "residual °");
        for (i, s) in self.solutions.iter().enumerate() {
            let _ = write!(o, "  {:>4}", i + 1);
            for q in &s.joints_deg {
                let _ = write!(o, " {q:>9.3}");
            }
            let _ = writeln!(
                o,
                "  {:>11.2e}  {:>11.2e}  {}{}",
                s.residual_mm,
                s.residual_deg,
                v(s.config.as_deref().unwrap_or_default()),
                if s.flags.is_empty() {
                    String::new()
                } else {
                    format!(" [{}]", v(&s.flags.join(", ")))
                }
            );
        }
        o
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::{Translation3, UnitQuaternion};

    #[test]
    fn a_pose_with_a_non_finite_number_becomes_an_error() {
        // source: common practice (IEEE 754: inf - inf and 0 * inf are NaN)
        let ok =
            Isometry3::from_parts(Translation3::new(0.5, 0.0, 1.0), UnitQuaternion::identity());
        let r = PoseReport::new(&ok).unwrap();
        assert_eq!(r.xyz_mm, [500.0, 0.0, 1000.0]);
        for bad in [f64::INFINITY, f64::NAN] {
            let pose =
                Isometry3::from_parts(Translation3::new(bad, 0.0, 0.0), UnitQuaternion::identity());
            let e = PoseReport::new(&pose).unwrap_err().to_string();
            assert!(
                e.contains("TCP position") && e.contains("not finite"),
                "{e}"
            );
        }
    }
}
