//! The spectrum figure: wavenumber (cm⁻¹) on the bottom axis, wavelength
//! (nm) on a top axis with its own non-linear ticks, lines for spectra and
//! fitted sums, translucent fills for band components, shaded spans for
//! flagged regions, vertical markers for predicted transitions, drag handles
//! of edited bands and an optional residual strip under the plot.

use super::{axis_range, pixels, style as palette, FigureError};
use plotters::coord::types::RangedCoordf64;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor;
use serde::{Deserialize, Serialize};

/// One curve on the figure (x in cm⁻¹).
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct Line {
    /// Empty when the curve travels packed (see the wasm facade's `draw_spectrum`).
    #[serde(default)]
    pub x: Vec<f64>,
    #[serde(default)]
    pub y: Vec<f64>,
    /// `#rrggbb`.
    pub colour: String,
    /// Stroke width in CSS pixels.
    #[serde(default = "one")]
    pub width: f64,
    /// Draw as a translucent fill down to zero instead of a line.
    #[serde(default)]
    pub fill: bool,
    #[serde(default)]
    pub dashed: bool,
}

fn one() -> f64 {
    1.0
}

/// A vertical marker with a label (a predicted transition), optional shaded ± span.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct Marker {
    pub x: f64,
    #[serde(default)]
    pub sigma: f64,
    pub label: String,
    #[serde(default)]
    pub dashed: bool,
}

/// A drag handle on the plot (a band's peak or half-width point), x in cm⁻¹.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct Handle {
    pub x: f64,
    pub y: f64,
    /// Drawn as a ring instead of a filled dot.
    #[serde(default)]
    pub hollow: bool,
}

/// What to draw and how.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct SpectrumFigure {
    pub lines: Vec<Line>,
    /// Shaded x ranges (cm⁻¹), e.g. saturated regions.
    #[serde(default)]
    pub shaded: Vec<[f64; 2]>,
    #[serde(default)]
    pub markers: Vec<Marker>,
    #[serde(default)]
    pub handles: Vec<Handle>,
    /// Curves of the residual strip (data − fit) drawn under the plot on the
    /// same x axis; no strip when empty.
    #[serde(default)]
    pub residuals: Vec<Line>,
    /// Visible x range (cm⁻¹); from the data when absent.
    pub x_range: Option<[f64; 2]>,
    pub y_range: Option<[f64; 2]>,
    #[serde(default)]
    pub y_label: String,
    /// Wavelength (nm) on the bottom axis instead of wavenumber.
    #[serde(default)]
    pub nm_bottom: bool,
}

/// The pixel ↔ data mapping of a drawn figure, for mouse read-outs.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
pub struct Frame {
    /// Plot area in backend pixels: left, top, right, bottom.
    pub area: [f64; 4],
    pub x_range: [f64; 2],
    pub y_range: [f64; 2],
    pub nm_bottom: bool,
}

impl SpectrumFigure {
    /// The x range of the data (cm⁻¹), or a default view when there is none.
    fn data_x_range(&self) -> Result<[f64; 2], FigureError> {
        let xs = self.lines.iter().flat_map(|l| l.x.iter().copied());
        range_of(xs, DEFAULT_X_RANGE, "wavenumber")
    }

    /// The y range of the data inside the x view, from zero, with headroom.
    fn data_y_range(&self, x: [f64; 2]) -> Result<[f64; 2], FigureError> {
        let inside = self.lines.iter().flat_map(|l| {
            l.x.iter()
                .zip(&l.y)
                .filter(move |(xv, _)| **xv >= x[0] && **xv <= x[1])
                .map(|(_, yv)| *yv)
        });
        let [lo, hi] = range_of(inside.chain([0.0]), [0.0, 1.0], "y")?;
        Ok([lo, hi + 0.08 * (hi - lo)])
    }

    /// The visible x range: the view when it has finite ends, else the data's.
    fn x_view(&self) -> Result<[f64; 2], FigureError> {
        match self.x_range {
            Some([a, b]) if a.is_finite() && b.is_finite() => axis_range(a, b, "wavenumber"),
            _ => self.data_x_range(),
        }
    }

    /// The visible y range: the given one when it has finite ends, else the data's.
    fn y_view(&self, x: [f64; 2]) -> Result<[f64; 2], FigureError> {
        match self.y_range {
            Some([a, b]) if a.is_finite() && b.is_finite() => axis_range(a, b, "y"),
            _ => self.data_y_range(x),
        }
    }
}

