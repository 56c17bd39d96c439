//! The energy-level diagram (E/B against Δ/B at fixed C/B, after Tanabe &
//! Sugano, J. Phys. Soc. Jpn. 9, 753 (1954)), drawn from the plain data
//! [`crate::ligand_field::diagram`] returns.
//!
//! Drawing of an energy-level diagram on any plotters backend (SVG for the CLI,
//! a canvas in the browser). Every pixel size is multiplied by `scale` so a
//! high-DPI canvas gets the same picture at more pixels.
//!
//! Curves are coloured by spin multiplicity; the spin-change field is drawn as a
//! dashed vertical line; each curve is labelled at its right end unless the
//! label would overlap the one below it.

use super::{axis_range, pixel_scale, pixels, style as colours, FigureError};
use crate::ligand_field::Diagram;
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use serde::{Deserialize, Serialize};

/// Where a drawn diagram's axes lie, for pointer read-outs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct DiagramFrame {
    /// Plot area in backend pixels: left, top, right, bottom.
    pub area: [f64; 4],
    /// Δ/B at the left and right edge.
    pub x_range: [f64; 2],
    /// E/B at the bottom and top edge.
    pub y_range: [f64; 2],
}

/// How to draw a diagram.
#[derive(Debug, Clone, PartialEq)]
pub struct DiagramStyle {
    /// Multiplies every pixel size (1 for SVG, devicePixelRatio for a canvas).
    pub scale: f64,
    /// Top of the E/B axis; `None` takes twice the largest Δ/B (at least 10).
    pub max_energy_over_b: Option<f64>,
    /// Whether curve labels are written at the right edge.
    pub labels: bool,
    /// A fitted Δ/B, drawn as a vertical line.
    pub fitted_delta_over_b: Option<f64>,
    /// Observed bands as (Δ/B, E/B) points on the curves they are assigned to.
    pub observed: Vec<[f64; 2]>,
}

impl Default for DiagramStyle {
    fn default() -> Self {
        DiagramStyle {
            scale: 1.0,
            max_energy_over_b: None,
            labels: true,
            fitted_delta_over_b: None,
            observed: Vec::new(),
        }
    }
}

/// Draws `diagram` filling `root`; returns where its axes lie.
pub fn draw_diagram<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    diagram: &Diagram,
    style: &DiagramStyle,
) -> Result<DiagramFrame, FigureError> {
    let scale = pixel_scale(style.scale);
    let px = |v: f64| pixels(v, scale);
    let x_max = diagram
        .delta_over_b
        .last()
        .copied()
        .unwrap_or(1.0)
        .max(1e-9);
    let y_max = style
        .max_energy_over_b
        .filter(|y| y.is_finite() && *y > 0.0)
        .unwrap_or((2.0 * x_max).max(10.0));
    let x_max = axis_range(0.0, x_max, "Δ/B")?[1];
    let y_max = axis_range(0.0, y_max, "E/B")?[1];
    root.fill(&WHITE)?;
    let font = ("sans-serif", px(13.0)).into_font();
    let mut chart = ChartBuilder::on(root)
        .caption(
            format!(
                "{} {} — C/B = {:.2}",
                diagram.config, diagram.geometry, diagram.c_over_b
            ),
            ("sans-serif", px(16.0)),
        )
        .margin(px(10.0))
        .margin_right(px(if style.labels { 90.0 } else { 15.0 }))
        .x_label_area_size(px(40.0))
        .y_label_area_size(px(50.0))
        .build_cartesian_2d(0.0..x_max, 0.0..y_max)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc("Δ/B")
        .y_desc("E/B")
        .label_style(font.clone())
        .axis_desc_style(font.clone())
        .draw()?;
    let label_heights = draw_curves(&mut chart, diagram, [x_max, y_max], scale)?;
    if let Some(change) = diagram.spin_change.filter(|&c| c <= x_max) {
        chart.draw_series(DashedLineSeries::new(
            [(change, 0.0), (change, y_max)],
            px(colours::DASH.0),
            px(colours::DASH.1),
            ShapeStyle::from(&BLACK).stroke_width(px(1.0)),
        ))?;
    }
    let accent = colours::ACCENT;
    if let Some(x) = style
        .fitted_delta_over_b
        .filter(|x| x.is_finite() && (0.0..=x_max).contains(x))
    {
        chart.draw_series(LineSeries::new(
            [(x, 0.0), (x, y_max)],
            accent.stroke_width(px(2.0)),
        ))?;
    }
    let points = style
        .observed
        .iter()
        .filter(|p| p.iter().all(|v| v.is_finite()) && p[1] <= y_max);
    chart.draw_series(points.map(|p| Circle::new((p[0], p[1]), px(4.0), accent.filled())))?;
    if style.labels {
        let min_gap = y_max * 14.0 * scale / f64::from(root.dim_in_pixel().1.max(1));
        draw_labels(&mut chart, label_heights, x_max, min_gap, scale)?;
    }
    root.present()?;
    // The pixel ranges are half-open; plotters maps the axis ends onto the last pixel inside.
    let (xs, ys) = chart.plotting_area().get_pixel_range();
    Ok(DiagramFrame {
        area: [xs.start, ys.start, xs.end - 1, ys.end - 1].map(f64::from),
        x_range: [0.0, x_max],
        y_range: [0.0, y_max],
    })
}

type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Draws every curve up to the top of the plot (a curve leaving the top is cut
/// there) and returns the (height, label, colour) of those reaching the right edge.
fn draw_curves<'d, DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    diagram: &'d Diagram,
    [x_max, y_max]: [f64; 2],
    scale: f64,
) -> Result<Vec<(f64, &'d str, RGBColor)>, FigureError> {
    let px = |v: f64| pixels(v, scale);
    let mut label_heights = Vec::new();
    for curve in &diagram.curves {
        let colour = colours::multiplicity(curve.multiplicity);
        let line = ShapeStyle::from(&colour).stroke_width(px(1.5));
        let mut run: Vec<(f64, f64)> = Vec::new();
        for (&x, &y) in diagram.delta_over_b.iter().zip(&curve.energy_over_b) {
            if y <= y_max {
                run.push((x, y));
            } else if !run.is_empty() {
                chart.draw_series(LineSeries::new(std::mem::take(&mut run), line))?;
            }
        }
        if let Some(&(x, y)) = run.last() {
            if x >= x_max * 0.999 {
                label_heights.push((y, curve.typeset.as_str(), colour));
            }
        }
        if run.len() > 1 {
            chart.draw_series(LineSeries::new(run, line))?;
        }
    }
    Ok(label_heights)
}

/// Writes the curve labels right of the plot, lowest first, skipping a label
/// closer than `min_gap` (in E/B) to the last one written.
fn draw_labels<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    mut label_heights: Vec<(f64, &str, RGBColor)>,
    x_max: f64,
    min_gap: f64,
    scale: f64,
) -> Result<(), FigureError> {
    let px = |v: f64| pixels(v, scale);
    label_heights.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut last_written = f64::NEG_INFINITY;
    for (y, text, colour) in label_heights {
        if y - last_written < min_gap {
            continue;
        }
        last_written = y;
        let label_font = ("sans-serif", px(11.0)).into_font().color(&colour);
        chart.draw_series(std::iter::once(Text::new(
            text.to_string(),
            (x_max * 1.01, y),
            label_font,
        )))?;
    }
    Ok(())
}
