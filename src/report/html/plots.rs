//! The figures of the page, drawn with plotters into SVG strings: plots against path
//! distance (the views of the TCP path are in `views`). Colours come from the Okabe–Ito
//! palette (distinguishable with the common colour-vision deficiencies); severity is carried
//! by shape as well (▲ filled triangle = error, ○ hollow circle = warning), never by colour
//! alone. Finding markers are returned as [`Pin`]s so that the page can put links on them.

use plotters::coord::ranged1d::{AsRangedCoord, ValueFormatter};
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Okabe–Ito colours.
pub const BLUE: RGBColor = RGBColor(0x00, 0x72, 0xB2);
pub const ORANGE: RGBColor = RGBColor(0xE6, 0x9F, 0x00);
pub const VERMILLION: RGBColor = RGBColor(0xD5, 0x5E, 0x00);
pub const GREEN: RGBColor = RGBColor(0x00, 0x9E, 0x73);
pub const PURPLE: RGBColor = RGBColor(0xCC, 0x79, 0xA7);
pub const SKY: RGBColor = RGBColor(0x56, 0xB4, 0xE9);
pub const INK: RGBColor = RGBColor(0x1A, 0x1A, 0x1A);
pub(super) const GREY: RGBColor = RGBColor(0x77, 0x77, 0x77);
pub(super) const GRID: RGBColor = RGBColor(0xE4, 0xE4, 0xE4);

/// Line colours of joints 1..7 in the speed plot: the palette without the two severity
/// colours first, then those (their lines are labelled by name all the same).
pub const JOINT_COLOURS: [RGBColor; 7] = [BLUE, GREEN, PURPLE, SKY, INK, ORANGE, VERMILLION];

pub fn error_colour(error: bool) -> RGBColor {
    if error {
        VERMILLION
    } else {
        ORANGE
    }
}

/// Font size argument for plotters: its SVG backend writes `size / 1.24` px.
fn px(size: f64) -> f64 {
    size * 1.24
}

pub(super) fn font(size: f64) -> TextStyle<'static> {
    ("sans-serif", px(size)).into_font().color(&INK)
}

fn bold(size: f64) -> TextStyle<'static> {
    ("sans-serif", px(size), FontStyle::Bold)
        .into_font()
        .color(&INK)
}

/// Tick label: as few decimals as the axis span needs; on a log axis, enough decimals to
/// show the leading digit.
fn tick(v: f64, span: f64, log: bool) -> String {
    let digits = if log {
        if v >= 1.0 {
            0
        } else {
            (-v.log10()).ceil().clamp(0.0, 8.0) as usize
        }
    } else if span >= 20.0 {
        0
    } else if span >= 2.0 {
        1
    } else {
        2
    };
    format!("{v:.digits$}")
}

/// Tick label of path distance (mm): in metres, marked so, on paths of 10 m and more,
/// where five-digit millimetre labels would run into each other.
fn s_tick(mm: f64, length: f64) -> String {
    if length >= 10_000.0 {
        let m = mm / 1e3;
        if m == 0.0 {
            "0".into()
        } else {
            format!("{} m", tick(m, length / 1e3, false))
        }
    } else {
        format!("{mm:.0}")
    }
}

pub(super) fn err<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

/// A finding to mark on a figure (s in mm).
#[derive(Debug, Clone)]
pub struct Mark {
    pub number: usize,
    pub error: bool,
    pub s: [f64; 2],
    /// Element id of the pin (the findings table links to it).
    pub id: Option<String>,
    pub title: String,
}

/// A marker placed on a figure, as fractions of the figure's width and height.
#[derive(Debug, Clone)]
pub struct Pin {
    pub number: usize,
    pub x: f64,
    pub y: f64,
    pub id: Option<String>,
    pub title: String,
}

/// A drawn figure.
#[derive(Debug, Clone)]
pub struct Figure {
    pub svg: String,
    pub pins: Vec<Pin>,
    /// Path views only: the slider's poses as SVG point lists (pixels), one per pose.
    pub slider: Vec<String>,
}

/// A data line (s in mm): polylines broken at gaps.
pub struct Line {
    pub colour: RGBColor,
    pub width: u32,
    pub runs: Vec<Vec<(f64, f64)>>,
    /// Written beside the line's peak.
    pub label: Option<String>,
}

