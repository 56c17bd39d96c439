//! JCAMP-DX 4.24 / 5.x spectra (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151;
//! Grasselli, Pure Appl. Chem. 63 (1991) 1781).
//!
//! - Labelled data records `##LABEL=value`; labels are compared after upper-casing
//!   and dropping blanks, `-`, `/` and `_` (so `##DATA TYPE=` = `##DATATYPE=`);
//!   lines without `##` continue the previous record; `$$` starts a comment;
//!   leading blanks are ignored.
//! - Blocks run from `##TITLE=` to `##END=`; a `##TITLE=` inside an open block
//!   starts a nested block (compound `LINK` files with `##BLOCKS=`).
//! - `##XYDATA=(X++(Y..Y))`: AFFN or ASDF lines (see [`super::asdf`]). Abscissae are
//!   FIRSTX + i·(LASTX − FIRSTX)/(NPOINTS − 1); the line-leading X (× XFACTOR) is only a
//!   check. Y checkpoint rule (1988 spec §5.8.3): after a line ending in DIF, the next
//!   line's first ordinate repeats the last one and is dropped; after a DUP of a DIF
//!   ("relayed DIF") it is dropped only if it matches, as writers disagree.
//! - `##XYPOINTS=(XY..XY)` and `##PEAK TABLE=(XY..XY)`/`(XYW..XYW)`: explicit groups.
//! - Y = stored × YFACTOR, X = stored × XFACTOR.

use super::asdf::{decode_line, is_asdf_char, LineEnd};
use super::{check_limit, ImportError, RawReport, RawSpectrum, Warning};
use super::{MAX_FILE_POINTS, MAX_POINTS, MAX_SPECTRA};
use std::collections::BTreeMap;

/// Is this text a JCAMP-DX file (its first non-blank line starts with `##`)?
pub fn looks_like_jcamp(text: &str) -> bool {
    text.lines()
        .map(str::trim)
        .find(|l| !l.is_empty())
        .is_some_and(|l| l.starts_with("##"))
}

/// Upper-case, without blanks, `-`, `/`, `_`.
pub fn normalise_label(label: &str) -> String {
    label
        .chars()
        .filter(|c| !matches!(c, ' ' | '\t' | '-' | '/' | '_'))
        .flat_map(char::to_uppercase)
        .collect()
}

/// One labelled data record with the lines that continue it.
#[derive(Debug, Default)]
struct Record {
    label: String,
    raw_label: String,
    value: String,
    line: usize,
    data: Vec<(usize, String)>,
}

#[derive(Debug, Default)]
struct Block {
    records: Vec<Record>,
}

impl Block {
    fn get(&self, label: &str) -> Option<&Record> {
        self.records.iter().find(|r| r.label == label)
    }

    fn number(&self, label: &str) -> Option<(f64, usize)> {
        let r = self.get(label)?;
        let text = r.value.trim();
        let v = text
            .parse::<f64>()
            .or_else(|_| text.replace(',', ".").parse::<f64>())
            .ok()
            .filter(|v| v.is_finite())?;
        Some((v, r.line))
    }
}

/// Splits the file into blocks of records.
fn blocks(text: &str) -> Vec<Block> {
    let mut done = Vec::new();
    let mut stack: Vec<Block> = Vec::new();
    let mut current: Option<Block> = None;
    for (number, line) in super::text::numbered_lines(text) {
        let content = match line.find("$$") {
            Some(i) => &line[..i],
            None => line,
        };
        let trimmed = content.trim();
        if trimmed.is_empty() {
            continue;
        }
        if let Some(rest) = trimmed.strip_prefix("##") {
            let (raw_label, value) = rest.split_once('=').unwrap_or((rest, ""));
            let label = normalise_label(raw_label);
            if label == "TITLE" {
                if let Some(open) = current.take() {
                    stack.push(open);
                }
                current = Some(Block::default());
            }
            let block = current.get_or_insert_with(Block::default);
            if label == "END" {
                if let Some(finished) = current.take() {
                    done.push(finished);
                }
                current = stack.pop();
                continue;
            }
            block.records.push(Record {
                label,
                raw_label: raw_label.trim().to_string(),
                value: value.trim().to_string(),
                line: number,
                data: Vec::new(),
            });
        } else if let Some(record) = current.as_mut().and_then(|b| b.records.last_mut()) {
            record.data.push((number, trimmed.to_string()));
        }
    }
    done.extend(current);
    done.extend(stack.into_iter().rev());
    done
}

