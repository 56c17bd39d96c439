//! Delimited-text import on the synthetic fixtures in fixtures/import/ (see its README).
//! Expected values are computed here from the definitions (ν̃ = 10⁷/λ; A = 2 − log₁₀ %T, IUPAC),
//! not read back from the reader.

use ddlens::spectrum::{import, ImportError, ImportOptions, Quantity, XUnit};

fn read(name: &str) -> ddlens::spectrum::ImportReport {
    let path = format!("{}/fixtures/import/{name}", env!("CARGO_MANIFEST_DIR"));
    let bytes = std::fs::read(&path).unwrap();
    import(&bytes, name, &ImportOptions::default()).unwrap()
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs().max(1.0)
}

#[test]
fn cary_pairs_descending_with_trailing_commas_and_metadata_after() {
    let r = read("cary_descending_trailing_commas.csv");
    assert_eq!(r.spectra.len(), 2);
    let a = &r.spectra[0];
    assert_eq!(a.name, "Sample CrA");
    assert_eq!(a.wavenumber.len(), 31);
    assert_eq!(a.x_unit_read, XUnit::Nanometre);
    assert!(a.wavenumber.windows(2).all(|w| w[1] > w[0]), "ascending");
    assert!(close(a.wavenumber[0], 1e7 / 800.0, 1e-12));
    assert!(close(*a.wavenumber.last().unwrap(), 1e7 / 500.0, 1e-12));
    assert_eq!(
        a.metadata.get("Collection Time").map(String::as_str),
        Some("12/2/2026 10:14:02 AM")
    );
    assert_eq!(a.metadata.get("SBW (nm)").map(String::as_str), Some("2.0"));
    let b = &r.spectra[1];
    assert_eq!(b.name, "Sample CrB");
    assert_eq!(b.wavenumber.len(), 26, "the second pair is shorter");
    assert_eq!(b.quantity, Quantity::Absorbance, "%T was converted");
    // The fixture's %T column is 100·10^(−A) with A = 0.5·exp(…): peak A = 0.5 at 17 400 cm⁻¹ (≈575 nm).
    let max = b.values.iter().copied().fold(f64::MIN, f64::max);
    assert!(max > 0.45 && max <= 0.5 + 1e-5, "{max}");
}

#[test]
fn semicolon_with_decimal_comma() {
    let r = read("semicolon_decimal_comma.csv");
    let s = &r.spectra[0];
    assert_eq!(s.wavenumber.len(), 21);
    assert_eq!(s.x_unit_read, XUnit::Nanometre, "from 'Wellenlänge (nm)'");
    assert_eq!(
        s.metadata.get("delimiter").map(String::as_str),
        Some("semicolon, decimal comma")
    );
    assert!(close(s.wavenumber[0], 1e7 / 700.0, 1e-12));
}

#[test]
fn one_x_column_many_y_columns_named_from_headers() {
    let r = read("one_x_many_y.tsv");
    let names: Vec<&str> = r.spectra.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["Sample A", "Sample B", "Sample C"]);
    assert!(r
        .spectra
        .iter()
        .all(|s| s.x_unit_read == XUnit::Wavenumber && s.wavenumber.len() == 25));
}

#[test]
fn duplicate_x_is_averaged_with_a_warning() {
    let s = &read("duplicate_x.csv").spectra[0];
    assert_eq!(s.wavenumber.len(), 4);
    let i = s
        .wavenumber
        .iter()
        .position(|&w| close(w, 1e7 / 510.0, 1e-12))
        .unwrap();
    assert!(close(s.values[i], 0.25, 1e-12), "mean of 0.20 and 0.30");
    assert!(s
        .warnings
        .iter()
        .any(|w| w.line == Some(4) && w.message.contains("averaged")));
}

#[test]
fn nan_and_empty_cells_are_skipped_and_counted() {
    let s = &read("nan_cells.csv").spectra[0];
    assert_eq!(s.wavenumber.len(), 4);
    assert!(s
        .warnings
        .iter()
        .any(|w| w.line == Some(3) && w.message.starts_with("3 rows")));
}