/// A horizontal limit line.
pub struct Rule {
    pub y: f64,
    pub label: String,
}

/// The x axis of a plot.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Axis {
    /// Path distance s of the TCP (mm).
    Distance,
    /// Time from the start (s).
    Time,
}

impl Axis {
    fn desc(self) -> &'static str {
        match self {
            Axis::Distance => "s (mm)",
            Axis::Time => "t (s)",
        }
    }

    /// Tick label of the axis, `end` being the axis' extent.
    fn tick(self, v: f64, end: f64) -> String {
        match self {
            Axis::Distance => s_tick(v, end),
            Axis::Time => tick(v, end, false),
        }
    }
}

/// A plot against path distance or time.
pub struct SPlot<'a> {
    pub size: (u32, u32),
    pub axis: Axis,
    pub y_desc: String,
    /// Extent of the x axis in its unit (path length in mm, or duration in s); the axis runs
    /// from 0 to here.
    pub x_max: f64,
    pub y: [f64; 2],
    pub log_y: bool,
    pub lines: Vec<Line>,
    pub rules: Vec<Rule>,
    /// Horizontal bands [y0, y1] with their fill (near-limit margins, outside the range).
    pub bands: Vec<([f64; 2], RGBAColor)>,
    /// Stretches with unreachable samples (x unit).
    pub gaps: &'a [[f64; 2]],
    /// Waypoints (x in its unit, name).
    pub waypoints: &'a [(f64, String)],
    pub waypoint_names: bool,
    pub marks: Vec<Mark>,
}

/// Draw a finding marker centred at pixel (x, y): filled triangle for an error, hollow circle
/// for a warning, its number beside it.
pub(super) fn draw_marker(
    root: &DrawingArea<SVGBackend, Shift>,
    x: i32,
    y: i32,
    number: usize,
    error: bool,
) -> Result<(), String> {
    if error {
        let tri = vec![(x, y - 8), (x - 7, y + 5), (x + 7, y + 5)];
        root.draw(&Polygon::new(tri.clone(), VERMILLION.filled()))
            .map_err(err)?;
        let mut outline = tri;
        outline.push((x, y - 8));
        root.draw(&PathElement::new(outline, INK.stroke_width(1)))
            .map_err(err)?;
    } else {
        root.draw(&Circle::new((x, y), 6, WHITE.filled()))
            .map_err(err)?;
        root.draw(&Circle::new((x, y), 6, ORANGE.stroke_width(3)))
            .map_err(err)?;
        root.draw(&Circle::new((x, y), 8, INK.stroke_width(1)))
            .map_err(err)?;
    }
    root.draw(&Text::new(
        number.to_string(),
        (x + 10, y),
        bold(12.0).pos(Pos::new(HPos::Left, VPos::Center)),
    ))
    .map_err(err)
}

/// Stagger marker rows so that markers closer than `gap` px do not overlap.
fn stagger(xs: &[i32], gap: i32, rows: usize) -> Vec<usize> {
    let mut last: Vec<Option<i32>> = vec![None; rows];
    xs.iter()
        .map(|&x| {
            let row = (0..rows)
                .find(|&r| last[r].is_none_or(|l| x - l >= gap))
                .unwrap_or_else(|| {
                    (0..rows)
                        .min_by_key(|&r| last[r].unwrap_or(i32::MIN))
                        .unwrap_or(0)
                });
            last[row] = Some(x);
            row
        })
        .collect()
}

/// Draw a plot against path distance.
pub fn s_plot(spec: &SPlot) -> Result<Figure, String> {
    let (y0, y1) = (spec.y[0], spec.y[1]);
    if spec.log_y {
        draw_s_plot(spec, (y0..y1).log_scale())
    } else {
        draw_s_plot(spec, y0..y1)
    }
}

