//! The top view of a placement search as SVG: one cell per (dx, dy), showing the best
//! placement over dz and dyaw.
//!
//! Style: the verdict is carried twice, by hue and by marker shape, so the map reads in grey
//! print and with any common colour-vision deficiency: pass = blue cell with a ring, warn =
//! amber cell with a triangle, fail = dark grey cell with a cross. Blue and amber differ in
//! the blue–yellow axis that red–green deficiencies keep, and the fail grey differs from both
//! in lightness. Within pass and warn the cell darkens with the ranking margin (lighter =
//! closer to a limit or singularity). The programmed placement (0, 0) is outlined.

use super::place::Placement;
use crate::report::Verdict;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

const PASS: RGBColor = RGBColor(0x1F, 0x5F, 0xA8);
const PASS_LIGHT: RGBColor = RGBColor(0xC6, 0xDB, 0xF0);
const WARN: RGBColor = RGBColor(0xD9, 0x8C, 0x10);
const WARN_LIGHT: RGBColor = RGBColor(0xF7, 0xE0, 0xB0);
const FAIL: RGBColor = RGBColor(0x4A, 0x4A, 0x4A);
const INK: RGBColor = RGBColor(0x1A, 0x1A, 0x1A);

fn blend(a: RGBColor, b: RGBColor, t: f64) -> RGBColor {
    let t = t.clamp(0.0, 1.0);
    let m = |x: u8, y: u8| (x as f64 + (y as f64 - x as f64) * t).round() as u8;
    RGBColor(m(a.0, b.0), m(a.1, b.1), m(a.2, b.2))
}

fn cell_colour(p: &Placement) -> RGBColor {
    match p.verdict {
        Verdict::Pass => blend(PASS_LIGHT, PASS, p.score),
        Verdict::Warn => blend(WARN_LIGHT, WARN, p.score),
        Verdict::Fail => FAIL,
    }
}

fn font(size: f64) -> TextStyle<'static> {
    // plotters' SVG backend writes `size / 1.24` px.
    ("sans-serif", size * 1.24).into_font().color(&INK)
}

/// Draw the map. `cells` holds one placement per (dx, dy); `step` is the grid step in x and
/// y (file units); `unit` the length unit's name.
pub fn svg(
    cells: &[Placement],
    step: (f64, f64),
    unit: &str,
    title: &str,
) -> Result<String, String> {
    let err = |e: &dyn std::fmt::Display| e.to_string();
    if cells.is_empty() {
        return Err("no placements to draw".into());
    }
    let (hx, hy) = (0.5 * step.0, 0.5 * step.1);
    let min_x = cells.iter().map(|c| c.dx).fold(f64::INFINITY, f64::min) - hx;
    let max_x = cells.iter().map(|c| c.dx).fold(f64::NEG_INFINITY, f64::max) + hx;
    let min_y = cells.iter().map(|c| c.dy).fold(f64::INFINITY, f64::min) - hy;
    let max_y = cells.iter().map(|c| c.dy).fold(f64::NEG_INFINITY, f64::max) + hy;
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (760, 700)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| err(&e))?;
        let (main, legend) = root.split_vertically(640);
        let mut chart = ChartBuilder::on(&main)
            .caption(title, font(15.0))
            .margin(12)
            .x_label_area_size(44)
            .y_label_area_size(60)
            .build_cartesian_2d(min_x..max_x, min_y..max_y)
            .map_err(|e| err(&e))?;
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(format!("work frame offset x ({unit}), robot base frame"))
            .y_desc(format!("offset y ({unit})"))
            .label_style(font(11.0))
            .axis_desc_style(font(12.0))
            .draw()
            .map_err(|e| err(&e))?;
        chart
            .draw_series(cells.iter().map(|c| {
                Rectangle::new(
                    [(c.dx - hx, c.dy - hy), (c.dx + hx, c.dy + hy)],
                    cell_colour(c).filled(),
                )
            }))
            .map_err(|e| err(&e))?;
        chart
            .draw_series(cells.iter().map(|c| {
                Rectangle::new(
                    [(c.dx - hx, c.dy - hy), (c.dx + hx, c.dy + hy)],
                    WHITE.stroke_width(1),
                )
            }))
            .map_err(|e| err(&e))?;
        for c in cells {
            let at = (c.dx, c.dy);
            match c.verdict {
                Verdict::Pass => chart
                    .draw_series(std::iter::once(Circle::new(at, 5, WHITE.stroke_width(2))))
                    .map(|_| ()),
                Verdict::Warn => chart
                    .draw_series(std::iter::once(TriangleMarker::new(at, 6, INK.filled())))
                    .map(|_| ()),
                Verdict::Fail => chart
                    .draw_series(std::iter::once(Cross::new(at, 5, WHITE.stroke_width(2))))
                    .map(|_| ()),
            }
            .map_err(|e| err(&e))?;
        }
        if let Some(c) = cells.iter().find(|c| c.dx == 0.0 && c.dy == 0.0) {
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(c.dx - hx, c.dy - hy), (c.dx + hx, c.dy + hy)],
                    INK.stroke_width(3),
                )))
                .map_err(|e| err(&e))?;
        }
        let items: [(&str, RGBColor); 3] = [
            ("pass (ring): darker = larger margin", PASS),
            ("warn (triangle)", WARN),
            ("fail (cross)", FAIL),
        ];
        for (i, (label, colour)) in items.iter().enumerate() {
            let x = 70 + 230 * i as i32;
            legend
                .draw(&Rectangle::new([(x, 14), (x + 18, 32)], colour.filled()))
                .map_err(|e| err(&e))?;
            legend
                .draw(&Text::new(
                    label.to_string(),
                    (x + 24, 23),
                    font(11.0).pos(Pos::new(HPos::Left, VPos::Center)),
                ))
                .map_err(|e| err(&e))?;
        }
        legend
            .draw(&Text::new(
                "Each cell: the best placement over z and yaw. Outlined: the programmed placement.",
                (70, 48),
                font(11.0).pos(Pos::new(HPos::Left, VPos::Center)),
            ))
            .map_err(|e| err(&e))?;
        root.present().map_err(|e| err(&e))?;
    }
    Ok(out)
}
