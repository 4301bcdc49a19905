//! Top, side and end views of the TCP path and the arm (mm, base frame, equal scales on both
//! axes), drawn with plotters like the plots against s.

use super::plots::{draw_marker, err, error_colour, font, Figure, Pin, GREY, GRID, INK, PURPLE};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// A finding drawn on a path view: its stretch (view coordinates, mm) and marker.
pub struct ViewMark {
    pub number: usize,
    pub error: bool,
    pub stretch: Vec<(f64, f64)>,
    pub id: Option<String>,
    pub title: String,
}

/// A top or side view of the TCP path (mm, equal scales on both axes).
pub struct View<'a> {
    pub size: (u32, u32),
    pub x_desc: &'a str,
    pub y_desc: &'a str,
    pub path: Vec<(f64, f64)>,
    /// Waypoints (x, y, name).
    pub waypoints: Vec<(f64, f64, String)>,
    pub marks: Vec<ViewMark>,
    /// Cell bodies: outline polygons (mm), drawn light under everything.
    pub cell: Vec<Vec<(f64, f64)>>,
    /// Arm poses, drawn in order under the path.
    pub arms: Vec<ArmLayer>,
    /// The slider's poses: the projected joint origins of each (mm). Drawn by the page's
    /// script only; the figure carries them as SVG point lists ([`Figure::slider`]).
    pub slider: Vec<Vec<(f64, f64)>>,
}

/// One arm pose on a view.
pub struct ArmLayer {
    pub colour: RGBColor,
    /// Opacity of the outlines' fill: ghosts lighter than the start and end poses, so that
    /// a dozen overlapping ghosts do not hide the path.
    pub fill: f64,
    /// Written beside the TCP (a finding's number, `start`, `end`).
    pub label: Option<String>,
    /// Outline polygons of the links and tool bodies (mm).
    pub bodies: Vec<Vec<(f64, f64)>>,
    /// Joint origins from the base to the TCP (mm).
    pub skeleton: Vec<(f64, f64)>,
}

/// Element id of a view's slider arm (`tag`: `top`, `side`, `end`); the page's script sets
/// its points.
pub fn slider_id(tag: &str) -> String {
    format!("slide-{tag}")
}

const VIEW_LEFT: u32 = 62;
/// Views name every waypoint up to this many.
const NAMED_WAYPOINTS: usize = 30;
const VIEW_BOTTOM: u32 = 40;
const VIEW_MARGIN: u32 = 12;

/// Ranges for the view such that one mm is the same number of pixels on both axes.
fn equal_ranges(path: &[(f64, f64)], size: (u32, u32)) -> ([f64; 2], [f64; 2]) {
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for &(x, y) in path {
        x0 = x0.min(x);
        x1 = x1.max(x);
        y0 = y0.min(y);
        y1 = y1.max(y);
    }
    if x0 > x1 {
        return ([-1.0, 1.0], [-1.0, 1.0]);
    }
    let pw = (size.0 - VIEW_LEFT - 2 * VIEW_MARGIN) as f64;
    let ph = (size.1 - VIEW_BOTTOM - 2 * VIEW_MARGIN) as f64;
    // 10 mm at least: a path that is one point still gets a readable scale.
    let span = ((x1 - x0) / pw).max((y1 - y0) / ph).max(10.0 / pw.min(ph)) * 1.12;
    let (cx, cy) = (0.5 * (x0 + x1), 0.5 * (y0 + y1));
    (
        [cx - 0.5 * span * pw, cx + 0.5 * span * pw],
        [cy - 0.5 * span * ph, cy + 0.5 * span * ph],
    )
}