/// The view when a figure has no data (cm⁻¹): the near-IR to near-UV d–d region.
const DEFAULT_X_RANGE: [f64; 2] = [5000.0, 35000.0];

/// The checked range of the finite `values`, or `empty` when there are none.
fn range_of(
    values: impl Iterator<Item = f64>,
    empty: [f64; 2],
    axis: &'static str,
) -> Result<[f64; 2], FigureError> {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if lo > hi {
        return Ok(empty);
    }
    axis_range(lo, hi, axis)
}

/// Most ticks [`nice_ticks`] returns, whatever it is asked.
const MAX_TICKS: usize = 1000;

/// "Nice" tick values covering [lo, hi]: steps of 1, 2 or 5 × 10ⁿ.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite()) || hi <= lo || target == 0 {
        return Vec::new();
    }
    let raw = (hi - lo) / target.min(MAX_TICKS) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let (first, last) = ((lo / step).ceil(), (hi / step).floor());
    // An overflowing span or a vanishing step gives no ticks rather than a
    // count past what fits an i64 or a screen; the loop runs ≤ MAX_TICKS + 1 times.
    if !(step.is_finite() && step > 0.0 && first.is_finite() && last.is_finite())
        || last - first > MAX_TICKS as f64
    {
        return Vec::new();
    }
    let first = first as i64;
    (0..=(last as i64 - first))
        .map(|i| (first + i) as f64 * step)
        .collect()
}

/// Share of the figure's height given to the residual strip.
const STRIP_SHARE: f64 = 0.24;

/// The visible ranges of a chart and how data x maps onto its bottom axis.
#[derive(Clone, Copy)]
struct View {
    /// Bottom-axis range (cm⁻¹ or nm).
    bx: [f64; 2],
    y: [f64; 2],
    /// Data x (cm⁻¹) → bottom-axis value.
    to_bottom: fn(f64) -> f64,
    scale: f64,
}

impl View {
    fn px(&self, css: f64) -> u32 {
        pixels(css, self.scale)
    }
}

/// Draws the figure on `root` and returns the pixel mapping of its plot area.
pub fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    fig: &SpectrumFigure,
    scale: f64,
) -> Result<Frame, FigureError> {
    let s = |v: f64| pixels(v, scale);
    root.fill(&WHITE)?;
    let x = fig.x_view()?;
    let y = fig.y_view(x)?;

    // The bottom axis shows wavenumber (energy grows to the right) or wavelength.
    let (bx, to_bottom): ([f64; 2], fn(f64) -> f64) = if fig.nm_bottom {
        (axis_range(1e7 / x[1], 1e7 / x[0], "wavelength")?, |v| {
            1e7 / v
        })
    } else {
        (x, |v| v)
    };
    let view = View {
        bx,
        y,
        to_bottom,
        scale,
    };
    let bottom_desc = if fig.nm_bottom {
        "wavelength / nm"
    } else {
        "wavenumber / cm⁻¹"
    };
    // With a residual strip the bottom axis moves under the strip.
    let strip = !fig.residuals.is_empty();
    let (main_area, strip_area) = if strip {
        let h = f64::from(root.dim_in_pixel().1);
        let (a, b) = root.split_vertically((h * (1.0 - STRIP_SHARE)).round() as u32);
        (a, Some(b))
    } else {
        (root.clone(), None)
    };

    let mut chart = ChartBuilder::on(&main_area)
        .margin(s(10.0))
        .margin_right(s(18.0))
        .margin_top(s(44.0)) // room for the top axis, drawn by hand below
        .margin_bottom(if strip { 0 } else { s(10.0) })
        .x_label_area_size(if strip { 0 } else { s(40.0) })
        .y_label_area_size(s(62.0))
        .build_cartesian_2d(bx[0]..bx[1], y[0]..y[1])?;
    let x_desc = if strip { "" } else { bottom_desc };
    draw_mesh(&mut chart, scale, x_desc, &fig.y_label, 6)?;

    draw_spans(&mut chart, fig, view)?;
    draw_lines(&mut chart, &fig.lines, view)?;
    draw_markers(root, &mut chart, &fig.markers, view)?;
    draw_handles(&mut chart, &fig.handles, view)?;
    let area = draw_top_axis(root, &chart, fig.nm_bottom, view)?;
    if let Some(strip_area) = strip_area {
        draw_strip(&strip_area, fig, x, bottom_desc, view)?;
    }
    root.present()?;
    Ok(Frame {
        area,
        x_range: bx,
        y_range: y,
        nm_bottom: fig.nm_bottom,
    })
}

