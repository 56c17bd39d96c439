//! Comparing samples: Δ and β of a series (a set of ligands or hosts) drawn
//! side by side, so the series can be ranked in the spectrochemical (Δ) and
//! nephelauxetic (β) order. Drawn on any plotters backend: a canvas in the
//! browser, SVG for export. Every pixel size is multiplied by `scale`.

use super::{axis_range, pixel_scale, pixels, style as palette, FigureError};
use crate::estimate::Estimate;
use plotters::coord::Shift;
use plotters::prelude::*;
use serde::{Deserialize, Serialize};

/// One sample's numbers.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SeriesPoint {
    pub sample: String,
    /// Δ = 10Dq, cm⁻¹.
    pub delta: Estimate,
    /// β = B/B₀, when known.
    #[serde(default)]
    pub beta: Option<Estimate>,
}

/// Lowest and highest of value ± σ over `values`, widened by 10 % (or ±5 % of a single value).
fn span(values: &[Estimate]) -> Option<(f64, f64)> {
    let (lo, hi) = values
        .iter()
        .filter(|e| e.value.is_finite())
        .map(|e| {
            let s = e.sigma.unwrap_or(0.0);
            (e.value - s, e.value + s)
        })
        .fold(None, |acc: Option<(f64, f64)>, (a, b)| {
            Some(acc.map_or((a, b), |(l, h)| (l.min(a), h.max(b))))
        })?;
    let pad = if hi > lo {
        0.1 * (hi - lo)
    } else {
        0.05 * lo.abs().max(1e-3)
    };
    Some((lo - pad, hi + pad))
}

/// A sample name cut to fit its share of the axis (about 90 characters across), with "…".
fn short_name(name: &str, samples: usize) -> String {
    let room = (90 / samples.max(1)).clamp(6, 40);
    if name.chars().count() <= room {
        name.to_string()
    } else {
        let cut: String = name.chars().take(room - 1).collect();
        format!("{}…", cut.trim_end())
    }
}

/// One panel: axis label, the value of each sample, the y span, the colour.
type Panel = (
    &'static str,
    Vec<Option<Estimate>>,
    Option<(f64, f64)>,
    RGBColor,
);

/// Draws Δ (top) and β (bottom) of every sample in the given order, with ±σ bars.
pub fn draw_series<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    points: &[SeriesPoint],
    scale: f64,
) -> Result<(), FigureError> {
    let points: Vec<&SeriesPoint> = points
        .iter()
        .filter(|p| p.delta.value.is_finite())
        .collect();
    if points.is_empty() {
        return Err(FigureError::NothingToCompare);
    }
    let scale = pixel_scale(scale);
    let px = |v: f64| pixels(v, scale);
    root.fill(&WHITE)?;
    let panels = root.split_evenly((2, 1));
    let n = points.len();
    let names: Vec<String> = points.iter().map(|p| short_name(&p.sample, n)).collect();
    let deltas: Vec<Estimate> = points.iter().map(|p| p.delta).collect();
    let betas: Vec<Estimate> = points.iter().filter_map(|p| p.beta).collect();
    let rows: [Panel; 2] = [
        (
            "Δ / cm⁻¹",
            deltas.iter().copied().map(Some).collect(),
            span(&deltas),
            palette::series(0),
        ),
        (
            "β = B/B₀",
            points.iter().map(|p| p.beta).collect(),
            span(&betas),
            palette::series(2),
        ),
    ];
    for (area, (label, values, range, colour)) in panels.iter().zip(rows) {
        let Some((lo, hi)) = range else {
            area.draw(&Text::new(
                format!("{label}: not known for these samples"),
                (px(70.0) as i32, px(40.0) as i32),
                ("sans-serif", px(13.0)).into_font(),
            ))?;
            continue;
        };
        let [lo, hi] = axis_range(lo, hi, label)?;
        let mut chart = ChartBuilder::on(area)
            .margin(px(10.0))
            .margin_right(px(20.0))
            .x_label_area_size(px(34.0))
            .y_label_area_size(px(70.0))
            .build_cartesian_2d(-0.5..(n as f64 - 0.5), lo..hi)?;
        let font = ("sans-serif", px(13.0)).into_font().color(&palette::INK);
        chart
            .configure_mesh()
            .disable_x_mesh()
            .max_light_lines(0)
            .bold_line_style(palette::GRID)
            .x_labels(n + 1)
            .x_label_formatter(&|x| {
                let i = x.round();
                if (x - i).abs() < 1e-6 && i >= 0.0 {
                    names.get(i as usize).cloned().unwrap_or_default()
                } else {
                    String::new()
                }
            })
            .y_label_formatter(&|v| format!("{v:.*}", if hi - lo > 50.0 { 0 } else { 2 }))
            .y_desc(label)
            .label_style(font.clone())
            .axis_desc_style(font)
            .draw()?;
        let style = ShapeStyle::from(&colour).stroke_width(px(1.5));
        let known: Vec<(f64, Estimate)> = values
            .iter()
            .enumerate()
            .filter_map(|(i, v)| v.filter(|e| e.value.is_finite()).map(|e| (i as f64, e)))
            .collect();
        // ±σ bars: a vertical line with caps 0.08 samples wide.
        for &(x, e) in &known {
            let Some(s) = e.sigma.filter(|s| *s > 0.0) else {
                continue;
            };
            let (a, b) = (e.value - s, e.value + s);
            let bar = [
                vec![(x, a), (x, b)],
                vec![(x - 0.08, a), (x + 0.08, a)],
                vec![(x - 0.08, b), (x + 0.08, b)],
            ];
            chart.draw_series(bar.into_iter().map(|path| PathElement::new(path, style)))?;
        }
        chart.draw_series(
            known
                .iter()
                .map(|&(x, e)| Circle::new((x, e.value), px(4.0), colour.filled())),
        )?;
    }
    root.present()?;
    Ok(())
}

/// The series figure as an SVG document of `width` × `height` pixels.
pub fn series_svg(points: &[SeriesPoint], width: u32, height: u32) -> Result<String, FigureError> {
    let mut out = String::new();
    {
        let root =
            SVGBackend::with_string(&mut out, (width.clamp(200, 4000), height.clamp(200, 4000)))
                .into_drawing_area();
        draw_series(&root, points, 1.0)?;
    }
    Ok(out)
}