/// Draw a view of the TCP path and the arm; `tag` names the view in element ids.
pub fn view(spec: &View, tag: &str) -> Result<Figure, String> {
    let mut svg = String::new();
    let (w, h) = spec.size;
    let mut pins = Vec::new();
    let mut slider = Vec::new();
    {
        let root = SVGBackend::with_string(&mut svg, spec.size).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let extent: Vec<(f64, f64)> = spec
            .path
            .iter()
            .chain(
                spec.arms
                    .iter()
                    .flat_map(|a| a.bodies.iter().flatten().chain(&a.skeleton)),
            )
            .chain(spec.slider.iter().flatten())
            .copied()
            .collect();
        let (xr, yr) = equal_ranges(&extent, spec.size);
        let mut chart = ChartBuilder::on(&root)
            .margin(VIEW_MARGIN)
            .x_label_area_size(VIEW_BOTTOM)
            .y_label_area_size(VIEW_LEFT)
            .build_cartesian_2d(xr[0]..xr[1], yr[0]..yr[1])
            .map_err(err)?;
        chart
            .configure_mesh()
            .light_line_style(TRANSPARENT)
            .bold_line_style(GRID.stroke_width(1))
            .axis_style(INK.stroke_width(1))
            .x_labels(6)
            .y_labels(8)
            .label_style(font(11.0))
            .axis_desc_style(font(11.0))
            .x_desc(spec.x_desc)
            .y_desc(spec.y_desc)
            .x_label_formatter(&|v| format!("{v:.0}"))
            .y_label_formatter(&|v| format!("{v:.0}"))
            .draw()
            .map_err(err)?;
        // Cell bodies do not set the scale (a floor would dwarf the arm): cut to the view.
        for body in &spec.cell {
            draw_outline(&mut chart, &clip(body, xr, yr), GREY, 0.12)?;
        }
        for arm in &spec.arms {
            for body in &arm.bodies {
                draw_outline(&mut chart, body, arm.colour, arm.fill)?;
            }
            chart
                .draw_series(LineSeries::new(
                    arm.skeleton.iter().copied(),
                    arm.colour.mix(0.9).stroke_width(3),
                ))
                .map_err(err)?;
            if let (Some(label), Some(&tcp)) = (&arm.label, arm.skeleton.last()) {
                let (x, y) = chart.backend_coord(&tcp);
                root.draw(&Text::new(
                    label.clone(),
                    (x + 6, y - 6),
                    font(11.0)
                        .color(&arm.colour)
                        .pos(Pos::new(HPos::Left, VPos::Bottom)),
                ))
                .map_err(err)?;
            }
        }
        for pose in &spec.slider {
            let pts: Vec<String> = pose
                .iter()
                .map(|p| {
                    let (x, y) = chart.backend_coord(p);
                    format!("{x},{y}")
                })
                .collect();
            slider.push(pts.join(" "));
        }
        for m in &spec.marks {
            if m.stretch.len() > 1 {
                chart
                    .draw_series(LineSeries::new(
                        m.stretch.iter().copied(),
                        error_colour(m.error).mix(0.5).stroke_width(9),
                    ))
                    .map_err(err)?;
            }
        }
        chart
            .draw_series(LineSeries::new(
                spec.path.iter().copied(),
                INK.stroke_width(1),
            ))
            .map_err(err)?;
        // Names of all waypoints while there are few; of the first and last otherwise (a
        // raster's line ends would bury the view in labels).
        let name_all = spec.waypoints.len() <= NAMED_WAYPOINTS;
        let last = spec.waypoints.len().saturating_sub(1);
        let mut placed: Vec<(i32, i32)> = Vec::new();
        for (i, (x, y, name)) in spec.waypoints.iter().enumerate() {
            let (px_, py) = chart.backend_coord(&(*x, *y));
            if i == 0 {
                root.draw(&Rectangle::new(
                    [(px_ - 4, py - 4), (px_ + 4, py + 4)],
                    INK.filled(),
                ))
                .map_err(err)?;
            } else {
                root.draw(&Circle::new((px_, py), 3, INK.filled()))
                    .map_err(err)?;
            }
            if (name_all || i == 0 || i == last)
                && placed
                    .iter()
                    .all(|&(a, b)| (a - px_).abs() > 70 || (b - py).abs() > 14)
            {
                placed.push((px_, py));
                let text: String = name.chars().take(24).collect();
                let (anchor, dx) = if px_ > (w as i32) - 140 {
                    (HPos::Right, -7)
                } else {
                    (HPos::Left, 7)
                };
                root.draw(&Text::new(
                    text,
                    (px_ + dx, py + 10),
                    font(11.0).pos(Pos::new(anchor, VPos::Center)),
                ))
                .map_err(err)?;
            }
        }
        // Markers sit beside the path with a leader line to where the finding starts, moved
        // down until they clear the markers already placed.
        let mut used: Vec<(i32, i32)> = Vec::new();
        for m in &spec.marks {
            let Some(&first) = m.stretch.first() else {
                continue;
            };
            let (ax, ay) = chart.backend_coord(&first);
            let dx = if ax > w as i32 - 60 { -30 } else { 22 };
            let (mut x, mut y) = (ax + dx, ay - 10);
            while used
                .iter()
                .any(|&(a, b)| (a - x).abs() < 30 && (b - y).abs() < 18)
            {
                y += 19;
            }
            used.push((x, y));
            x = x.clamp(10, w as i32 - 24);
            y = y.clamp(10, h as i32 - 10);
            root.draw(&PathElement::new(
                vec![(ax, ay), (x - dx.signum() * 8, y)],
                INK.stroke_width(1),
            ))
            .map_err(err)?;
            draw_marker(&root, x, y, m.number, m.error)?;
            pins.push(Pin {
                number: m.number,
                x: x as f64 / w as f64,
                y: y as f64 / h as f64,
                id: m.id.clone(),
                title: m.title.clone(),
            });
        }
        root.present().map_err(err)?;
    }
    // The slider's arm: empty until the page's script gives it points (nothing shows with
    // scripts off).
    if !spec.slider.is_empty() {
        if let Some(end) = svg.rfind("</svg>") {
            svg.insert_str(
                end,
                &format!(
                    r##"<polyline id="{}" points="" fill="none" stroke="#{:02X}{:02X}{:02X}" stroke-width="5" stroke-linejoin="round" stroke-linecap="round" opacity="0.85"/>"##,
                    slider_id(tag),
                    PURPLE.0,
                    PURPLE.1,
                    PURPLE.2
                ),
            );
        }
    }
    Ok(Figure { svg, pins, slider })
}