fn draw_s_plot<Y>(spec: &SPlot, y_coord: Y) -> Result<Figure, String>
where
    Y: AsRangedCoord<Value = f64>,
    Y::CoordDescType: ValueFormatter<f64>,
{
    let mut svg = String::new();
    let (w, h) = spec.size;
    // A path of one point still gets a 1 mm (or 0.01 s) axis.
    let x_max = spec.x_max.max(match spec.axis {
        Axis::Distance => 1.0,
        Axis::Time => 0.01,
    });
    let mut pins = Vec::new();
    {
        let root = SVGBackend::with_string(&mut svg, spec.size).into_drawing_area();
        root.fill(&WHITE).map_err(err)?;
        let mut chart = ChartBuilder::on(&root)
            // Waypoint names stand above the frame, like a second axis.
            .margin_top(if spec.waypoint_names { 20 } else { 8 })
            .margin_right(14)
            .margin_left(6)
            .margin_bottom(4)
            .x_label_area_size(38)
            .y_label_area_size(58)
            .build_cartesian_2d(0.0..x_max, y_coord)
            .map_err(err)?;
        chart
            .configure_mesh()
            .light_line_style(TRANSPARENT)
            .bold_line_style(GRID.stroke_width(1))
            .axis_style(INK.stroke_width(1))
            .x_labels(if w > 700 { 12 } else { 6 })
            .y_labels(5)
            .label_style(font(11.0))
            .axis_desc_style(font(11.0))
            .y_desc(spec.y_desc.as_str())
            .x_desc(spec.axis.desc())
            .x_label_formatter(&|v| spec.axis.tick(*v, x_max))
            .y_label_formatter(&|v| tick(*v, spec.y[1] - spec.y[0], spec.log_y))
            .draw()
            .map_err(err)?;
        let (xr, yr) = chart.plotting_area().get_pixel_range();
        // The x axis is linear from 0 to x_max across the plotting area's pixels.
        let (xa, xb) = (xr.start, xr.end);
        let xpx =
            move |s: f64| xa + ((s / x_max).clamp(0.0, 1.0) * (xb - xa) as f64).round() as i32;
        let band = |a: f64, b: f64, colour: RGBAColor| -> Result<(), String> {
            let (l, r) = (xpx(a), xpx(b));
            let (l, r) = if r - l < 3 { (l - 1, l + 2) } else { (l, r) };
            root.draw(&Rectangle::new(
                [(l, yr.start), (r, yr.end)],
                colour.filled(),
            ))
            .map_err(err)
        };
        for ([a, b], colour) in &spec.bands {
            let ya = chart.backend_coord(&(0.0, *a)).1.clamp(yr.start, yr.end);
            let yb = chart.backend_coord(&(0.0, *b)).1.clamp(yr.start, yr.end);
            if ya != yb {
                root.draw(&Rectangle::new(
                    [(xr.start, ya.min(yb)), (xr.end, ya.max(yb))],
                    colour.filled(),
                ))
                .map_err(err)?;
            }
        }
        for g in spec.gaps {
            band(g[0], g[1], GREY.mix(0.28))?;
        }
        for m in &spec.marks {
            band(m.s[0], m.s[1], error_colour(m.error).mix(0.22))?;
        }
        // Waypoints: full-height lines while they are sparse; where they would grey the
        // plot over (more than one per 12 px on average), short ticks on the axis instead.
        let mut wx: Vec<i32> = spec.waypoints.iter().map(|(s, _)| xpx(*s)).collect();
        wx.dedup();
        let sparse = (wx.len() as i32) * 12 <= xr.end - xr.start;
        let top = if sparse { yr.start } else { yr.end - 7 };
        for &x in &wx {
            root.draw(&PathElement::new(
                vec![(x, top), (x, yr.end)],
                GREY.mix(if sparse { 0.55 } else { 0.8 }).stroke_width(1),
            ))
            .map_err(err)?;
        }
        for rule in &spec.rules {
            let y = chart.backend_coord(&(0.0, rule.y)).1;
            if y < yr.start || y > yr.end {
                continue;
            }
            root.draw(&DashedPathElement::new(
                vec![(xr.start, y), (xr.end, y)],
                7,
                4,
                INK.stroke_width(2),
            ))
            .map_err(err)?;
            root.draw(&Text::new(
                rule.label.clone(),
                (xr.end - 4, y - 3),
                font(11.0).pos(Pos::new(HPos::Right, VPos::Bottom)),
            ))
            .map_err(err)?;
        }
        for line in &spec.lines {
            for run in &line.runs {
                chart
                    .draw_series(LineSeries::new(
                        run.iter().copied(),
                        line.colour.stroke_width(line.width),
                    ))
                    .map_err(err)?;
            }
        }
        // Peak labels, highest peak first: where two would overlap, the busier line keeps
        // its name.
        let mut peaks: Vec<(&Line, (f64, f64))> = spec
            .lines
            .iter()
            .filter_map(|line| {
                let peak = line
                    .runs
                    .iter()
                    .flatten()
                    .copied()
                    .max_by(|a, b| a.1.total_cmp(&b.1))?;
                Some((line, peak))
            })
            .collect();
        peaks.sort_by(|a, b| b.1 .1.total_cmp(&a.1 .1));
        // Placed labels: peak pixel and label width (about 7 px per character in bold 12).
        let mut labels: Vec<(i32, i32, i32)> = Vec::new();
        for (line, p) in peaks {
            if let Some(label) = &line.label {
                let (x, y) = chart.backend_coord(&p);
                let y = (y - 6).max(yr.start + 10);
                let w = 7 * label.chars().count() as i32 + 8;
                if labels
                    .iter()
                    .all(|&(lx, ly, lw)| (lx - x).abs() > lw.max(w) || (ly - y).abs() > 14)
                {
                    labels.push((x, y, w));
                    // Near the right edge the label goes left of the peak, inside the plot.
                    let (anchor, lx) = if x > xr.end - 30 {
                        (HPos::Right, x - 4)
                    } else {
                        (HPos::Left, x + 4)
                    };
                    root.draw(&Text::new(
                        label.clone(),
                        (lx, y),
                        bold(12.0)
                            .color(&line.colour)
                            .pos(Pos::new(anchor, VPos::Bottom)),
                    ))
                    .map_err(err)?;
                }
            }
        }
        if spec.waypoint_names {
            let mut next_free = i32::MIN;
            for (s, name) in spec.waypoints {
                let x = xpx(*s);
                let text: String = name.chars().take(18).collect();
                // About 6 px per character at this size.
                let width = 6 * text.chars().count() as i32;
                let right = x > xr.end - 80;
                let (anchor, tx, left_edge) = if right {
                    (HPos::Right, x - 3, x - 3 - width)
                } else {
                    (HPos::Left, x + 3, x)
                };
                if left_edge < next_free {
                    continue;
                }
                root.draw(&Text::new(
                    text.clone(),
                    (tx, yr.start - 4),
                    font(10.0)
                        .color(&RGBColor(0x44, 0x44, 0x44))
                        .pos(Pos::new(anchor, VPos::Bottom)),
                ))
                .map_err(err)?;
                next_free = left_edge.max(tx) + width + 12;
            }
        }
        let xs: Vec<i32> = spec.marks.iter().map(|m| xpx(m.s[0])).collect();
        let rows = stagger(&xs, 30, 4);
        for ((m, &x), &row) in spec.marks.iter().zip(&xs).zip(&rows) {
            let y = yr.start + 11 + 19 * row as i32;
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
    Ok(Figure {
        svg,
        pins,
        slider: Vec::new(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markers_closer_than_the_gap_go_to_other_rows() {
        // source: common practice (staggered labels instead of overlapping ones)
        assert_eq!(stagger(&[0, 10, 100, 105, 110], 30, 4), vec![0, 1, 0, 1, 2]);
        // More close markers than rows: reuse the row used longest ago.
        assert_eq!(stagger(&[0, 1, 2], 30, 2), vec![0, 1, 0]);
    }

    #[test]
    fn plot_text_is_escaped() {
        // source: SVG/XML escaping of character data (W3C XML 1.0 §2.4)
        let wp = [(0.0, "a<b&\"c\"".to_string())];
        let fig = s_plot(&SPlot {
            size: (400, 200),
            axis: Axis::Distance,
            y_desc: "x <y>".into(),
            x_max: 10.0,
            y: [0.0, 1.0],
            log_y: false,
            lines: vec![],
            rules: vec![],
            bands: vec![],
            gaps: &[],
            waypoints: &wp,
            waypoint_names: true,
            marks: vec![],
        })
        .unwrap();
        assert!(fig.svg.contains("a&lt;b&amp;&quot;c&quot;"), "{}", fig.svg);
        assert!(!fig.svg.contains("<b&"));
        assert!(fig.svg.contains("x &lt;y&gt;"));
    }
}
