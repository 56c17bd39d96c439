//! The series figure (Δ and β across samples): every sample appears, the
//! points keep the given order, and an empty series is a typed error.

use ddlens::estimate::Estimate;
use ddlens::figures::series::{series_svg, SeriesPoint};
use ddlens::figures::FigureError;

fn point(name: &str, delta: f64, beta: Option<f64>) -> SeriesPoint {
    SeriesPoint {
        sample: name.into(),
        delta: Estimate::new(delta, 0.01 * delta),
        beta: beta.map(|b| Estimate::new(b, 0.02)),
    }
}

/// The y pixel of each filled circle in the order drawn (plotters' SVG writes `<circle cx cy …>`).
fn circle_ys(svg: &str) -> Vec<f64> {
    svg.split("<circle")
        .skip(1)
        .map(|c| {
            c.split("cy=\"")
                .nth(1)
                .unwrap()
                .split('"')
                .next()
                .unwrap()
                .parse()
                .unwrap()
        })
        .collect()
}

#[test]
fn series_figure_draws_every_sample_in_order() {
    let pts = [
        point("HX-1", 15200.0, Some(0.71)),
        point("HX-2", 17400.0, Some(0.64)),
        point("HX-3", 16100.0, None),
    ];
    let svg = series_svg(&pts, 800, 600).unwrap();
    for name in ["HX-1", "HX-2", "HX-3", "Δ / cm⁻¹", "β = B/B₀"] {
        assert!(svg.contains(name), "{name} missing");
    }
    let ys = circle_ys(&svg);
    // Three Δ points, then two β points (HX-3 has no β).
    assert_eq!(ys.len(), 5);
    // SVG y grows downwards: the largest Δ (HX-2) is highest, the smallest (HX-1) lowest.
    assert!(ys[1] < ys[2] && ys[2] < ys[0], "{ys:?}");
    assert!(ys[3] < ys[4], "β of HX-1 (0.71) above HX-2 (0.64): {ys:?}");
}

#[test]
fn an_empty_or_non_finite_series_is_an_error() {
    assert_eq!(
        series_svg(&[], 800, 600),
        Err(FigureError::NothingToCompare)
    );
    assert_eq!(
        series_svg(&[point("x", f64::NAN, None)], 800, 600),
        Err(FigureError::NothingToCompare)
    );
    // A single sample and one without β draw without failing.
    assert!(series_svg(&[point("only", 9000.0, None)], 800, 600).is_ok());
}

#[test]
fn long_sample_names_are_cut_to_their_share_of_the_axis() {
    let long = "CrX-7 (demo: invented Cr3+-doped host, second batch)";
    let pts = [
        point(long, 15200.0, None),
        point("HX-2", 17400.0, None),
        point("HX-3", 16100.0, None),
    ];
    let svg = series_svg(&pts, 800, 600).unwrap();
    assert!(!svg.contains(long));
    assert!(
        svg.contains("CrX-7 (demo: invented Cr3+-do…"),
        "the cut name is missing"
    );
    assert!(svg.contains("HX-2"));
}
