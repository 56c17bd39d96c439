//! Delimited text tables (CSV, TXT) as exported by spectrophotometers.
//!
//! Method (the heuristics follow real exports described in the research notes,
//! e.g. Agilent Cary CSV and European-locale `;`/decimal-comma files):
//! 1. sniff the delimiter (`\t`, `;`, `,`, runs of blanks) and whether `,` is the
//!    decimal mark, by how many of the first lines become rows of numbers;
//!    `,` is never a decimal mark when it is the delimiter (R `read.csv2` convention);
//! 2. classify every line as blank, data (only numbers, empty or missing cells,
//!    at least two cells) or other; the longest run of data lines is the table;
//! 3. a text line between two runs of data is an error naming that line; other
//!    lines before and after the table are kept as metadata;
//! 4. the header line just above the table names the columns; the line above
//!    that may hold sample names, one per column pair (Cary);
//! 5. the layout is x,y,x,y… (column pairs) or x,y₁,y₂… (one x, many y).

use super::units::XUnit;
use super::{check_limit, ImportError, RawReport, RawSpectrum, Warning};
use super::{MAX_FILE_POINTS, MAX_POINTS, MAX_SPECTRA};
use std::collections::BTreeMap;

/// How cells are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    Tab,
    Semicolon,
    Comma,
    Whitespace,
}

impl Delimiter {
    fn describe(self) -> &'static str {
        match self {
            Delimiter::Tab => "tab",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Comma => "comma",
            Delimiter::Whitespace => "blanks",
        }
    }

    fn split(self, line: &str) -> Vec<&str> {
        match self {
            Delimiter::Tab => line.split('\t').map(str::trim).collect(),
            Delimiter::Semicolon => line.split(';').map(str::trim).collect(),
            Delimiter::Comma => line.split(',').map(str::trim).collect(),
            Delimiter::Whitespace => line.split_whitespace().collect(),
        }
    }
}

/// One table cell.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Cell {
    Empty,
    Missing,
    Number(f64),
    Text,
}

fn cell(raw: &str, decimal_comma: bool) -> Cell {
    let s = raw.trim().trim_matches('"').trim();
    if s.is_empty() {
        return Cell::Empty;
    }
    let lower = s.to_ascii_lowercase();
    if matches!(
        lower.as_str(),
        "nan" | "na" | "n/a" | "-" | "--" | "?" | "#n/a" | "null"
    ) {
        return Cell::Missing;
    }
    let parsed = if decimal_comma && s.contains(',') {
        s.replace(',', ".").parse::<f64>()
    } else {
        s.parse::<f64>()
    };
    match parsed {
        Ok(v) if v.is_finite() => Cell::Number(v),
        // f64::from_str accepts "inf", "infinity", "nan": treat as missing values.
        Ok(_) => Cell::Missing,
        Err(_) => Cell::Text,
    }
}

/// A line of the file after classification.
enum Kind {
    Blank,
    Data(Vec<Cell>),
    Other,
}

fn classify(line: &str, delimiter: Delimiter, decimal_comma: bool) -> Kind {
    if line.trim().is_empty() {
        return Kind::Blank;
    }
    let cells: Vec<Cell> = delimiter
        .split(line)
        .into_iter()
        .map(|c| cell(c, decimal_comma))
        .collect();
    let numbers = cells
        .iter()
        .filter(|c| matches!(c, Cell::Number(_)))
        .count();
    if cells.len() >= 2 && numbers >= 1 && !cells.contains(&Cell::Text) {
        Kind::Data(cells)
    } else {
        Kind::Other
    }
}

/// Number-like lines looked at when sniffing the delimiter.
const SNIFF_LINES: usize = 400;

/// Picks the delimiter and decimal mark that turn the most sample lines into
/// rows of at least two numbers; ties go to the earlier candidate.
fn sniff(lines: &[(usize, &str)]) -> (Delimiter, bool) {
    // Lines that start like a number, so a long header cannot hide the data.
    let sample: Vec<&str> = lines
        .iter()
        .map(|(_, l)| *l)
        .filter(|l| {
            l.trim_start_matches([' ', '\t', '"'])
                .starts_with(|c: char| c.is_ascii_digit() || matches!(c, '-' | '+' | '.'))
        })
        .take(SNIFF_LINES)
        .collect();
    let candidates = [
        (Delimiter::Tab, false),
        (Delimiter::Tab, true),
        (Delimiter::Semicolon, false),
        (Delimiter::Semicolon, true),
        (Delimiter::Comma, false),
        (Delimiter::Whitespace, false),
        (Delimiter::Whitespace, true),
    ];
    let score = |&(d, dc): &(Delimiter, bool)| {
        sample
            .iter()
            .filter(|l| match classify(l, d, dc) {
                Kind::Data(cells) => {
                    cells
                        .iter()
                        .filter(|c| matches!(c, Cell::Number(_)))
                        .count()
                        >= 2
                }
                _ => false,
            })
            .count()
    };
    let mut best = candidates[0];
    let mut best_score = score(&best);
    for cand in &candidates[1..] {
        let s = score(cand);
        if s > best_score {
            best = *cand;
            best_score = s;
        }
    }
    best
}

