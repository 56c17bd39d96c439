//! Hostile inputs at import: overflowing numbers, huge expansions, huge column counts and
//! control characters. Each test names what it protects; the slow ones run under a bounded
//! wait so that a regression fails instead of hanging the suite.

use ddlens::spectrum::{
    import, ImportError, ImportOptions, ImportReport, MAX_MAGNITUDE, MAX_POINTS, MAX_SPECTRA,
};
mod common;
use common::within;
use std::fmt::Write as _;

fn import_text(text: &str, opts: &ImportOptions) -> Result<ImportReport, ImportError> {
    import(text.as_bytes(), "hostile.csv", opts)
}

fn assert_bounded(report: &ImportReport) {
    for s in &report.spectra {
        assert!(
            s.values.iter().all(|v| v.abs() <= MAX_MAGNITUDE),
            "{:?}",
            s.values
        );
        assert!(s.wavenumber.iter().all(|w| w.is_finite()));
        assert!(s.wavenumber.windows(2).all(|w| w[1] > w[0]));
    }
}

fn warnings_of(report: &ImportReport) -> String {
    report.spectra[0]
        .warnings
        .iter()
        .map(ToString::to_string)
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn a_spectrum_with_a_value_of_1e308_imports_with_bounded_values_and_names_the_row() {
    // The 33-byte file of issue 20: its span overflowed the plot's axis ticks.
    let report = import_text(
        "nm,A\n400,0.1\n500,1.7e308\n600,0.1\n",
        &ImportOptions::default(),
    )
    .unwrap();
    assert_bounded(&report);
    assert_eq!(report.spectra[0].values.len(), 2);
    let warnings = warnings_of(&report);
    assert!(warnings.contains("line 3"), "{warnings}");
}

#[test]
fn duplicate_rows_of_the_largest_doubles_never_become_infinite() {
    let report = import_text(
        "nm,A\n400,1.7e308\n400,1.7e308\n500,0.1\n600,0.2\n600,0.4\n",
        &ImportOptions::default(),
    )
    .unwrap();
    assert_bounded(&report);
    let s = &report.spectra[0];
    // 600 nm (line 5 and 6) averages to 0.3; the two 1.7e308 rows are dropped.
    assert!((s.values[0] - 0.3).abs() < 1e-12, "{:?}", s.values);
    let warnings = warnings_of(&report);
    assert!(warnings.contains("lines 2, 3"), "{warnings}");
    assert!(warnings.contains("line 6"), "{warnings}");
}

#[test]
fn a_tiny_concentration_drops_the_points_that_overflow_with_their_rows() {
    let opts = ImportOptions {
        x_unit: None,
        concentration_mol_l: Some(1e-300),
        path_length_cm: Some(1e-10),
        ..Default::default()
    };
    let report = import_text("nm,A\n400,0\n450,0\n500,0.5\n550,0\n", &opts).unwrap();
    assert_bounded(&report);
    assert_eq!(report.spectra[0].values.len(), 3);
    let warnings = warnings_of(&report);
    assert!(warnings.contains("line 4"), "{warnings}");
    // c·l underflowing to zero is refused with a sentence, never divided by.
    let zero = ImportOptions {
        path_length_cm: Some(1e-300),
        ..opts
    };
    let err = import_text("nm,A\n400,0\n450,0\n", &zero).unwrap_err();
    assert!(matches!(err, ImportError::BadOption(_)), "{err}");
}

#[test]
fn a_csv_with_a_hundred_thousand_columns_is_refused_instead_of_making_as_many_spectra() {
    let err = within(20, || {
        let columns = 100_001;
        let mut text = String::new();
        for row in 0..6 {
            let cells: Vec<String> = (0..columns)
                .map(|c| {
                    if c == 0 {
                        format!("{}", 400 + row * 10)
                    } else {
                        "0.5".to_string()
                    }
                })
                .collect();
            text.push_str(&cells.join(","));
            text.push('\n');
        }
        import_text(&text, &ImportOptions::default())
    })
    .unwrap_err();
    assert!(matches!(err, ImportError::TooLarge(_)), "{err}");
    assert!(err.to_string().contains(&MAX_SPECTRA.to_string()), "{err}");
}

#[test]
fn a_small_jcamp_expanding_to_five_million_points_is_refused() {
    // Each data line is one ordinate and a DUP count of 999 998 (`s99998`).
    let mut text = String::from(
        "##TITLE=dup\n##XUNITS=1/CM\n##YUNITS=ABSORBANCE\n##FIRSTX=1\n##LASTX=5000000\n##NPOINTS=5000000\n##XYDATA=(X++(Y..Y))\n",
    );
    for k in 0..5 {
        let _ = writeln!(text, "{} A1s99998", 1 + k * 999_998);
    }
    text.push_str("##END=\n");
    assert!(text.len() < 300, "{} bytes", text.len());
    let err = within(20, move || {
        import(text.as_bytes(), "dup.jdx", &ImportOptions::default())
    })
    .unwrap_err();
    assert!(matches!(err, ImportError::TooLarge(_)), "{err}");
    assert!(err.to_string().contains(&MAX_POINTS.to_string()), "{err}");
}

#[test]
fn control_characters_leave_names_and_metadata_at_import() {
    let csv = "operator:\u{1b}[31mAnn\u{7}\nnm,Sample\u{0}\u{8} one\n400,0.1\n500,0.2\n600,0.1\n";
    let report = import_text(csv, &ImportOptions::default()).unwrap();
    let s = &report.spectra[0];
    assert_eq!(s.name, "Sample one");
    let control = |t: &str| t.chars().any(|c| c.is_control() && c != '\n' && c != '\t');
    assert!(
        s.metadata.iter().all(|(k, v)| !control(k) && !control(v)),
        "{:?}",
        s.metadata
    );
    let jcamp = "##TITLE=t\u{1}i\u{7f}tle\n##ORIGIN=lab\u{c}\n continued\n##XUNITS=1/CM\n##XYPOINTS=(XY..XY)\n20000,0.1 21000,0.2 22000,0.1\n##END=\n";
    let report = import(jcamp.as_bytes(), "c.jdx", &ImportOptions::default()).unwrap();
    let s = &report.spectra[0];
    assert_eq!(s.name, "title");
    assert_eq!(s.metadata["ORIGIN"], "lab\ncontinued");
}
