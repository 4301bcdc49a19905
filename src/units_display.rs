//! Joint values in display units (deg for revolute joints, mm for prismatic ones): shared by
//! the check's input messages and the reports, so that neither depends on the other for it.

use crate::robot::JointKind;

/// Display value of a joint quantity: deg for revolute, mm for prismatic.
pub fn joint_display(kind: JointKind, si: f64) -> f64 {
    if kind.is_prismatic() {
        si * 1e3
    } else {
        si.to_degrees()
    }
}

/// Unit name of a joint position: `deg` or `mm`.
pub fn joint_unit(kind: JointKind) -> &'static str {
    if kind.is_prismatic() {
        "mm"
    } else {
        "deg"
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn revolute_joints_show_degrees_and_prismatic_ones_millimetres() {
        // source: from memory (π rad = 180°, 1 m = 1000 mm)
        assert_eq!(
            joint_display(JointKind::Revolute, std::f64::consts::PI),
            180.0
        );
        assert_eq!(
            joint_display(JointKind::Continuous, -std::f64::consts::FRAC_PI_2),
            -90.0
        );
        assert_eq!(joint_display(JointKind::Prismatic, 0.25), 250.0);
        assert_eq!(joint_unit(JointKind::Revolute), "deg");
        assert_eq!(joint_unit(JointKind::Prismatic), "mm");
    }
}
