//! The settings blocks of a path file with their defaults: `limits:`, `sampling:`, `tool:`.

use super::super::schema::{LimitsSpec, MarginSpec, SamplingSpec, ToolSpec};
use super::super::units::{self, fmt_list};
use super::super::{InputWarning, Limits, Overrides, Sampling, Tool};
use super::{override_pose, positive, At, Ctx, Quantity};
use crate::error::Error;
use nalgebra::Isometry3;

// Defaults. Each is in SI; the comment says why it was chosen.

/// 90 deg/s: a common process bound on tool reorientation speed in seam work (gluing,
/// welding, deburring), slow enough that the process is not disturbed by the tool turning.
const DEFAULT_TOOL_ANGULAR_SPEED_DEG_S: f64 = 90.0;
/// 1.0: the URDF velocity limits are the robot's own; use them in full unless told otherwise.
const DEFAULT_JOINT_SPEED_SCALE: f64 = 1.0;
/// 5°: leaves room to touch up taught points on the real cell and for the tolerance between
/// model and cell, without flagging ordinary use of a joint's range.
const DEFAULT_NEAR_LIMIT_MARGIN_DEG: f64 = 5.0;
/// 5 mm: the same reasoning as the angle margin, for prismatic joints.
const DEFAULT_NEAR_LIMIT_MARGIN_MM: f64 = 5.0;
/// 1 mm: finer than usual seam tolerances, yet a 1 m path is only a thousand samples.
const DEFAULT_STEP_MM: f64 = 1.0;
/// 0.5°: resolves the fast wrist motion near a wrist singularity; at a 100 mm lever it moves
/// the tool tip about as far as the 1 mm step.
const DEFAULT_ANGLE_STEP_DEG: f64 = 0.5;
/// 10 mm: room for the touch-up of taught points and for the difference between model and
/// cell, and a common minimum gap kept between a moving tool and fixtures.
const DEFAULT_CLEARANCE_MM: f64 = 10.0;
/// ±180°: one full turn contains every spin angle exactly once, so a free-spin tool may take
/// any spin without the search repeating itself.
const DEFAULT_SPIN_RANGE_DEG: (f64, f64) = (-180.0, 180.0);

