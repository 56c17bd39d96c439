//! Import benchmark: a 100 000-point DIF/DUP-compressed JCAMP-DX file and a
//! 100 000-line CSV, both generated in memory (a synthetic band on a slope).
//! Prints one JSON line per case: {"group","impl","median_us","runs"}.
//! Run: `cargo run --release --example bench_import`.

use ddlens::spectrum::{import, ImportOptions};
use std::fmt::Write as _;
use std::time::Instant;

const POINTS: usize = 100_000;

/// Ordinates as integers: a Gaussian band plus a slope, so DIF steps stay small.
fn ordinates() -> Vec<i64> {
    (0..POINTS)
        .map(|i| {
            let t = (i as f64 - 40_000.0) / 9_000.0;
            (20_000.0 * (-0.5 * t * t).exp() + 0.01 * i as f64).round() as i64
        })
        .collect()
}

fn sqz(v: i64) -> String {
    let digits = v.unsigned_abs().to_string();
    let first = digits.as_bytes()[0] - b'0';
    let lead = if v < 0 {
        (b'a' + first - 1) as char
    } else if first == 0 {
        '@'
    } else {
        (b'A' + first - 1) as char
    };
    format!("{lead}{}", &digits[1..])
}

fn dif(d: i64) -> String {
    let digits = d.unsigned_abs().to_string();
    let first = digits.as_bytes()[0] - b'0';
    let lead = match d.cmp(&0) {
        std::cmp::Ordering::Equal => '%',
        std::cmp::Ordering::Less => (b'j' + first - 1) as char,
        std::cmp::Ordering::Greater => (b'J' + first - 1) as char,
    };
    format!("{lead}{}", &digits[1..])
}

/// DIF-compressed JCAMP-DX with Y checkpoints, 10 ordinates per line.
fn jcamp() -> Vec<u8> {
    let y = ordinates();
    let mut out = format!(
        "##TITLE=bench\n##JCAMP-DX=5.01\n##DATA TYPE=UV/VIS SPECTRUM\n##XUNITS=NANOMETERS\n##YUNITS=ABSORBANCE\n\
##XFACTOR=0.01\n##YFACTOR=0.0001\n##FIRSTX=30000\n##LASTX={}\n##NPOINTS={POINTS}\n##XYDATA=(X++(Y..Y))\n",
        30_000 + (POINTS - 1)
    );
    let mut i = 0;
    while i < POINTS {
        let end = (i + 10).min(POINTS);
        // Each line after the first starts with the previous line's last value (the checkpoint).
        let start = if i == 0 { 0 } else { i - 1 };
        let _ = write!(out, "{}{}", (30_000 + start) * 100, sqz(y[start]));
        for k in start + 1..end {
            out.push_str(&dif(y[k] - y[k - 1]));
        }
        out.push('\n');
        i = end;
    }
    out.push_str("##END=\n");
    out.into_bytes()
}

fn csv() -> Vec<u8> {
    let y = ordinates();
    let mut out = String::from("Wavelength (nm),Abs\n");
    for (i, v) in y.iter().enumerate() {
        let _ = writeln!(
            out,
            "{:.4},{:.6}",
            300.0 + i as f64 * 0.01,
            *v as f64 * 1e-4
        );
    }
    out.into_bytes()
}

fn bench(group: &str, bytes: &[u8], name: &str, runs: usize) {
    let opts = ImportOptions::default();
    let mut times = Vec::with_capacity(runs);
    for _ in 0..runs {
        let start = Instant::now();
        let report = import(bytes, name, &opts).expect("benchmark input imports");
        assert_eq!(report.spectra[0].wavenumber.len(), POINTS);
        times.push(start.elapsed().as_secs_f64() * 1e6);
    }
    times.sort_by(f64::total_cmp);
    let median = times[runs / 2];
    println!(
        "{{\"group\":\"{group}\",\"impl\":\"ddlens\",\"median_us\":{median:.1},\"runs\":{runs}}}"
    );
}

fn main() {
    bench("import 100k JCAMP DIF", &jcamp(), "bench.jdx", 21);
    bench("import 100k CSV", &csv(), "bench.csv", 21);
}