/// The shaded spans (flagged regions) and the translucent ±σ spans of the markers.
fn draw_spans<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    fig: &SpectrumFigure,
    View {
        bx, y, to_bottom, ..
    }: View,
) -> Result<(), FigureError> {
    for span in &fig.shaded {
        let (a, b) = (to_bottom(span[0]), to_bottom(span[1]));
        let (a, b) = (a.min(b).max(bx[0]), a.max(b).min(bx[1]));
        if a >= b {
            continue;
        }
        chart.draw_series(std::iter::once(Rectangle::new(
            [(a, y[0]), (b, y[1])],
            palette::SHADE.mix(palette::SHADE_ALPHA).filled(),
        )))?;
    }
    for m in &fig.markers {
        if m.sigma > 0.0 {
            let (a, b) = (to_bottom(m.x - m.sigma), to_bottom(m.x + m.sigma));
            chart.draw_series(std::iter::once(Rectangle::new(
                [(a.min(b), y[0]), (a.max(b), y[1])],
                palette::MARKER.mix(0.15).filled(),
            )))?;
        }
    }
    Ok(())
}

/// The vertical markers inside the view, each with its label written upwards.
fn draw_markers<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    chart: &mut Chart<DB>,
    markers: &[Marker],
    view: View,
) -> Result<(), FigureError> {
    let View {
        bx, y, to_bottom, ..
    } = view;
    for m in markers {
        let xm = to_bottom(m.x);
        if xm < bx[0] || xm > bx[1] {
            continue;
        }
        let style = palette::MARKER.stroke_width(view.px(1.5));
        if m.dashed {
            chart.draw_series(DashedLineSeries::new(
                vec![(xm, y[0]), (xm, y[1])],
                view.px(5.0),
                view.px(4.0),
                style,
            ))?;
        } else {
            chart.draw_series(LineSeries::new(vec![(xm, y[0]), (xm, y[1])], style))?;
        }
        let (px, py) = chart.backend_coord(&(xm, y[1]));
        root.draw(&Text::new(
            m.label.clone(),
            (px + view.px(3.0) as i32, py + view.px(4.0) as i32),
            ink_font(11.0, view.scale).transform(FontTransform::Rotate90),
        ))?;
    }
    Ok(())
}

/// The drag handles inside the view, clipped to its y range.
fn draw_handles<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    handles: &[Handle],
    view: View,
) -> Result<(), FigureError> {
    let View {
        bx, y, to_bottom, ..
    } = view;
    for h in handles {
        let xh = to_bottom(h.x);
        if !(xh >= bx[0] && xh <= bx[1] && h.y.is_finite()) {
            continue;
        }
        let at = (xh, h.y.clamp(y[0], y[1]));
        chart.draw_series([
            Circle::new(at, view.px(6.0), WHITE.filled()),
            Circle::new(
                at,
                view.px(5.0),
                if h.hollow {
                    palette::INK.stroke_width(view.px(2.0))
                } else {
                    palette::INK.filled()
                },
            ),
        ])?;
    }
    Ok(())
}

/// The top axis, in the other unit with its own (non-linear) ticks, drawn by
/// hand on `root`; returns the plot area in backend pixels (left, top, right, bottom).
fn draw_top_axis<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    chart: &Chart<DB>,
    nm_bottom: bool,
    view: View,
) -> Result<[f64; 4], FigureError> {
    let View { bx, y, .. } = view;
    let (left, top) = chart.backend_coord(&(bx[0], y[1]));
    let (right, bottom) = chart.backend_coord(&(bx[1], y[0]));
    let (tlo, thi) = (1e7 / bx[1], 1e7 / bx[0]);
    let top_desc = if nm_bottom {
        "wavenumber / cm⁻¹"
    } else {
        "wavelength / nm"
    };
    let ink = palette::INK.stroke_width(view.px(1.0));
    root.draw(&PathElement::new(vec![(left, top), (right, top)], ink))?;
    for t in nice_ticks(tlo, thi, 7) {
        let pos = 1e7 / t;
        let (px, _) = chart.backend_coord(&(pos, y[1]));
        root.draw(&PathElement::new(
            vec![(px, top), (px, top - view.px(5.0) as i32)],
            ink,
        ))?;
        let style = ink_font(12.0, view.scale).pos(text_anchor::Pos::new(
            text_anchor::HPos::Center,
            text_anchor::VPos::Bottom,
        ));
        root.draw(&Text::new(
            format!("{t:.0}"),
            (px, top - view.px(7.0) as i32),
            style,
        ))?;
    }
    let desc = ink_font(13.0, view.scale).pos(text_anchor::Pos::new(
        text_anchor::HPos::Right,
        text_anchor::VPos::Bottom,
    ));
    root.draw(&Text::new(
        top_desc,
        (right, top - view.px(21.0) as i32),
        desc,
    ))?;
    Ok([left, top, right, bottom].map(f64::from))
}