impl Ctx<'_> {
    pub(super) fn limits(
        &self,
        spec: Option<&LimitsSpec>,
        ov: &Overrides,
    ) -> Result<Limits, Error> {
        let tool_angular_speed = self
            .pick(
                spec.and_then(|l| l.tool_angular_speed),
                "limits.tool_angular_speed",
                ov.tool_angular_speed,
                "--tool-angular-speed",
                "the largest tool angular speed",
                Quantity::AngularSpeed,
            )?
            .unwrap_or(DEFAULT_TOOL_ANGULAR_SPEED_DEG_S.to_radians());

        let scale = |v: f64, at: At| -> Result<f64, Error> {
            let range = (units::MIN_JOINT_SPEED_SCALE, 1.0);
            let v = positive(
                v,
                at,
                "the joint speed scale",
                "(0, 1]",
                1.0,
                (0.0, f64::MAX),
            )?;
            if v < range.0 {
                return Err(at.error(format!(
                    "is {}, below {}: give a fraction in [{}, 1]; a smaller scale leaves no \
                     meaningful joint speed check",
                    units::fmt_exact(v),
                    range.0,
                    range.0
                )));
            }
            if v > 1.0 {
                return Err(at.error(format!(
                    "is {v}, above 1: that would let joints move faster than the robot \
                     description's velocity limits; give a fraction in (0, 1]"
                )));
            }
            Ok(v)
        };
        let file_scale = spec
            .and_then(|l| l.joint_speed_scale)
            .map(|v| scale(v, At::File(self.path, "limits.joint_speed_scale")))
            .transpose()?;
        let over_scale = ov
            .joint_speed_scale
            .map(|v| scale(v, At::Option("--joint-speed-scale")))
            .transpose()?;

        let fu = &self.fu;
        let margin = |v: f64, field: &str, unit: &str| -> Result<f64, Error> {
            if !v.is_finite() || v < 0.0 {
                return Err(self.err(
                    field,
                    format!("is {v}: give a margin of 0 or more, in {unit}"),
                ));
            }
            Ok(v)
        };
        // A margin may not exceed the largest value of its kind (`Quantity::Angle` or
        // `Quantity::Length`); returns SI.
        let kind_margin = |v: f64, field: &str, q: Quantity| -> Result<f64, Error> {
            let (si, unit) = q.unit(fu);
            let max = match q {
                Quantity::Angle => units::MAX_ABS_ANGLE_RAD,
                _ => units::MAX_ABS_LENGTH_M,
            };
            let v = margin(v, field, &unit)?;
            units::check_bounded(&[v], max, si, "margin", &unit).map_err(|m| self.err(field, m))?;
            Ok(v * si)
        };
        let angle_margin = |v: f64, field: &str| kind_margin(v, field, Quantity::Angle);
        let length_margin = |v: f64, field: &str| kind_margin(v, field, Quantity::Length);
        let mut angle = DEFAULT_NEAR_LIMIT_MARGIN_DEG.to_radians();
        let mut length = DEFAULT_NEAR_LIMIT_MARGIN_MM * 1e-3;
        match spec.and_then(|l| l.near_limit_margin.as_ref()) {
            None => {}
            Some(MarginSpec::Both(v)) => {
                let unit = format!(
                    "{} (revolute) and {} (prismatic)",
                    fu.angle.name(),
                    fu.length.name()
                );
                let field = "limits.near_limit_margin";
                let v = margin(*v, field, &unit)?;
                angle = angle_margin(v, field)?;
                length = length_margin(v, field)?;
            }
            Some(MarginSpec::Split(s)) => {
                if let Some(v) = s.angle {
                    angle = angle_margin(v, "limits.near_limit_margin.angle")?;
                }
                if let Some(v) = s.length {
                    length = length_margin(v, "limits.near_limit_margin.length")?;
                }
            }
        }
        let (tcp_acceleration, tool_angular_acceleration, joint_acceleration_scale, tolerance) =
            super::super::motion_keys::limits(spec, &self.fu, self.path, ov, &self.ou)?;
        let clearance = self
            .pick(
                spec.and_then(|l| l.clearance),
                "limits.clearance",
                ov.clearance,
                "--clearance",
                "the clearance",
                Quantity::Length,
            )?
            .unwrap_or(DEFAULT_CLEARANCE_MM * 1e-3);
        Ok(Limits {
            clearance,
            tool_angular_speed,
            joint_speed_scale: over_scale
                .or(file_scale)
                .unwrap_or(DEFAULT_JOINT_SPEED_SCALE),
            near_limit_margin_angle: angle,
            near_limit_margin_length: length,
            tcp_acceleration,
            tool_angular_acceleration,
            joint_acceleration_scale,
            process_speed_tolerance: tolerance,
        })
    }

    pub(super) fn sampling(
        &self,
        spec: Option<&SamplingSpec>,
        ov: &Overrides,
    ) -> Result<Sampling, Error> {
        let step = self
            .pick(
                spec.and_then(|s| s.step),
                "sampling.step",
                ov.step,
                "--step",
                "the largest TCP step between samples",
                Quantity::Length,
            )?
            .unwrap_or(DEFAULT_STEP_MM * 1e-3);
        let angle_step = self
            .pick(
                spec.and_then(|s| s.angle_step),
                "sampling.angle_step",
                ov.angle_step,
                "--angle-step",
                "the largest orientation step between samples",
                Quantity::Angle,
            )?
            .unwrap_or(DEFAULT_ANGLE_STEP_DEG.to_radians());
        Ok(Sampling { step, angle_step })
    }

    pub(super) fn tool(&mut self, spec: Option<&ToolSpec>, ov: &Overrides) -> Result<Tool, Error> {
        let mut tool = Tool {
            tip_T_tcp: Isometry3::identity(),
            free_spin: false,
            spin_range: (
                DEFAULT_SPIN_RANGE_DEG.0.to_radians(),
                DEFAULT_SPIN_RANGE_DEG.1.to_radians(),
            ),
            spin_rate: None,
            geometry: Vec::new(),
        };
        if let Some(t) = spec {
            let o = (t.rpy, t.quat, t.rotvec);
            tool.tip_T_tcp = self.file_pose("tool", t.xyz, o, false, None)?;
            tool.free_spin = t.free_spin.unwrap_or(false);
            let fu = self.fu;
            if let Some(r) = t.spin_range {
                units::check_bounded(
                    &r,
                    units::MAX_ABS_ANGLE_RAD,
                    fu.angle_to_rad(),
                    "angle",
                    fu.angle.name(),
                )
                .map_err(|m| self.err("tool.spin_range", m))?;
                if r[0] > r[1] {
                    return Err(self.err(
                        "tool.spin_range",
                        format!(
                            "{} has min > max: write [min, max] in {}",
                            fmt_list(&r),
                            fu.angle.name()
                        ),
                    ));
                }
                tool.spin_range = (fu.angle(r[0]), fu.angle(r[1]));
            }
            tool.spin_rate = t
                .spin_rate
                .map(|v| {
                    positive(
                        v,
                        At::File(self.path, "tool.spin_rate"),
                        "the largest spin rate",
                        &fu.angular_speed_name(),
                        fu.angle_to_rad(),
                        units::ANGULAR_SPEED_RANGE_RAD_S,
                    )
                })
                .transpose()?
                .map(|v| fu.angle(v));
            if let Some(raw) = &t.geometry {
                let scale = crate::cell::Scale {
                    m_per_length: fu.length_to_m(),
                    rad_per_angle: fu.angle_to_rad(),
                };
                tool.geometry = crate::cell::tool_bodies(raw, scale, self.path, "tool.geometry")?;
            }
            if !tool.free_spin {
                for (given, key) in [
                    (t.spin_range.is_some(), "spin_range"),
                    (t.spin_rate.is_some(), "spin_rate"),
                ] {
                    if given {
                        self.warnings.push(InputWarning {
                            location: format!("tool.{key}"),
                            message: format!(
                                "has no effect without free_spin: true: add `free_spin: true` \
                                 to the tool or remove `{key}`"
                            ),
                            waypoint: None,
                        });
                    }
                }
            }
        }
        if let Some(v) = ov.tool {
            tool.tip_T_tcp = override_pose(v, "--tool", &self.ou)?;
        }
        Ok(tool)
    }
}
