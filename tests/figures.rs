//! Plot-range hardening: figures whose axis span overflows (or whose ends are
//! beyond any drawable magnitude) are refused with a plain-sentence error,
//! and drawing always ends. Each case runs on its own thread with a deadline,
//! so a tick loop that never ends fails the test instead of hanging the run.

use ddlens::figures::diagram::{draw_diagram, DiagramStyle};
use ddlens::figures::series::{series_svg, SeriesPoint};
use ddlens::figures::spectrum::{nice_ticks, to_svg, Line, SpectrumFigure};
use ddlens::figures::FigureError;
use ddlens::ligand_field::{diagram, parse_configuration, Geometry};
use plotters::prelude::*;
use std::sync::mpsc;
use std::time::Duration;

/// Runs `job` and returns its result, failing the test when it takes more than 20 s.
fn ends_in_time<T: Send + 'static>(job: impl FnOnce() -> T + Send + 'static) -> T {
    let (tx, rx) = mpsc::channel();
    std::thread::spawn(move || {
        let _ = tx.send(job());
    });
    rx.recv_timeout(Duration::from_secs(20))
        .expect("drawing did not end within 20 s")
}

fn line(x: Vec<f64>, y: Vec<f64>) -> Line {
    Line {
        x,
        y,
        colour: "#0072b2".into(),
        width: 1.0,
        ..Default::default()
    }
}

#[test]
fn a_spectrum_reaching_1_7e308_is_refused_and_drawing_ends() {
    let fig = SpectrumFigure {
        lines: vec![line(
            vec![10000.0, 20000.0, 30000.0],
            vec![0.1, 1.7e308, 0.1],
        )],
        ..Default::default()
    };
    let result = ends_in_time(move || to_svg(&fig, 600, 300));
    assert_eq!(result, Err(FigureError::AxisRange("y")));
}

#[test]
fn a_view_spanning_1e308_is_refused_and_drawing_ends() {
    let fig = SpectrumFigure {
        lines: vec![line(vec![10000.0, 20000.0], vec![0.1, 0.2])],
        x_range: Some([-1e308, 1e308]),
        ..Default::default()
    };
    let result = ends_in_time(move || to_svg(&fig, 600, 300));
    assert_eq!(result, Err(FigureError::AxisRange("wavenumber")));
    let message = result.unwrap_err().to_string();
    assert!(message.starts_with("the wavenumber axis cannot be drawn"));
}

#[test]
fn a_y_view_of_zero_span_is_widened_and_drawn() {
    let fig = SpectrumFigure {
        lines: vec![line(vec![10000.0, 20000.0], vec![0.5, 0.5])],
        y_range: Some([0.5, 0.5]),
        ..Default::default()
    };
    assert!(ends_in_time(move || to_svg(&fig, 600, 300)).is_ok());
}

#[test]
fn a_view_with_a_nan_end_falls_back_to_the_data() {
    let fig = SpectrumFigure {
        lines: vec![line(vec![10000.0, 20000.0], vec![0.1, 0.2])],
        x_range: Some([f64::NAN, 1.0]),
        ..Default::default()
    };
    let svg = ends_in_time(move || to_svg(&fig, 600, 300)).unwrap();
    assert!(!svg.contains("NaN"));
}

#[test]
fn ticks_over_an_overflowing_span_are_none_and_a_huge_request_is_capped() {
    assert!(nice_ticks(-1e308, 1e308, 7).is_empty());
    assert!(nice_ticks(0.0, f64::MAX, 7).len() <= 8);
    assert!(nice_ticks(0.0, 1.0, usize::MAX).len() <= 1001);
    // 5e-324 is the smallest subnormal: its step underflows, no ticks rather than a loop.
    assert!(nice_ticks(0.0, 5e-324, 7).len() <= 2);
}

#[test]
fn a_diagram_asked_for_an_energy_axis_of_1e308_is_refused() {
    let n = parse_configuration("d3").unwrap();
    let d = diagram(n, Geometry::Octahedral, 4.5, 40.0, 41).unwrap();
    let style = DiagramStyle {
        max_energy_over_b: Some(1e308),
        ..DiagramStyle::default()
    };
    let result = ends_in_time(move || {
        let mut out = String::new();
        let root = SVGBackend::with_string(&mut out, (600, 400)).into_drawing_area();
        draw_diagram(&root, &d, &style).map(|_| ())
    });
    assert_eq!(result, Err(FigureError::AxisRange("E/B")));
}

#[test]
fn a_series_with_a_delta_of_1e308_is_refused_and_drawing_ends() {
    let point = |sample: &str, value: f64| SeriesPoint {
        sample: sample.into(),
        delta: ddlens::estimate::Estimate::exact(value),
        beta: None,
    };
    let points = vec![point("a", 1e308), point("b", -1e308)];
    let result = ends_in_time(move || series_svg(&points, 600, 400));
    assert_eq!(result, Err(FigureError::AxisRange("Δ / cm⁻¹")));
}