#[test]
fn bom_and_latin1_headers() {
    let s = &read("utf8_bom.csv").spectra[0];
    assert_eq!(
        s.x_unit_read,
        XUnit::Nanometre,
        "the BOM must not hide the header"
    );
    assert_eq!(s.wavenumber.len(), 3);
    let r = read("latin1_header.txt");
    assert!(r.warnings.iter().any(|w| w.message.contains("Latin-1")));
    let s = &r.spectra[0];
    assert_eq!(s.x_unit_read, XUnit::Nanometre);
    assert!(s.metadata.values().any(|v| v.contains("25 °C")));
    // Tab + decimal comma: 700 nm → 0,3.
    let i = s
        .wavenumber
        .iter()
        .position(|&w| close(w, 1e7 / 700.0, 1e-12))
        .unwrap();
    assert!(close(s.values[i], 0.3, 1e-12));
}

#[test]
fn percent_transmittance_becomes_absorbance() {
    let s = &read("percent_transmittance.csv").spectra[0];
    assert_eq!(s.quantity, Quantity::Absorbance);
    // A = 2 − log10(%T): 100 → 0, 10 → 1, 1 → 2, 50 → 0.30103 (IUPAC definition of absorbance).
    let expected = [
        (800.0, 2.0 - 50f64.log10()),
        (700.0, 2.0),
        (600.0, 1.0),
        (500.0, 0.0),
    ];
    assert_eq!(
        (s.wavenumber.len(), s.values.len()),
        (expected.len(), expected.len())
    );
    for ((w, v), (nm, a)) in s.wavenumber.iter().zip(&s.values).zip(expected) {
        assert!(close(*w, 1e7 / nm, 1e-12));
        assert!((v - a).abs() < 1e-12);
    }
}

#[test]
fn clipped_absorbance_is_flagged_as_a_wavenumber_range() {
    let s = &read("clipped_absorbance.csv").spectra[0];
    // Points 430–460 nm hold the Cary clip value 10.
    assert_eq!(s.saturated.len(), 1);
    assert!(close(s.saturated[0][0], 1e7 / 460.0, 1e-12));
    assert!(close(s.saturated[0][1], 1e7 / 430.0, 1e-12));
}

#[test]
fn a_text_row_inside_the_data_is_an_error_naming_its_line() {
    let path = format!(
        "{}/fixtures/import/malformed_text_in_data.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let err = import(
        &std::fs::read(path).unwrap(),
        "m.csv",
        &ImportOptions::default(),
    )
    .unwrap_err();
    assert_eq!(err.line(), Some(5));
    assert!(
        err.to_string().starts_with("line 5: expected numbers"),
        "{err}"
    );
}

#[test]
fn unnamed_x_axis_is_guessed_with_a_warning_and_can_be_overridden() {
    let s = &read("whitespace_no_header_wavenumber.txt").spectra[0];
    assert_eq!(s.x_unit_read, XUnit::Wavenumber);
    assert!(s
        .warnings
        .iter()
        .any(|w| w.message.contains("does not name the x unit")));
    let bytes = b"1.5 0.1\n2.0 0.3\n2.5 0.2\n";
    let err = import(bytes, "e.txt", &ImportOptions::default()).unwrap_err();
    assert!(matches!(err, ImportError::UnknownXUnit(_)));
    let opts = ImportOptions {
        x_unit: Some(XUnit::ElectronVolt),
        ..Default::default()
    };
    let s = &import(bytes, "e.txt", &opts).unwrap().spectra[0];
    // 1 eV = 8065.544 cm⁻¹ (CODATA 2018).
    assert!((s.wavenumber[0] - 1.5 * 8_065.543_937).abs() < 1e-3);
}

#[test]
fn air_to_vacuum_raises_wavenumbers_by_about_5_6_at_500_nm() {
    let bytes = b"Wavelength (nm),Abs\n500,0.1\n600,0.2\n";
    let plain = &import(bytes, "a.csv", &ImportOptions::default())
        .unwrap()
        .spectra[0];
    let opts = ImportOptions {
        air_to_vacuum: true,
        ..Default::default()
    };
    let vac = &import(bytes, "a.csv", &opts).unwrap().spectra[0];
    // Research note (Ciddor 1996, CALC): ν̃_air − ν̃_vac = 5.6 cm⁻¹ at 500 nm, 4.6 at 600 nm.
    assert!(((plain.wavenumber[1] - vac.wavenumber[1]) - 5.6).abs() < 0.05);
    assert!(((plain.wavenumber[0] - vac.wavenumber[0]) - 4.6).abs() < 0.05);
}

