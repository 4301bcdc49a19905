//! The singularity distances of the family read off the closed form's own quantities, with
//! no pass over the chain's joint frames.

use super::OrthoParallel;
use crate::robot::Joints;
use nalgebra::{Isometry3, Vector3};

impl OrthoParallel {
    /// The three distances that name the nearest singularity of joints `q` whose TCP pose is
    /// `base_T_tcp` (the pose the walk's forward kinematics gave for `q`): wrist `|sin θ5|`
    /// (the sine of the angle between axes 4 and 6), elbow `|sin(θ3 + ψ)|` (the sine of the
    /// angle between the upper arm and the line from axis 3 to the wrist centre), and the
    /// wrist centre's distance from axis 1 (m). Each is 0 at its singularity; they are the
    /// distances [`crate::robot::SingularityModel::class_distances`] measures on the joint
    /// frames, the last one before its division by the reach.
    pub fn singular_distances(&self, q: &Joints, base_T_tcp: &Isometry3<f64>) -> (f64, f64, f64) {
        let g = &self.model.geometry;
        let t = self.canonical(q);
        let wrist = t[4].sin().abs();
        let elbow = (t[2] + g.psi).sin().abs();
        // The wrist centre in the canonical frame, whose z axis is axis 1: as the solver
        // finds it from a target.
        let C_T_flange = self.C_T_base * base_T_tcp * self.tcp_T_flange;
        let centre = C_T_flange.translation.vector - g.c4 * (C_T_flange.rotation * Vector3::z());
        (wrist, elbow, centre.x.hypot(centre.y))
    }
}

#[cfg(test)]
mod tests {
    use crate::ik::analytic::OrthoParallel;
    use crate::rng::SplitMix64;
    use crate::robot::SingularityModel;

    #[test]
    fn closed_form_distances_are_the_frame_pass_distances() {
        // source: SingularityModel::class_distances, the same three distances measured on the
        // chain's joint frames (an independent computation), on 2,000 random poses of the
        // demo arm, bare and with an offset, tilted tool.
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let tool = nalgebra::Isometry3::new(
            nalgebra::Vector3::new(0.03, -0.02, 0.18),
            nalgebra::Vector3::new(0.2, -0.4, 0.1),
        );
        for (urdf, tip_T_tcp) in [("bare", None), ("tool", Some(tool))] {
            let mut robot = crate::robot::load_urdf(&dir.join("robots/arm6.urdf"), None).unwrap();
            if let Some(t) = tip_T_tcp {
                robot.set_tool(t);
            }
            let solver = OrthoParallel::from_robot(&robot).unwrap();
            let model = SingularityModel::new(&robot);
            let mut rng = SplitMix64::new(0x5106);
            for _ in 0..2000 {
                let q = robot.random_config(&mut rng);
                let pose = robot.chain().fk(&q);
                let (w, e, s) = solver.singular_distances(&q, &pose);
                let (fw, fe, fs) = model.class_distances(robot.chain(), &q).unwrap();
                let tol = 1e-9;
                assert!((w - fw).abs() < tol, "{urdf}: wrist {w} vs {fw}");
                assert!((e - fe).abs() < tol, "{urdf}: elbow {e} vs {fe}");
                assert!((s / robot.reach() - fs).abs() < tol, "{urdf}: shoulder");
                assert_eq!(
                    model.class_from(w, e, s),
                    model.classify(robot.chain(), &q),
                    "{urdf}"
                );
            }
        }
    }
}