/// A convex polygon cut to the rectangle `xr` × `yr` (Sutherland–Hodgman, one edge of the
/// rectangle at a time).
fn clip(polygon: &[(f64, f64)], xr: [f64; 2], yr: [f64; 2]) -> Vec<(f64, f64)> {
    let mut pts = polygon.to_vec();
    // Each edge: the coordinate (0 = x, 1 = y), the bound, and whether inside is above it.
    for (axis, bound, above) in [
        (0, xr[0], true),
        (0, xr[1], false),
        (1, yr[0], true),
        (1, yr[1], false),
    ] {
        let coord = |p: (f64, f64)| if axis == 0 { p.0 } else { p.1 };
        let inside = |p: (f64, f64)| (coord(p) >= bound) == above || coord(p) == bound;
        let mut out = Vec::with_capacity(pts.len() + 2);
        for (i, &b) in pts.iter().enumerate() {
            let a = pts[(i + pts.len() - 1) % pts.len()];
            if inside(b) != inside(a) {
                let u = (bound - coord(a)) / (coord(b) - coord(a));
                out.push((a.0 + (b.0 - a.0) * u, a.1 + (b.1 - a.1) * u));
            }
            if inside(b) {
                out.push(b);
            }
        }
        pts = out;
        if pts.is_empty() {
            break;
        }
    }
    pts
}

/// A closed outline with a light fill.
fn draw_outline(
    chart: &mut ChartContext<SVGBackend, Cartesian2d<RangedCoordf64, RangedCoordf64>>,
    points: &[(f64, f64)],
    colour: RGBColor,
    fill: f64,
) -> Result<(), String> {
    if points.len() < 2 {
        return Ok(());
    }
    chart
        .draw_series(std::iter::once(Polygon::new(
            points.to_vec(),
            colour.mix(fill).filled(),
        )))
        .map_err(err)?;
    let mut closed = points.to_vec();
    closed.push(points[0]);
    chart
        .draw_series(LineSeries::new(closed, colour.mix(0.7).stroke_width(1)))
        .map_err(err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_floor_larger_than_the_view_is_cut_to_it() {
        // source: geometry by hand (a 4 m square floor seen through a 1 m window)
        let floor = [
            (-2000.0, -2000.0),
            (2000.0, -2000.0),
            (2000.0, 2000.0),
            (-2000.0, 2000.0),
        ];
        let cut = clip(&floor, [0.0, 1000.0], [-500.0, 500.0]);
        let mut corners = cut.clone();
        corners.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
        assert_eq!(
            corners,
            vec![
                (0.0, -500.0),
                (0.0, 500.0),
                (1000.0, -500.0),
                (1000.0, 500.0)
            ]
        );
        // A triangle wholly outside leaves nothing.
        assert!(clip(
            &[(5e3, 0.0), (6e3, 0.0), (5e3, 1.0)],
            [0.0, 1.0],
            [0.0, 1.0]
        )
        .is_empty());
    }

    #[test]
    fn views_keep_one_scale_on_both_axes() {
        // source: common practice (a plan view is only readable at equal scales)
        let size = (600, 400);
        let (x, y) = equal_ranges(&[(0.0, 0.0), (300.0, 20.0)], size);
        let pw = (size.0 - VIEW_LEFT - 2 * VIEW_MARGIN) as f64;
        let ph = (size.1 - VIEW_BOTTOM - 2 * VIEW_MARGIN) as f64;
        let sx = (x[1] - x[0]) / pw;
        let sy = (y[1] - y[0]) / ph;
        assert!((sx - sy).abs() < 1e-12, "{sx} vs {sy}");
        assert!(x[0] < 0.0 && x[1] > 300.0 && y[0] < 0.0 && y[1] > 20.0);
    }
}