#[test]
fn concentration_and_path_length_give_epsilon() {
    let bytes = b"nm,Abs\n500,0.5\n600,0.25\n";
    let opts = ImportOptions {
        concentration_mol_l: Some(0.01),
        path_length_cm: Some(0.5),
        ..Default::default()
    };
    let s = &import(bytes, "e.csv", &opts).unwrap().spectra[0];
    assert_eq!(s.quantity, Quantity::MolarAbsorptivity);
    // ε = A/(c·l) (Beer–Lambert): 0.5/(0.01·0.5) = 100.
    assert!((s.values[1] - 100.0).abs() < 1e-9);
    let bad = ImportOptions {
        concentration_mol_l: Some(-1.0),
        path_length_cm: Some(1.0),
        ..Default::default()
    };
    assert!(matches!(
        import(bytes, "e.csv", &bad),
        Err(ImportError::BadOption(_))
    ));
}

#[test]
fn empty_and_textless_files_are_refused() {
    assert_eq!(
        import(b"", "e.csv", &ImportOptions::default()),
        Err(ImportError::Empty)
    );
    assert_eq!(
        import(
            b"just words\nno numbers\n",
            "e.csv",
            &ImportOptions::default()
        ),
        Err(ImportError::NoData)
    );
    let project = br#"{"ddlens_project": 99}"#;
    let err = import(project, "p.json", &ImportOptions::default()).unwrap_err();
    assert!(err.to_string().contains("newer ddlens"));
}

#[test]
fn percent_label_on_a_zero_to_one_scale_is_read_as_transmittance() {
    let s = &import(
        b"nm,%T\n500,0.1\n600,0.01\n",
        "t.csv",
        &ImportOptions::default(),
    )
    .unwrap()
    .spectra[0];
    // −log10(0.01) = 2, −log10(0.1) = 1 (IUPAC absorbance).
    assert!((s.values[0] - 2.0).abs() < 1e-12 && (s.values[1] - 1.0).abs() < 1e-12);
    assert!(s.warnings.iter().any(|w| w.message.contains("0–1 scale")));
}

#[test]
fn a_lone_row_of_numbers_outside_the_table_is_reported_not_dropped() {
    // One row of numbers, a stray text line, then the table: the lone row is
    // not part of the table, and the report says so with its line number.
    let text = "nm,A\n500,0.1\nremark here\n510,0.2\n520,0.3\n530,0.25\n";
    let r = import(text.as_bytes(), "lone.csv", &ImportOptions::default()).unwrap();
    assert_eq!(r.spectra[0].wavenumber.len(), 3);
    let lone: Vec<_> = r
        .spectra
        .iter()
        .flat_map(|s| &s.warnings)
        .chain(&r.warnings)
        .filter(|w| w.line == Some(2))
        .collect();
    assert_eq!(lone.len(), 1, "{:?}", r.warnings);
    assert!(lone[0].message.contains("not read"), "{}", lone[0].message);
}

#[test]
fn a_comment_line_names_the_columns_only_when_it_has_one_cell_per_column() {
    // "# …" lines are comments in text data (common practice); a free-text
    // comment must not become a column header or the sample's name.
    let text = "# synthetic: five bands, seed 7\n9000 0.05\n9010 0.06\n9020 0.07\n";
    let r = import(text.as_bytes(), "five.txt", &ImportOptions::default()).unwrap();
    assert_eq!(r.spectra[0].name, "five");
    // A commented header with one name per column still gives the units.
    let text = "# nm A\n500 0.1\n510 0.2\n520 0.3\n";
    let r = import(text.as_bytes(), "c.txt", &ImportOptions::default()).unwrap();
    assert_eq!(r.spectra[0].x_unit_read, XUnit::Nanometre);
    assert!(close(r.spectra[0].wavenumber[0], 1e7 / 520.0, 1e-12));
}