/// The file stem, used to name spectra the file leaves unnamed.
fn stem(file_name: &str) -> String {
    let base = file_name.rsplit(['/', '\\']).next().unwrap_or(file_name);
    let stem = match base.rfind('.') {
        Some(i) if i > 0 => &base[..i],
        _ => base,
    };
    if stem.is_empty() {
        "spectrum".into()
    } else {
        stem.into()
    }
}

/// Warnings for the runs of numbers outside the table read (the run starting
/// at `start`): a lone row, or a second table.
fn stray_row_warnings(
    lines: &[(usize, &str)],
    runs: &[(usize, usize)],
    start: usize,
) -> Vec<Warning> {
    let mut warnings = Vec::new();
    for &(s, e) in runs {
        if s != start && e - s == 1 {
            // A lone row of numbers outside the table is never dropped silently.
            warnings.push(Warning::new(
                Some(lines[s].0),
                format!(
                    "this row of numbers is separated from the table at line {} and was not read",
                    lines[start].0
                ),
            ));
        }
        if s != start && e - s >= 2 {
            warnings.push(Warning::new(
                Some(lines[s].0),
                format!(
                    "a second table of {} rows starts here; only the table at line {} was read",
                    e - s,
                    lines[start].0
                ),
            ));
        }
    }
    warnings
}

/// Reads a delimited table into raw spectra.
pub fn read(text: &str, file_name: &str) -> Result<RawReport, ImportError> {
    let lines: Vec<(usize, &str)> = super::text::numbered_lines(text).collect();
    let (delimiter, decimal_comma) = sniff(&lines);
    let kinds: Vec<Kind> = lines
        .iter()
        .map(|(_, l)| classify(l, delimiter, decimal_comma))
        .collect();

    let runs = data_runs(&kinds);
    let Some(&(start, end)) = runs
        .iter()
        .filter(|(s, e)| e - s >= 2)
        .max_by_key(|(s, e)| (e - s, std::cmp::Reverse(*s)))
    else {
        return Err(ImportError::NoData);
    };
    check_text_inside_data(&lines, &kinds, &runs, start, end, delimiter)?;

    let mut warnings = stray_row_warnings(&lines, &runs, start);

    let rows: Vec<(usize, &[Cell])> = (start..end)
        .filter_map(|i| match &kinds[i] {
            Kind::Data(cells) => Some((lines[i].0, cells.as_slice())),
            _ => None,
        })
        .collect();
    let width = rows.iter().map(|(_, c)| c.len()).max().unwrap_or(0);
    let used: Vec<usize> = (0..width)
        .filter(|&c| {
            rows.iter()
                .any(|(_, r)| matches!(r.get(c), Some(Cell::Number(_))))
        })
        .collect();
    if used.len() < 2 {
        return Err(ImportError::NoData);
    }

    let headers = Headers::find(&lines, &kinds, start, delimiter);
    let layout = Layout::choose(&used, &rows, &headers);
    let mut metadata = BTreeMap::new();
    let mut format_note = delimiter.describe().to_string();
    if decimal_comma {
        format_note.push_str(", decimal comma");
    }
    metadata.insert("delimiter".to_string(), format_note);
    collect_metadata(
        &lines,
        &kinds,
        start,
        end,
        &headers,
        delimiter,
        &mut metadata,
    );

    let file_stem = stem(file_name);
    let pairs = layout.pairs(&used);
    check_limit(pairs.len(), MAX_SPECTRA, "spectra")?;
    check_limit(rows.len(), MAX_POINTS, "points in one spectrum")?;
    check_limit(
        pairs.len().saturating_mul(rows.len()),
        MAX_FILE_POINTS,
        "points in all",
    )?;
    let mut spectra = Vec::new();
    for (k, &(xc, yc)) in pairs.iter().enumerate() {
        let mut spectrum = column_pair(&rows, xc, yc);
        spectrum.name = headers.name(k, xc, yc, pairs.len(), &file_stem);
        spectrum.x_label = headers.column(xc).or_else(|| headers.fallback.clone());
        spectrum.y_label = headers.column(yc).or_else(|| headers.fallback.clone());
        spectrum.metadata = metadata.clone();
        if let Some(h) = headers.column(yc) {
            spectrum.metadata.insert("column header".into(), h);
        }
        if spectrum.x.len() < 2 {
            warnings.push(Warning::new(
                None,
                format!(
                    "column pair '{}' has fewer than two points and was left out",
                    spectrum.name
                ),
            ));
            continue;
        }
        spectra.push(spectrum);
    }
    if spectra.is_empty() {
        return Err(ImportError::NoData);
    }
    Ok(RawReport {
        format: "delimited text".into(),
        spectra,
        warnings,
    })
}

