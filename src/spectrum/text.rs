//! Bytes → text: UTF-8 (with or without BOM), UTF-16 LE/BE by BOM, and a
//! Latin-1 (ISO-8859-1) fallback for anything else, so that instrument
//! exports with a `µ` or `°` in a header still read. Latin-1 maps every byte
//! to one character, so decoding never fails.

use super::Warning;

/// Decoded text plus a note on how it was decoded when that was not plain UTF-8.
pub struct Decoded {
    pub text: String,
    pub warnings: Vec<Warning>,
}

/// Decodes a file's bytes; never fails.
pub fn decode(bytes: &[u8]) -> Decoded {
    let mut warnings = Vec::new();
    let text = if let Some(rest) = bytes.strip_prefix(&[0xEF, 0xBB, 0xBF]) {
        utf8_or_latin1(rest, &mut warnings)
    } else if let Some(rest) = bytes.strip_prefix(&[0xFF, 0xFE]) {
        utf16(rest, u16::from_le_bytes, &mut warnings)
    } else if let Some(rest) = bytes.strip_prefix(&[0xFE, 0xFF]) {
        utf16(rest, u16::from_be_bytes, &mut warnings)
    } else {
        utf8_or_latin1(bytes, &mut warnings)
    };
    Decoded { text, warnings }
}

fn utf8_or_latin1(bytes: &[u8], warnings: &mut Vec<Warning>) -> String {
    if let Ok(s) = std::str::from_utf8(bytes) {
        s.to_string()
    } else {
        warnings.push(Warning::new(
            None,
            "the file is not valid UTF-8; it was read as Latin-1 (ISO-8859-1)",
        ));
        bytes.iter().map(|&b| char::from(b)).collect()
    }
}

fn utf16(bytes: &[u8], word: fn([u8; 2]) -> u16, warnings: &mut Vec<Warning>) -> String {
    let units = bytes.chunks_exact(2).map(|c| word([c[0], c[1]]));
    let text: String = char::decode_utf16(units)
        .map(|r| r.unwrap_or(char::REPLACEMENT_CHARACTER))
        .collect();
    warnings.push(Warning::new(
        None,
        "the file is UTF-16 (read by its byte-order mark)",
    ));
    text
}

/// Splits text into lines, dropping `\r` before `\n`; yields (1-based number, line).
/// Text with `\r` but no `\n` (classic Mac OS line ends) is split at `\r`.
pub fn numbered_lines(text: &str) -> impl Iterator<Item = (usize, &str)> {
    let separator = if !text.contains('\n') && text.contains('\r') {
        '\r'
    } else {
        '\n'
    };
    text.split(separator)
        .enumerate()
        .map(|(i, l)| (i + 1, l.strip_suffix('\r').unwrap_or(l)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn strips_bom_and_falls_back_to_latin1() {
        assert_eq!(decode(b"\xEF\xBB\xBFnm,A").text, "nm,A");
        let latin = decode(b"Wellenl\xE4nge (nm)");
        assert_eq!(latin.text, "Wellenlänge (nm)");
        assert_eq!(latin.warnings.len(), 1);
        let utf16 = decode(&[0xFF, 0xFE, b'n', 0, b'm', 0]);
        assert_eq!(utf16.text, "nm");
    }
}