/// The residual strip: the same x axis as the plot above (data x range `x`),
/// its own symmetric y range.
fn draw_strip<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    fig: &SpectrumFigure,
    x: [f64; 2],
    bottom_desc: &str,
    view: View,
) -> Result<(), FigureError> {
    let mut worst = 0.0f64;
    for l in &fig.residuals {
        for (xv, yv) in l.x.iter().zip(&l.y) {
            if *xv >= x[0] && *xv <= x[1] && yv.is_finite() {
                worst = worst.max(yv.abs());
            }
        }
    }
    let r = if worst > 0.0 { 1.1 * worst } else { 1.0 };
    let [_, r] = axis_range(-r, r, "residual")?;
    let bx = view.bx;
    let mut strip = ChartBuilder::on(area)
        .margin(view.px(10.0))
        .margin_right(view.px(18.0))
        .margin_top(view.px(6.0))
        .x_label_area_size(view.px(40.0))
        .y_label_area_size(view.px(62.0))
        .build_cartesian_2d(bx[0]..bx[1], -r..r)?;
    draw_mesh(&mut strip, view.scale, bottom_desc, "residual", 3)?;
    strip.draw_series(LineSeries::new(
        [(bx[0], 0.0), (bx[1], 0.0)],
        palette::INK.mix(0.6).stroke_width(view.px(1.0)),
    ))?;
    draw_lines(&mut strip, &fig.residuals, View { y: [-r, r], ..view })
}

/// Text in the axis colour, `size` CSS pixels.
fn ink_font(size: f64, scale: f64) -> TextStyle<'static> {
    ("sans-serif", size * scale)
        .into_font()
        .color(&palette::INK)
}

type Chart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Grid, axes, tick labels and axis titles of a chart.
fn draw_mesh<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    scale: f64,
    x_desc: &str,
    y_desc: &str,
    y_labels: usize,
) -> Result<(), FigureError> {
    let s = pixels(1.0, scale);
    chart
        .configure_mesh()
        .light_line_style(palette::GRID.mix(0.0))
        .bold_line_style(palette::GRID)
        .axis_style(palette::INK.stroke_width(s))
        .label_style(ink_font(12.0, scale))
        .axis_desc_style(ink_font(13.0, scale))
        .x_desc(x_desc)
        .y_desc(y_desc)
        .x_labels(8)
        .y_labels(y_labels)
        .x_label_formatter(&|v| format!("{v:.0}"))
        .y_label_formatter(&|v| trim_number(*v))
        .draw()?;
    Ok(())
}

/// Draws curves (x in cm⁻¹, mapped by `to_bottom`) clipped to the visible
/// ranges, decimated to the pixel columns of the plot area.
fn draw_lines<DB: DrawingBackend>(
    chart: &mut Chart<DB>,
    lines: &[Line],
    view: View,
) -> Result<(), FigureError> {
    let View {
        bx, y, to_bottom, ..
    } = view;
    let s = |v: f64| view.px(v);
    let clip = |v: f64| v.clamp(y[0], y[1]);
    let (px_lo, _) = chart.backend_coord(&(bx[0], y[1]));
    let (px_hi, _) = chart.backend_coord(&(bx[1], y[1]));
    let columns = (px_hi - px_lo).unsigned_abs().max(1) as usize;
    for line in lines {
        let colour = palette::parse_hex(&line.colour);
        let visible: Vec<(f64, f64)> = line
            .x
            .iter()
            .zip(&line.y)
            .filter(|(a, b)| a.is_finite() && b.is_finite())
            .map(|(a, b)| (to_bottom(*a), *b))
            .collect();
        let visible = clip_to_x_range(visible, bx);
        let pts = decimate(&visible, bx, columns)
            .into_iter()
            .map(|(a, b)| (a, clip(b)));
        if line.fill {
            chart.draw_series(AreaSeries::new(pts, clip(0.0), colour.mix(0.25).filled()))?;
        } else if line.dashed {
            let v: Vec<_> = pts.collect();
            chart.draw_series(DashedLineSeries::new(
                v,
                s(6.0),
                s(4.0),
                colour.stroke_width(s(line.width)),
            ))?;
        } else {
            chart.draw_series(LineSeries::new(pts, colour.stroke_width(s(line.width))))?;
        }
    }
    Ok(())
}

