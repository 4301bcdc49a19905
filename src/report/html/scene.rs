//! What the path views draw besides the TCP path: the cell bodies, the arm at the start, at
//! each drawn finding's worst sample (a "ghost" pose labelled with the finding's number) and
//! at the end, and the slider's poses. Forward kinematics runs here, for these poses only.

use super::arm::{hull, project, Outline, PoseShape};
use super::data::PlotData;
use super::plots::{error_colour, BLUE, GREEN};
use super::poses::KeptPose;
use super::views::ArmLayer;
use crate::assess::Severity;
#[cfg(test)]
use crate::cell::CellModel;
use crate::report::Report;
use nalgebra::Point3;
use plotters::style::RGBColor;

/// Ghost poses drawn at most. Each is a full arm in three views; past a dozen they cover
/// one another and the path, and the findings table still lists every finding.
pub const MAX_GHOSTS: usize = 12;

/// One drawn pose and how it is labelled.
struct Drawn {
    colour: RGBColor,
    fill: f64,
    label: String,
    shape: PoseShape,
}

/// The arm scene of a report; see the module doc.
pub struct Scene {
    cell: Vec<Outline>,
    /// Ghosts first (drawn under), then the start and the end pose.
    poses: Vec<Drawn>,
    slider: Vec<Vec<Point3<f64>>>,
    /// The slider's poses (where they are on the path).
    pub slider_poses: Vec<KeptPose>,
    /// Findings drawn as ghost poses (1-based numbers, as the findings table numbers them).
    pub ghosts: Vec<usize>,
    /// Findings with a worst pose that were not drawn (beyond [`MAX_GHOSTS`]).
    pub ghosts_left_out: usize,
}

impl Scene {
    /// The scene of `report` with the poses kept in `data`; empty before the first sample.
    pub fn new(report: &Report, data: &PlotData) -> Scene {
        let mut scene = Scene {
            cell: Vec::new(),
            poses: Vec::new(),
            slider: Vec::new(),
            slider_poses: Vec::new(),
            ghosts: Vec::new(),
            ghosts_left_out: 0,
        };
        let Some(arm) = data.arm_geometry() else {
            return scene;
        };
        let fits = |q: &crate::robot::Joints| q.len() == arm.dof();
        scene.cell = arm.cell_bodies();
        // Errors before warnings, each in path order.
        let mut candidates: Vec<(usize, Severity, crate::robot::Joints)> = report
            .findings
            .iter()
            .enumerate()
            // An unreachable run has no pose of its own (its joints are the last reached).
            .filter(|(_, f)| f.kind != "unreachable")
            .filter_map(|(i, f)| {
                let q = f.worst_joints.filter(fits)?;
                f.s_mm?;
                Some((i + 1, f.severity, q))
            })
            .collect();
        candidates.sort_by_key(|c| (c.1 != Severity::Error, c.0));
        scene.ghosts_left_out = candidates.len().saturating_sub(MAX_GHOSTS);
        candidates.truncate(MAX_GHOSTS);
        candidates.sort_by_key(|c| c.0);
        for (n, severity, q) in candidates {
            scene.ghosts.push(n);
            scene.poses.push(Drawn {
                colour: error_colour(severity == Severity::Error),
                fill: 0.04,
                label: n.to_string(),
                shape: arm.pose(&q),
            });
        }
        let ends = [
            (data.poses().first(), BLUE, "start"),
            (data.poses().last(), GREEN, "end"),
        ];
        for (pose, colour, label) in ends {
            if let Some(p) = pose.filter(|p| fits(&p.joints)) {
                scene.poses.push(Drawn {
                    colour,
                    fill: 0.1,
                    label: label.into(),
                    shape: arm.pose(&p.joints),
                });
            }
        }
        scene.slider_poses = data
            .poses()
            .slider()
            .into_iter()
            .filter(|p| fits(&p.joints))
            .collect();
        scene.slider = scene
            .slider_poses
            .iter()
            .map(|p| arm.skeleton(&p.joints))
            .collect();
        scene
    }

    /// The scene on one view (`axes`: the base axes along the view's x and y): cell outlines,
    /// arm layers and the slider's joint origins, mm.
    pub fn on(&self, axes: [usize; 2]) -> SceneView {
        let outline = |o: &Outline| hull(&project(&o.points, axes));
        SceneView {
            cell: self.cell.iter().map(outline).collect(),
            arms: self
                .poses
                .iter()
                .map(|d| ArmLayer {
                    colour: d.colour,
                    fill: d.fill,
                    label: Some(d.label.clone()),
                    bodies: d.shape.bodies.iter().map(outline).collect(),
                    skeleton: project(&d.shape.skeleton, axes),
                })
                .collect(),
            slider: self.slider.iter().map(|s| project(s, axes)).collect(),
        }
    }
}