const DATA_LABELS: [&str; 6] = [
    "XYDATA",
    "XYPOINTS",
    "PEAKTABLE",
    "DATATABLE",
    "PEAKASSIGNMENTS",
    "RADATA",
];

/// Reads every XY spectrum of a JCAMP-DX file.
pub fn read(text: &str) -> Result<RawReport, ImportError> {
    let mut spectra = Vec::new();
    let mut warnings = Vec::new();
    let mut unsupported: Option<(usize, String)> = None;
    let mut total = 0usize;
    for block in blocks(text) {
        if let Some(nt) = block.get("NTUPLES") {
            let msg = format!(
                "NTUPLES data ('{}', multi-page data such as NMR) are not supported",
                nt.value
            );
            warnings.push(Warning::new(Some(nt.line), msg.clone()));
            unsupported.get_or_insert((nt.line, msg));
            continue;
        }
        let spectrum = if let Some(r) = block.get("XYDATA") {
            if r.value.to_uppercase().contains("XY..XY") {
                groups(&block, r)?
            } else {
                xydata(&block, r)?
            }
        } else if let Some(r) = block.get("XYPOINTS") {
            groups(&block, r)?
        } else if let Some(r) = block.get("PEAKTABLE") {
            let mut s = groups(&block, r)?;
            s.warnings.push(Warning::new(
                Some(r.line),
                "a peak table (sticks), not a continuous spectrum",
            ));
            s
        } else {
            continue;
        };
        total += spectrum.x.len();
        check_limit(total, MAX_FILE_POINTS, "points in all")?;
        spectra.push(spectrum);
        check_limit(spectra.len(), MAX_SPECTRA, "spectra")?;
    }
    if spectra.is_empty() {
        return Err(match unsupported {
            Some((line, message)) => ImportError::Unsupported {
                line: Some(line),
                message,
            },
            None => ImportError::NoData,
        });
    }
    Ok(RawReport {
        format: "JCAMP-DX".into(),
        spectra,
        warnings,
    })
}

/// Common fields of a block's spectrum.
fn base(block: &Block) -> RawSpectrum {
    let mut metadata = BTreeMap::new();
    for r in &block.records {
        if DATA_LABELS.contains(&r.label.as_str()) {
            continue;
        }
        let mut value = r.value.clone();
        for (_, more) in &r.data {
            value.push('\n');
            value.push_str(more);
        }
        let key = if metadata.contains_key(&r.raw_label) {
            format!("{} (line {})", r.raw_label, r.line)
        } else {
            r.raw_label.clone()
        };
        metadata.insert(key, value);
    }
    RawSpectrum {
        name: block
            .get("TITLE")
            .map(|r| r.value.clone())
            .filter(|t| !t.is_empty())
            .unwrap_or_else(|| "JCAMP-DX spectrum".into()),
        x_label: block.get("XUNITS").map(|r| r.value.clone()),
        y_label: block.get("YUNITS").map(|r| r.value.clone()),
        metadata,
        ..RawSpectrum::default()
    }
}

fn factor(block: &Block, label: &str) -> f64 {
    block
        .number(label)
        .map(|(v, _)| v)
        .filter(|&v| v != 0.0)
        .unwrap_or(1.0)
}

/// Whether a numeric label (read as f64, e.g. `##NPOINTS=`) states exactly `count`.
// Exact comparison meant: a count matches only the integer itself, and every
// count a file can hold is exact in f64.
#[allow(clippy::float_cmp)]
fn says_count(label: f64, count: usize) -> bool {
    label == count as f64
}