/// Half-open index ranges of consecutive data lines.
fn data_runs(kinds: &[Kind]) -> Vec<(usize, usize)> {
    let mut runs = Vec::new();
    let mut start = None;
    for (i, k) in kinds.iter().enumerate() {
        match (k, start) {
            (Kind::Data(_), None) => start = Some(i),
            (Kind::Data(_), Some(_)) | (_, None) => {}
            (_, Some(s)) => {
                runs.push((s, i));
                start = None;
            }
        }
    }
    if let Some(s) = start {
        runs.push((s, kinds.len()));
    }
    runs
}

/// A single text line directly between the table and another run of at least
/// two data rows is a broken row, not metadata.
fn check_text_inside_data(
    lines: &[(usize, &str)],
    kinds: &[Kind],
    runs: &[(usize, usize)],
    start: usize,
    end: usize,
    delimiter: Delimiter,
) -> Result<(), ImportError> {
    let run_at = |i: usize| {
        runs.iter()
            .find(|(s, e)| *s <= i && i < *e)
            .map(|(s, e)| e - s)
    };
    let broken = |i: usize, neighbour: Option<usize>| {
        matches!(kinds.get(i), Some(Kind::Other))
            && neighbour.and_then(run_at).is_some_and(|n| n >= 2)
    };
    let bad = if broken(end, end.checked_add(1)) {
        Some(end)
    } else if start >= 1 && broken(start - 1, start.checked_sub(2)) {
        Some(start - 1)
    } else {
        None
    };
    match bad.and_then(|i| lines.get(i)) {
        Some((line, text)) => {
            let shown: String = text.trim().chars().take(60).collect();
            Err(ImportError::Malformed {
                line: Some(*line),
                message: format!(
                    "expected numbers separated by {}, found '{shown}' between rows of data",
                    delimiter.describe()
                ),
            })
        }
        None => Ok(()),
    }
}

/// Column headers and sample names found above the table.
struct Headers {
    /// Cells of the header line just above the table, when it aligns with the columns.
    columns: Option<Vec<String>>,
    /// Cells of the sample-name line above the header (Cary), when present.
    names: Option<Vec<String>>,
    /// Text of the header lines, used to find units when no column header names them.
    fallback: Option<String>,
    /// File indices of the lines used as headers (not repeated as metadata).
    used_lines: Vec<usize>,
}

impl Headers {
    fn find(
        lines: &[(usize, &str)],
        kinds: &[Kind],
        start: usize,
        delimiter: Delimiter,
    ) -> Headers {
        let other = |i: usize| matches!(kinds.get(i), Some(Kind::Other));
        let cells = |i: usize| -> Vec<String> {
            lines.get(i).map_or_else(Vec::new, |(_, l)| {
                delimiter
                    .split(l)
                    .iter()
                    .map(|c| c.trim_matches('"').trim().to_string())
                    .collect()
            })
        };
        let mut headers = Headers {
            columns: None,
            names: None,
            fallback: None,
            used_lines: Vec::new(),
        };
        let before: Vec<&str> = (0..start)
            .filter(|&i| other(i))
            .filter_map(|i| lines.get(i).map(|(_, l)| *l))
            .collect();
        if !before.is_empty() {
            headers.fallback = Some(before.join(" "));
        }
        // A comment line ("# …", common practice in text data) names the
        // columns only when, without its marker, it has one cell per column.
        let width = match kinds.get(start) {
            Some(Kind::Data(c)) => c.len(),
            _ => 0,
        };
        let comment = |i: usize| {
            lines
                .get(i)
                .is_some_and(|(_, l)| l.trim_start().starts_with('#'))
        };
        if start >= 1 && other(start - 1) {
            let mut h = cells(start - 1);
            if comment(start - 1) {
                h[0] = h[0].trim_start_matches('#').trim().to_string();
                h.retain(|c| !c.is_empty());
            }
            if h.len() >= 2 && (!comment(start - 1) || h.len() == width) {
                headers.columns = Some(h);
                headers.used_lines.push(start - 1);
                if start >= 2 && other(start - 2) {
                    let n = cells(start - 2);
                    if n.len() >= 2 && n.iter().filter(|c| !c.is_empty()).count() >= 1 {
                        headers.names = Some(n);
                        headers.used_lines.push(start - 2);
                    }
                }
            }
        }
        headers
    }

