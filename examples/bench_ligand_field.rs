//! Benchmark of the ligand-field engine: one d⁵ evaluation with the blocked
//! model against a plain diagonalisation of the full 252×252 matrix at the same
//! point, and a whole d⁵ diagram of 400 points. Prints one JSON line per case.

use ddlens::ligand_field::{diagram, full_matrices, model, spin_change, Geometry, Params};
use std::time::Instant;

fn median_us(runs: usize, mut work: impl FnMut()) -> f64 {
    let mut times: Vec<f64> = (0..runs)
        .map(|_| {
            let start = Instant::now();
            work();
            start.elapsed().as_secs_f64() * 1e6
        })
        .collect();
    times.sort_by(f64::total_cmp);
    times[times.len() / 2]
}

fn report(group: &str, implementation: &str, runs: usize, median: f64) {
    println!(
        "{}",
        serde_json::json!({"group": group, "impl": implementation, "median_us": median, "runs": runs})
    );
}

fn main() {
    let p = Params {
        dq: 850.0,
        b: 670.0,
        c: 3850.0,
    };
    let m = model(5, Geometry::Octahedral).expect("d5 model");
    let [v, kb, kc] = full_matrices(5, Geometry::Octahedral).expect("d5 matrices");
    let runs = 200;
    let t = median_us(runs, || {
        std::hint::black_box(m.levels(&p).ok());
    });
    report("d5 levels", "blocked", runs, t);
    let t = median_us(runs, || {
        std::hint::black_box(m.block_energies(&p));
    });
    report("d5 levels", "blocked energies only", runs, t);
    let t = median_us(20, || {
        let h = &v * p.dq + &kb * p.b + &kc * p.c;
        std::hint::black_box(h.symmetric_eigenvalues());
    });
    report("d5 levels", "full 252x252", 20, t);
    let t = median_us(20, || {
        std::hint::black_box(diagram(5, Geometry::Octahedral, 4.477, 40.0, 400).ok());
    });
    report("d5 diagram 400 points", "blocked", 20, t);
    // The spin-change scan on its own: what a diagram saves by bracketing the
    // crossing from its own grid.
    let t = median_us(20, || {
        std::hint::black_box(spin_change(5, Geometry::Octahedral, 4.477).ok());
    });
    report("d5 spin change", "0.25-step scan", 20, t);
}