/// The part of a polyline inside `[range[0], range[1]]` in x, sorted by x,
/// with the segments that cross an edge cut at the edge (interpolated), so
/// that nothing is drawn outside the plot area when zoomed in.
pub fn clip_to_x_range(mut pts: Vec<(f64, f64)>, range: [f64; 2]) -> Vec<(f64, f64)> {
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let [lo, hi] = range;
    let at = |a: (f64, f64), b: (f64, f64), x: f64| {
        // Two points at one x: the cut takes the first one's y.
        let dx = b.0 - a.0;
        let t = if dx == 0.0 { 0.0 } else { (x - a.0) / dx };
        (x, a.1 + t * (b.1 - a.1))
    };
    let mut out = Vec::with_capacity(pts.len());
    for (i, p) in pts.iter().enumerate() {
        let inside = p.0 >= lo && p.0 <= hi;
        if let Some(prev) = i.checked_sub(1).and_then(|j| pts.get(j)) {
            if prev.0 < lo && p.0 > lo {
                out.push(at(*prev, *p, lo));
            }
            if prev.0 < hi && p.0 > hi {
                out.push(at(*prev, *p, hi));
            }
        }
        if inside {
            out.push(*p);
        }
    }
    out
}

/// Min/max decimation per pixel column: for a polyline sorted by x with many
/// more points than `columns`, keeps in each column the first, lowest,
/// highest and last point (in x order), so the drawn envelope is exactly the
/// one of the full data while at most 4 points per column cross to the backend.
pub fn decimate(pts: &[(f64, f64)], range: [f64; 2], columns: usize) -> Vec<(f64, f64)> {
    let span = range[1] - range[0];
    if pts.len() <= 4 * columns.max(1) || span.is_nan() || span <= 0.0 {
        return pts.to_vec();
    }
    let column = |x: f64| {
        (((x - range[0]) / span * columns as f64).floor()).clamp(0.0, columns as f64) as usize
    };
    let mut out = Vec::with_capacity(4 * columns + 4);
    let mut start = 0;
    while start < pts.len() {
        let c = pts.get(start).map_or(0, |p| column(p.0));
        let mut end = start;
        while end < pts.len() && pts.get(end).map(|p| column(p.0)) == Some(c) {
            end += 1;
        }
        let group = pts.get(start..end).unwrap_or(&[]);
        let (mut lo, mut hi) = (0, 0);
        for (k, p) in group.iter().enumerate() {
            if group.get(lo).is_some_and(|q| p.1 < q.1) {
                lo = k;
            }
            if group.get(hi).is_some_and(|q| p.1 > q.1) {
                hi = k;
            }
        }
        let mut keep = [0, lo.min(hi), lo.max(hi), group.len().saturating_sub(1)];
        keep.sort_unstable();
        let mut last = usize::MAX;
        for k in keep {
            if k != last {
                if let Some(p) = group.get(k) {
                    out.push(*p);
                }
                last = k;
            }
        }
        start = end.max(start + 1);
    }
    out
}

/// A compact axis number: no trailing zeros.
fn trim_number(v: f64) -> String {
    let t = format!("{v:.3}");
    let t = t.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" {
        "0".into()
    } else {
        t.into()
    }
}