    fn column(&self, c: usize) -> Option<String> {
        self.columns
            .as_ref()
            .and_then(|h| h.get(c))
            .filter(|s| !s.is_empty())
            .cloned()
    }

    fn is_x(&self, c: usize) -> bool {
        self.column(c).is_some_and(|h| {
            XUnit::detect(&h).is_some() || matches!(h.to_lowercase().as_str(), "x" | "energy")
        })
    }

    fn name(&self, k: usize, xc: usize, yc: usize, count: usize, stem: &str) -> String {
        // A label cell ("Sample", "Name:") over the x column names the cell
        // beside it: `Sample,QZ-2 in methanol` names the spectrum "QZ-2 in methanol".
        let from_names = self.names.as_ref().and_then(|n| {
            [xc, yc]
                .iter()
                .filter_map(|&c| n.get(c))
                .find(|s| !s.is_empty() && !is_name_label(s))
                .cloned()
        });
        if let Some(name) = from_names {
            return name;
        }
        let header = self
            .column(yc)
            .filter(|h| count > 1 || super::units::Quantity::detect(h).is_none());
        match (header, count) {
            (Some(h), _) => h,
            (None, 1) => stem.to_string(),
            (None, _) => format!("{stem} #{}", k + 1),
        }
    }
}

/// Whether a cell is the label of a name line ("Sample", "Sample name:",
/// "Name") rather than a name.
fn is_name_label(cell: &str) -> bool {
    let label = cell.trim().trim_end_matches(':').trim().to_lowercase();
    matches!(
        label.as_str(),
        "sample" | "sample name" | "sample id" | "name" | "samples"
    )
}

/// Which columns are x and which are y.
#[derive(Debug, PartialEq)]
enum Layout {
    /// x,y,x,y,… — every scan has its own grid (Cary).
    Pairs,
    /// x,y₁,y₂,… — one grid, several scans.
    SharedX,
}

impl Layout {
    fn choose(used: &[usize], rows: &[(usize, &[Cell])], headers: &Headers) -> Layout {
        if used.len() < 4 || used.len() % 2 == 1 {
            return Layout::SharedX;
        }
        if headers.columns.is_some() {
            let xs_even = used.iter().step_by(2).all(|&c| headers.is_x(c));
            let xs_odd = used.iter().skip(1).step_by(2).any(|&c| headers.is_x(c));
            if xs_even && !xs_odd {
                return Layout::Pairs;
            }
            if headers.is_x(used[0]) && used.iter().skip(1).any(|&c| !headers.is_x(c)) {
                return Layout::SharedX;
            }
        }
        // No telling header: pairs if every even column is a monotonic grid
        // overlapping the first column's range.
        let column = |c: usize| -> Vec<f64> {
            rows.iter()
                .filter_map(|(_, r)| match r.get(c) {
                    Some(Cell::Number(v)) => Some(*v),
                    _ => None,
                })
                .collect()
        };
        let first = column(used[0]);
        let (lo, hi) = range(&first);
        let grid_like = used.iter().step_by(2).all(|&c| {
            let v = column(c);
            let (a, b) = range(&v);
            monotonic(&v) && a <= hi && b >= lo
        });
        if grid_like {
            Layout::Pairs
        } else {
            Layout::SharedX
        }
    }

    fn pairs(&self, used: &[usize]) -> Vec<(usize, usize)> {
        match self {
            Layout::Pairs => used.chunks_exact(2).map(|p| (p[0], p[1])).collect(),
            Layout::SharedX => used.iter().skip(1).map(|&y| (used[0], y)).collect(),
        }
    }
}

fn range(v: &[f64]) -> (f64, f64) {
    v.iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
            (a.min(x), b.max(x))
        })
}

fn monotonic(v: &[f64]) -> bool {
    v.len() >= 2 && (v.windows(2).all(|w| w[1] > w[0]) || v.windows(2).all(|w| w[1] < w[0]))
}