/// `##XYDATA=(X++(Y..Y))`.
fn xydata(block: &Block, record: &Record) -> Result<RawSpectrum, ImportError> {
    let form: String = record
        .value
        .chars()
        .filter(|c| !c.is_whitespace())
        .collect::<String>()
        .to_uppercase();
    if !form.contains("X++(Y..Y)") {
        return Err(ImportError::Unsupported {
            line: Some(record.line),
            message: format!(
                "XYDATA form '{}' is not supported (only (X++(Y..Y)))",
                record.value
            ),
        });
    }
    let mut s = base(block);
    let (xfactor, yfactor) = (factor(block, "XFACTOR"), factor(block, "YFACTOR"));
    let asdf = record.data.iter().any(|(_, l)| l.chars().any(is_asdf_char));
    let Ordinates {
        mut ys,
        mut lines,
        line_starts,
        uncertain,
    } = ordinates(record, asdf, xfactor, &mut s.warnings)?;
    let npoints = block.number("NPOINTS");
    drop_relayed_checkpoints(npoints, &uncertain, &mut ys, &mut lines, &mut s.warnings);
    let count = ys.len();
    if let Some((n, line)) = npoints {
        if !says_count(n, count) {
            s.warnings.push(Warning::new(
                Some(line),
                format!("##NPOINTS= says {n} but {count} points were decoded"),
            ));
        }
    }
    let n_for_grid = npoints
        .map(|(n, _)| n)
        .filter(|&n| n >= 2.0)
        .unwrap_or(count as f64);
    let first = block
        .number("FIRSTX")
        .map(|(v, _)| v)
        .or_else(|| line_starts.first().map(|l| l.1));
    let step = match (first, block.number("LASTX"), block.number("DELTAX")) {
        (Some(f), Some((l, _)), _) if n_for_grid >= 2.0 => Some((l - f) / (n_for_grid - 1.0)),
        (_, _, Some((d, _))) => Some(d),
        _ => None,
    };
    let (Some(first), Some(step)) = (first, step) else {
        return Err(ImportError::Malformed {
            line: Some(record.line),
            message: "the abscissae cannot be computed: FIRSTX with LASTX or DELTAX is missing"
                .into(),
        });
    };
    if let (Some((d, line)), true) = (block.number("DELTAX"), step != 0.0) {
        if ((d - step) / step).abs() > 1e-3 {
            s.warnings.push(Warning::new(
                Some(line),
                format!("##DELTAX= {d} disagrees with (LASTX − FIRSTX)/(NPOINTS − 1) = {step}"),
            ));
        }
    }
    if let Some(&(_, x_line, number)) = line_starts.first() {
        if (x_line - first).abs() > 0.5 * step.abs() + 1e-9 * first.abs().max(1.0) {
            s.warnings.push(Warning::new(
                Some(number),
                format!("the first line starts at X = {x_line} but ##FIRSTX= is {first}"),
            ));
        }
    }
    let last_x = block.number("LASTX").map(|(v, _)| v);
    let n1 = n_for_grid - 1.0;
    s.x = (0..count)
        .map(|i| match last_x {
            Some(l) if npoints.is_some() && n1 > 0.0 => first + (l - first) * (i as f64 / n1),
            _ => first + step * i as f64,
        })
        .collect();
    s.y = ys.iter().map(|y| y * yfactor).collect();
    s.lines = lines;
    drop_missing(&mut s);
    Ok(s)
}

/// readJDX's rule for relayed DIF: if treating every unmatched value after a
/// DUP-of-DIF as a checkpoint gives exactly NPOINTS, that reading is the right one.
fn drop_relayed_checkpoints(
    npoints: Option<(f64, usize)>,
    uncertain: &[usize],
    ys: &mut Vec<f64>,
    lines: &mut Vec<usize>,
    warnings: &mut Vec<Warning>,
) {
    if let Some((n, line)) = npoints {
        if !uncertain.is_empty() && says_count(n, ys.len() - uncertain.len()) {
            let mut drop = vec![false; ys.len()];
            for &i in uncertain {
                drop[i] = true;
            }
            let mut k = 0;
            ys.retain(|_| {
                k += 1;
                !drop[k - 1]
            });
            let mut k = 0;
            lines.retain(|_| {
                k += 1;
                !drop[k - 1]
            });
            warnings.push(Warning::new(
                Some(line),
                format!("{} values after a relayed DIF (DUP of DIF) were taken as checkpoints to match ##NPOINTS=", uncertain.len()),
            ));
        }
    }
}

/// The ordinates of an `(X++(Y..Y))` table, decoded line by line with the
/// JCAMP-DX Y-checkpoint rule (a line after a DIF line repeats the last value).
struct Ordinates {
    ys: Vec<f64>,
    /// The file line of each ordinate.
    lines: Vec<usize>,
    /// (index of the line's first ordinate, its x × XFACTOR, file line).
    line_starts: Vec<(usize, f64, usize)>,
    /// Ordinates kept after a relayed DIF because they did not match: maybe
    /// checkpoints after all.
    uncertain: Vec<usize>,
}

