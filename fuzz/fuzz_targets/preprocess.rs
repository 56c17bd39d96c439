//! Bytes as a preprocessing request: the first bytes choose the step and its parameters
//! (window, order, λ, crop window), the rest are (x, y) pairs of little-endian f64. The
//! x values are sorted and deduplicated, as import leaves them; y is taken as it comes
//! (NaN and ±inf included). `baseline`, `savgol` and `crop` must return, never panic.
#![no_main]
use ddlens::preprocess::{self, BaselineMethod};
use ddlens::spectrum::{Quantity, Spectrum, XUnit};
use libfuzzer_sys::fuzz_target;

fn word(data: &[u8], at: usize) -> u64 {
    let mut b = [0u8; 8];
    for (i, v) in data.iter().skip(at).take(8).enumerate() {
        b[i] = *v;
    }
    u64::from_le_bytes(b)
}

fuzz_target!(|data: &[u8]| {
    if data.len() < 24 {
        return;
    }
    let (step, a, b) = (data[0], word(data, 1), word(data, 9));
    let numbers: Vec<f64> = data[17..]
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap_or([0; 8])))
        .collect();
    let mut points: Vec<(f64, f64)> = numbers.chunks_exact(2).map(|p| (p[0], p[1])).collect();
    points.retain(|p| p.0.is_finite());
    points.sort_by(|p, q| p.0.total_cmp(&q.0));
    points.dedup_by(|p, q| p.0 == q.0);
    let x: Vec<f64> = points.iter().map(|p| p.0).collect();
    let y: Vec<f64> = points.iter().map(|p| p.1).collect();
    let real = |w: u64| f64::from_bits(w);
    let method = match step % 6 {
        0 => BaselineMethod::Polynomial {
            order: a as usize,
            regions: vec![[real(b), real(b.rotate_left(32))]],
        },
        1 => BaselineMethod::Asls {
            lambda: real(a),
            p: real(b),
        },
        2 => BaselineMethod::Arpls { lambda: real(a) },
        3 => BaselineMethod::RubberBand,
        4 => BaselineMethod::Scattering {
            exponent: (b % 2 == 0).then(|| real(a)),
        },
        _ => {
            let _ = preprocess::savgol(&y, a as usize, (b & 0xff) as usize, ((b >> 8) & 3) as usize);
            let s = Spectrum {
                name: "fuzz".into(),
                wavenumber: x,
                values: y,
                quantity: Quantity::Absorbance,
                x_unit_read: XUnit::Wavenumber,
                saturated: vec![[real(a), real(b)]],
                metadata: Default::default(),
                warnings: vec![],
            };
            let _ = preprocess::crop(&s, real(a), real(b));
            return;
        }
    };
    let _ = preprocess::baseline(&x, &y, &method);
});