/// Reads one (x, y) column pair; rows with a missing x or y are counted and skipped.
fn column_pair(rows: &[(usize, &[Cell])], xc: usize, yc: usize) -> RawSpectrum {
    let mut spectrum = RawSpectrum::default();
    let mut skipped = 0usize;
    let mut first_skipped = None;
    for &(line, cells) in rows {
        let x = cells.get(xc).copied().unwrap_or(Cell::Empty);
        let y = cells.get(yc).copied().unwrap_or(Cell::Empty);
        match (x, y) {
            (Cell::Number(x), Cell::Number(y)) => {
                spectrum.x.push(x);
                spectrum.y.push(y);
                spectrum.lines.push(line);
            }
            (Cell::Empty, Cell::Empty) => {}
            _ => {
                skipped += 1;
                first_skipped.get_or_insert(line);
            }
        }
    }
    if skipped > 0 {
        spectrum.warnings.push(Warning::new(
            first_skipped,
            format!("{skipped} rows with a missing, empty or NaN value were skipped (the first is on this line)"),
        ));
    }
    spectrum
}

/// Keeps every non-blank line outside the table (except the headers) as key → value.
fn collect_metadata(
    lines: &[(usize, &str)],
    kinds: &[Kind],
    start: usize,
    end: usize,
    headers: &Headers,
    delimiter: Delimiter,
    metadata: &mut BTreeMap<String, String>,
) {
    for (i, (line, text)) in lines.iter().enumerate() {
        if (start..end).contains(&i) || headers.used_lines.contains(&i) {
            continue;
        }
        if matches!(kinds.get(i), Some(Kind::Blank)) {
            continue;
        }
        let trimmed = text.trim();
        let (key, value) = if let Some((k, v)) = trimmed.split_once(':') {
            (k.trim().to_string(), v.trim().to_string())
        } else if let Some((k, v)) = trimmed.split_once('=') {
            (k.trim().to_string(), v.trim().to_string())
        } else {
            let cells = delimiter.split(trimmed);
            let key = cells
                .first()
                .map(|s| s.trim_matches('"').to_string())
                .unwrap_or_default();
            let rest: Vec<&str> = cells
                .iter()
                .skip(1)
                .copied()
                .filter(|c| !c.is_empty())
                .collect();
            (key, rest.join(", "))
        };
        let key = if key.is_empty() {
            format!("line {line}")
        } else {
            key
        };
        let key = if metadata.contains_key(&key) {
            format!("{key} (line {line})")
        } else {
            key
        };
        metadata.insert(key, value);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_and_sniffing() {
        assert_eq!(cell("0,5", true), Cell::Number(0.5));
        assert_eq!(cell("0,5", false), Cell::Text);
        assert_eq!(cell("NaN", false), Cell::Missing);
        assert_eq!(cell("inf", false), Cell::Missing);
        let lines: Vec<(usize, &str)> = vec![(1, "400,5;0,12"), (2, "401,5;0,13")];
        assert_eq!(sniff(&lines), (Delimiter::Semicolon, true));
        let lines: Vec<(usize, &str)> = vec![(1, "400.5\t0.12"), (2, "401\t0.13")];
        assert_eq!(sniff(&lines), (Delimiter::Tab, false));
        let lines: Vec<(usize, &str)> = vec![(1, "400.5, 0.12"), (2, "401, 0.13")];
        assert_eq!(sniff(&lines), (Delimiter::Comma, false));
        let lines: Vec<(usize, &str)> = vec![(1, "  400.5   0.12"), (2, "401 0.13")];
        assert_eq!(sniff(&lines), (Delimiter::Whitespace, false));
    }

    #[test]
    fn a_sample_label_row_names_the_spectrum_by_the_cell_beside_it() {
        let text = "Sample,QZ-2 in methanol\nWavelength (nm),Abs\n400,0.10\n401,0.12\n402,0.11\n";
        let report = read(text, "run 3.csv").expect("a two-column table");
        assert_eq!(report.spectra.len(), 1);
        assert_eq!(report.spectra[0].name, "QZ-2 in methanol");
        let labelled = "Sample name:,QZ-3\nWavelength (nm),Abs\n400,0.10\n401,0.12\n402,0.11\n";
        assert_eq!(read(labelled, "run 4.csv").unwrap().spectra[0].name, "QZ-3");
    }

    #[test]
    fn a_cary_name_line_still_names_each_column_pair() {
        let text = "CrA,,CrB,\nWavelength (nm),Abs,Wavelength (nm),Abs\n400,0.1,400,0.2\n401,0.1,401,0.2\n402,0.1,402,0.2\n";
        let names: Vec<String> = read(text, "cary.csv")
            .unwrap()
            .spectra
            .into_iter()
            .map(|s| s.name)
            .collect();
        assert_eq!(names, ["CrA", "CrB"]);
    }

    #[test]
    fn stems() {
        assert_eq!(stem("/data/CrCl3 run.csv"), "CrCl3 run");
        assert_eq!(stem(""), "spectrum");
    }
}