fn ordinates(
    record: &Record,
    asdf: bool,
    xfactor: f64,
    warnings: &mut Vec<Warning>,
) -> Result<Ordinates, ImportError> {
    let mut ys: Vec<f64> = Vec::new();
    let mut lines: Vec<usize> = Vec::new();
    let mut line_starts: Vec<(usize, f64, usize)> = Vec::new();
    let mut previous_end = LineEnd::Absolute;
    let mut checkpoint_warned = false;
    let mut uncertain: Vec<usize> = Vec::new();
    for (number, text) in &record.data {
        let decoded = decode_line(text, asdf).map_err(|m| ImportError::Malformed {
            line: Some(*number),
            message: m,
        })?;
        let Some((&x, y_line)) = decoded.values.split_first() else {
            continue;
        };
        let mut y_line = y_line;
        if previous_end != LineEnd::Absolute {
            if let (Some(&check), Some(&last)) = (y_line.first(), ys.last()) {
                let matches = (check - last).abs() <= 1e-9 * last.abs().max(1.0);
                if matches || previous_end == LineEnd::Dif {
                    y_line = &y_line[1..];
                } else {
                    uncertain.push(ys.len());
                }
                if !matches && previous_end == LineEnd::Dif && !checkpoint_warned {
                    warnings.push(Warning::new(
                        Some(*number),
                        format!("Y checkpoint {check} differs from the previous line's last value {last}; the data may be corrupt"),
                    ));
                    checkpoint_warned = true;
                }
            }
        }
        check_limit(
            ys.len() + y_line.len(),
            MAX_POINTS,
            "points in one spectrum",
        )?;
        line_starts.push((ys.len(), x * xfactor, *number));
        ys.extend_from_slice(y_line);
        lines.extend(std::iter::repeat_n(*number, y_line.len()));
        previous_end = decoded.end;
    }
    Ok(Ordinates {
        ys,
        lines,
        line_starts,
        uncertain,
    })
}

/// `(XY..XY)`, `(XYW..XYW)`, `(XYM..XYM)` groups of `##XYPOINTS=` or `##PEAK TABLE=`.
fn groups(block: &Block, record: &Record) -> Result<RawSpectrum, ImportError> {
    let form = record.value.to_uppercase();
    let size = if form.contains("XYW") || form.contains("XYM") {
        3
    } else {
        2
    };
    let mut s = base(block);
    let (xfactor, yfactor) = (factor(block, "XFACTOR"), factor(block, "YFACTOR"));
    let mut values: Vec<(f64, usize)> = Vec::new();
    for (number, text) in &record.data {
        let decoded = decode_line(text, false).map_err(|m| ImportError::Malformed {
            line: Some(*number),
            message: m,
        })?;
        values.extend(decoded.values.into_iter().map(|v| (v, *number)));
        check_limit(values.len() / size, MAX_POINTS, "points in one spectrum")?;
    }
    if values.len() % size != 0 {
        s.warnings.push(Warning::new(
            Some(record.line),
            format!(
                "{} numbers do not make whole groups of {size}; the last were ignored",
                values.len()
            ),
        ));
    }
    for group in values.chunks_exact(size) {
        s.x.push(group[0].0 * xfactor);
        s.y.push(group[1].0 * yfactor);
        s.lines.push(group[0].1);
    }
    drop_missing(&mut s);
    Ok(s)
}

/// Removes `?` (NaN) points, with a count.
fn drop_missing(s: &mut RawSpectrum) {
    let before = s.x.len();
    let keep: Vec<bool> =
        s.x.iter()
            .zip(&s.y)
            .map(|(x, y)| x.is_finite() && y.is_finite())
            .collect();
    if keep.iter().all(|&k| k) {
        return;
    }
    let first = keep
        .iter()
        .position(|&k| !k)
        .and_then(|i| s.lines.get(i).copied());
    let filter = |v: &mut Vec<f64>| {
        let mut i = 0;
        v.retain(|_| {
            let k = keep.get(i).copied().unwrap_or(false);
            i += 1;
            k
        });
    };
    filter(&mut s.x);
    filter(&mut s.y);
    let mut i = 0;
    s.lines.retain(|_| {
        let k = keep.get(i).copied().unwrap_or(false);
        i += 1;
        k
    });
    s.warnings.push(Warning::new(
        first,
        format!(
            "{} missing ('?') or overflowing values were skipped",
            before - s.x.len()
        ),
    ));
}

