//! Text cells of the CSV files ddlens writes (the spectra of `ddlens import
//! --export-csv`, the curve labels of `ddlens diagram --csv`).
//!
//! A text cell — a sample name, a column label — is written so that a
//! spreadsheet reads it back as the same text and never runs it:
//!
//! - a cell beginning with `=`, `+`, `-`, `@`, a tab or a carriage return is
//!   taken for a formula by spreadsheet programs, so it gets a leading `'`
//!   (the prefix the OWASP guidance on CSV injection recommends; common
//!   practice);
//! - a cell holding a comma, a double quote or a line break is enclosed in
//!   double quotes, inner quotes doubled (RFC 4180, section 2, rules 6 and 7).
//!
//! Numbers are not text cells: they are written as they are (`-1.5` is a
//! number, not a formula).

/// Characters that make a spreadsheet read a cell as a formula when they come first.
const FORMULA_STARTS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// `text` as one CSV text cell: formula starts neutralised with `'`, quoted when needed.
pub fn text_cell(text: &str) -> String {
    let neutral = if text.starts_with(FORMULA_STARTS) {
        format!("'{text}")
    } else {
        text.to_string()
    };
    if neutral.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", neutral.replace('"', "\"\""))
    } else {
        neutral
    }
}

#[cfg(test)]
mod tests {
    use super::text_cell;

    #[test]
    fn a_sample_named_like_a_formula_exports_as_text() {
        // OWASP guidance on CSV injection (common practice): prefix `'` to
        // cells starting with = + - @ tab or carriage return.
        assert_eq!(text_cell("=1+1"), "'=1+1");
        assert_eq!(text_cell("+SUM(A1:A9)"), "'+SUM(A1:A9)");
        assert_eq!(text_cell("-2+3"), "'-2+3");
        assert_eq!(text_cell("@cmd"), "'@cmd");
        assert_eq!(text_cell("\t=1"), "'\t=1");
        assert_eq!(text_cell("\r=1"), "\"'\r=1\"");
    }

    #[test]
    fn an_ordinary_name_is_written_unchanged() {
        for name in ["CrX-7 (demo)", "Ni(H2O)6 2+ cm-1", "a=b", ""] {
            assert_eq!(text_cell(name), name);
        }
    }

    #[test]
    fn a_name_with_a_comma_or_quote_is_quoted_with_inner_quotes_doubled() {
        // RFC 4180, section 2, rule 7 (its example field b"bb becomes "b""bb").
        assert_eq!(text_cell("b\"bb"), "\"b\"\"bb\"");
        assert_eq!(text_cell("Cr, 0.1 M"), "\"Cr, 0.1 M\"");
        assert_eq!(text_cell("two\nlines"), "\"two\nlines\"");
        // Both rules at once: the prefix goes inside the quotes.
        assert_eq!(
            text_cell("=HYPERLINK(\"x\",\"y\")"),
            "\"'=HYPERLINK(\"\"x\"\",\"\"y\"\")\""
        );
    }
}