/// The figure as an SVG document (width × height CSS pixels).
pub fn to_svg(fig: &SpectrumFigure, width: u32, height: u32) -> Result<String, FigureError> {
    let mut out = String::new();
    {
        let root =
            SVGBackend::with_string(&mut out, (width.clamp(100, 8000), height.clamp(100, 8000)))
                .into_drawing_area();
        draw(&root, fig, 1.0)?;
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_ticks_are_round_and_cover_the_range() {
        assert_eq!(
            nice_ticks(0.0, 10.0, 5),
            vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]
        );
        let t = nice_ticks(285.7, 1000.0, 7);
        assert_eq!(t.first(), Some(&400.0)); // step 200 for a 714 nm span
        assert_eq!(t.last(), Some(&1000.0));
        assert!(nice_ticks(1.0, 1.0, 5).is_empty());
        assert!(nice_ticks(f64::NAN, 1.0, 5).is_empty());
    }

    #[test]
    fn decimation_keeps_the_envelope_and_bounds_the_point_count() {
        // 10 000 points of a fast oscillation over 100 columns: every column's
        // extreme values survive and at most 4 points per column are kept.
        let pts: Vec<(f64, f64)> = (0..10_000)
            .map(|i| (f64::from(i), f64::from((i * 7919) % 1000)))
            .collect();
        let out = decimate(&pts, [0.0, 10_000.0], 100);
        assert!(out.len() <= 400, "{} points kept", out.len());
        for c in 0..100 {
            let col = |p: &&(f64, f64)| (p.0 / 100.0).floor() as usize == c;
            let max_in = pts.iter().filter(col).map(|p| p.1).fold(f64::MIN, f64::max);
            let max_out = out.iter().filter(col).map(|p| p.1).fold(f64::MIN, f64::max);
            let min_in = pts.iter().filter(col).map(|p| p.1).fold(f64::MAX, f64::min);
            let min_out = out.iter().filter(col).map(|p| p.1).fold(f64::MAX, f64::min);
            assert_eq!((max_in, min_in), (max_out, min_out), "column {c}");
        }
        // Few points pass through untouched.
        assert_eq!(decimate(&pts[..50], [0.0, 50.0], 100), pts[..50].to_vec());
    }

    #[test]
    fn clipping_cuts_segments_at_the_edges() {
        let pts = vec![(0.0, 0.0), (10.0, 10.0), (20.0, 0.0)];
        let out = clip_to_x_range(pts, [5.0, 15.0]);
        assert_eq!(out, vec![(5.0, 5.0), (10.0, 10.0), (15.0, 5.0)]);
        assert!(clip_to_x_range(vec![(1.0, 1.0)], [5.0, 6.0]).is_empty());
    }

    #[test]
    fn svg_has_both_axes_and_survives_empty_or_bad_data() {
        let fig = SpectrumFigure {
            lines: vec![Line {
                x: vec![10000.0, 20000.0, 30000.0],
                y: vec![0.1, f64::NAN, 0.3],
                colour: "#0072b2".into(),
                width: 1.0,
                ..Default::default()
            }],
            ..Default::default()
        };
        let svg = to_svg(&fig, 600, 300).unwrap();
        assert!(svg.contains("wavenumber / cm⁻¹") && svg.contains("wavelength / nm"));
        assert!(
            svg.contains("\n500\n"),
            "500 nm = 20000 cm⁻¹ should be a top tick"
        );
        assert!(to_svg(&SpectrumFigure::default(), 300, 200).is_ok());
    }

    #[test]
    fn residual_strip_carries_the_bottom_axis_and_handles_are_drawn() {
        let line = |y: Vec<f64>| Line {
            x: vec![10000.0, 20000.0, 30000.0],
            y,
            colour: "#000000".into(),
            width: 1.0,
            ..Default::default()
        };
        let mut fig = SpectrumFigure {
            lines: vec![line(vec![0.1, 0.5, 0.3])],
            ..Default::default()
        };
        let plain = to_svg(&fig, 600, 400).unwrap();
        fig.residuals = vec![line(vec![0.01, -0.02, f64::NAN])];
        fig.handles = vec![
            Handle {
                x: 20000.0,
                y: 0.5,
                hollow: false,
            },
            Handle {
                x: f64::NAN,
                y: 0.2,
                hollow: true,
            },
        ];
        let with_strip = to_svg(&fig, 600, 400).unwrap();
        assert!(!plain.contains("residual") && with_strip.contains("residual"));
        // One bottom-axis title either way: it moves under the strip.
        assert_eq!(with_strip.matches("wavenumber / cm⁻¹").count(), 1);
        assert_eq!(
            with_strip.matches("<circle").count(),
            plain.matches("<circle").count() + 2,
            "a finite handle is a white ring under a dot; the NaN one is skipped"
        );
    }
}