/// A scene projected on one view.
pub struct SceneView {
    /// Outlines of the bodies fixed in the base frame (mm).
    pub cell: Vec<Vec<(f64, f64)>>,
    /// The drawn poses: ghosts, then start and end.
    pub arms: Vec<ArmLayer>,
    /// Each slider pose's joint origins (mm).
    pub slider: Vec<Vec<(f64, f64)>>,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::{check, CheckOptions};
    use crate::robot::Joints;

    /// A demo path checked with the page's collector, and its report.
    fn demo(path: &str) -> (Report, PlotData) {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let job = crate::job::load(&dir.join(path), &crate::job::Overrides::default()).unwrap();
        let robot = crate::robot::load_urdf(&job.robot, job.tip.as_deref()).unwrap();
        let mut data = PlotData::new(&job);
        let outcome = check(&job, &robot, &CheckOptions::default(), &mut [&mut data]).unwrap();
        (Report::from_outcome(&outcome).unwrap(), data)
    }

    #[test]
    fn the_drawn_arm_ends_at_the_programmed_tcp() {
        // source: common practice (FK of the solved joints meets the target within the IK
        // tolerance, far below 0.01 mm); the first and last trace points are the programmed
        // TCP at the first and last sample, recorded by the walk, not by the drawing
        let (_, data) = demo("paths/bracket_fillet.yaml");
        let arm = data.arm_geometry().unwrap();
        let trace = data.trace().points();
        for (pose, target) in [
            (data.poses().first(), trace.first()),
            (data.poses().last(), trace.last()),
        ] {
            let tip = arm
                .pose(&pose.unwrap().joints)
                .skeleton
                .last()
                .copied()
                .unwrap();
            let p = target.unwrap().p;
            let miss = (tip - Point3::new(p[0], p[1], p[2])).norm();
            assert!(miss < 0.01, "drawn TCP {tip} is {miss} mm from {p:?}");
        }
    }

    #[test]
    fn ghost_poses_are_capped_errors_first() {
        // source: paths/rib_weld_collides.yaml header (collision errors and clearance
        // warnings along the seam: more findings than the cap); the cap is MAX_GHOSTS
        let (report, data) = demo("paths/rib_weld_collides.yaml");
        let with_pose = report
            .findings
            .iter()
            .filter(|f| f.worst_joints.is_some() && f.s_mm.is_some())
            .count();
        assert!(with_pose > MAX_GHOSTS, "{with_pose}");
        let scene = Scene::new(&report, &data);
        assert_eq!(scene.ghosts.len(), MAX_GHOSTS);
        assert_eq!(scene.ghosts_left_out, with_pose - MAX_GHOSTS);
        let errors = report
            .findings
            .iter()
            .filter(|f| f.severity == Severity::Error && f.worst_joints.is_some())
            .count();
        let drawn_errors = scene
            .ghosts
            .iter()
            .filter(|&&n| report.findings[n - 1].severity == Severity::Error)
            .count();
        assert_eq!(drawn_errors, errors.min(MAX_GHOSTS));
        // Numbers in table order; start and end drawn as well.
        assert!(scene.ghosts.windows(2).all(|w| w[0] < w[1]));
        assert_eq!(scene.on([0, 1]).arms.len(), MAX_GHOSTS + 2);
        assert!(!scene.slider_poses.is_empty());
    }

    #[test]
    fn the_demo_arms_do_not_touch_themselves_in_ordinary_poses() {
        // source: robots/*.urdf comments (invented shapes within each link's span); the poses,
        // chosen by hand, reach forward of the base over a table (arm6_offset: upper arm
        // raised 45°, forearm folded down) and each arm's zero pose (arm7's is upright)
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        for (file, deg) in [
            (
                "robots/arm6_offset.urdf",
                vec![10.0, 45.0, -100.0, -35.0, 90.0, 0.0],
            ),
            ("robots/arm6_offset.urdf", vec![0.0; 6]),
            (
                "robots/arm7.urdf",
                vec![10.0, 20.0, -30.0, 40.0, 50.0, 60.0, -20.0],
            ),
            ("robots/arm7.urdf", vec![0.0; 7]),
        ] {
            let robot = crate::robot::load_urdf(&dir.join(file), None).unwrap();
            let model = CellModel::build(crate::cell::CellInputs {
                robot: &robot,
                tool: &[],
                cell: None,
                base_T_work: nalgebra::Isometry3::identity(),
                clearance: 0.0,
            })
            .unwrap();
            assert!(!model.pairs().is_empty(), "{file}: no self-collision pairs");
            let q: Vec<f64> = deg.iter().map(|d: &f64| d.to_radians()).collect();
            let mut probe = crate::cell::CellProbe::new(&model);
            probe.sample(&model, &q, false);
            for p in 0..model.pairs().len() {
                assert!(
                    probe.distance(p) > 0.0,
                    "{file} at {deg:?}: {:?} touch",
                    model.pair_names(p)
                );
            }
            assert_eq!(Joints::from_slice(&q).map(|j| j.len()), Some(robot.dof()));
        }
    }
}