#[cfg(test)]
mod tests {
    use super::*;

    fn one(text: &str) -> RawSpectrum {
        read(text).unwrap().spectra.remove(0)
    }

    #[test]
    fn dif_checkpoint_is_dropped_and_npoints_matches() {
        // Hand-made: 8 ordinates 10,11,13,13,13,12,20,21 over two DIF lines with a checkpoint.
        let text = "##TITLE=t\n##JCAMP-DX=5.01\n##XUNITS=1/CM\n##YUNITS=ABSORBANCE\n##XFACTOR=1\n##YFACTOR=0.5\n\
##FIRSTX=100\n##LASTX=107\n##NPOINTS=8\n##XYDATA=(X++(Y..Y))\n100A0JK%T$$ comment\n105A3jB0J\n107B1\n##END=\n";
        let s = one(text);
        assert_eq!(s.y, [5.0, 5.5, 6.5, 6.5, 6.5, 6.0, 10.0, 10.5]);
        assert_eq!(
            s.x,
            [100.0, 101.0, 102.0, 103.0, 104.0, 105.0, 106.0, 107.0]
        );
        assert!(s.warnings.is_empty(), "{:?}", s.warnings);
    }

    #[test]
    fn relayed_dif_check_only_dropped_when_equal() {
        // Line 1 ends DIF DUP ("relayed"): the next line repeats 13 → dropped.
        let text = "##TITLE=t\n##FIRSTX=1\n##LASTX=5\n##NPOINTS=5\n##XYDATA=(X++(Y..Y))\n1A0JT\n3A2A3A4\n##END=\n";
        assert_eq!(one(text).y, [10.0, 11.0, 12.0, 13.0, 14.0]);
        // Same ending, but the next line starts with a new value → kept.
        let text = "##TITLE=t\n##FIRSTX=1\n##LASTX=5\n##NPOINTS=5\n##XYDATA=(X++(Y..Y))\n1A0JT\n4A3A4\n##END=\n";
        assert_eq!(one(text).y, [10.0, 11.0, 12.0, 13.0, 14.0]);
    }

    #[test]
    fn lower_case_spaced_labels_indented_lines_and_mismatch_warnings() {
        let text = " ##title= indented\n ##x units = NANOMETERS\n ##Data Type= UV/VIS SPECTRUM\n ##firstx=400\n ##lastx=402\n ##npoints=4\n ##deltax=5\n ##xydata=(X++(Y..Y))\n 400 1 2 3\n ##end=\n";
        let s = one(text);
        assert_eq!(s.x_label.as_deref(), Some("NANOMETERS"));
        assert_eq!(s.y.len(), 3);
        assert!(s
            .warnings
            .iter()
            .any(|w| w.line == Some(6) && w.message.contains("NPOINTS")));
        assert!(s
            .warnings
            .iter()
            .any(|w| w.line == Some(7) && w.message.contains("DELTAX")));
    }

    #[test]
    fn compound_link_files_give_one_spectrum_per_child_and_ntuples_are_refused() {
        let text = "##TITLE=all\n##DATA TYPE=LINK\n##BLOCKS=2\n##TITLE=a\n##XYPOINTS=(XY..XY)\n1,2;3,4\n##END=\n##TITLE=b\n##PEAK TABLE=(XY..XY)\n5,6 7,8\n##END=\n##END=\n";
        let r = read(text).unwrap();
        let names: Vec<&str> = r.spectra.iter().map(|s| s.name.as_str()).collect();
        assert_eq!(names, ["a", "b"]);
        assert_eq!(r.spectra[1].x, [5.0, 7.0]);
        let nmr = "##TITLE=n\n##NTUPLES=NMR SPECTRUM\n##PAGE=1\n##END=\n";
        assert!(matches!(
            read(nmr),
            Err(ImportError::Unsupported { line: Some(2), .. })
        ));
    }
}
