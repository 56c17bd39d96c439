//! Benchmark of the ligand-field engine: one d⁵ evaluation with the blocked
//! model against a plain diagonalisation of the full 252×252 matrix at the same
//! point, a whole d⁵ diagram of 400 points, and with spin–orbit coupling: d⁵
//! levels against the dense 252×252 complex matrix, a d⁸ diagram of 200 points
//! and a tetragonal d⁵ point. Prints one JSON line per case.

use ddlens::ligand_field::{
    diagram, full_matrices, full_site_matrix, model, site_levels, spin_change, Geometry, Params,
    Site,
};
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
    spin_orbit(&p);
}

fn spin_orbit(p: &Params) {
    let zeta = 347.0;
    let site = Site::Cubic {
        geometry: Geometry::Octahedral,
        dq: p.dq,
    };
    let runs = 50;
    let t = median_us(runs, || {
        std::hint::black_box(site_levels(5, &site, p.b, p.c, zeta).ok());
    });
    report("d5 levels with ζ", "blocked, labelled", runs, t);
    let dense = full_site_matrix(5, &site, p.b, p.c, zeta).expect("d5 dense matrix");
    let t = median_us(10, || {
        std::hint::black_box(dense.clone().symmetric_eigenvalues());
    });
    report("d5 levels with ζ", "full 252x252 complex", 10, t);
    let tetragonal = Site::Tetragonal {
        dq: p.dq,
        ds: 300.0,
        dt: 100.0,
    };
    let t = median_us(runs, || {
        std::hint::black_box(site_levels(5, &tetragonal, p.b, p.c, 0.0).ok());
    });
    report("d5 tetragonal levels", "sectors, labelled", runs, t);
    let t = median_us(5, || {
        for i in 0..200 {
            let site = Site::Cubic {
                geometry: Geometry::Octahedral,
                dq: 3600.0 * f64::from(i) / 199.0,
            };
            std::hint::black_box(site_levels(8, &site, 900.0, 4.0 * 900.0, 649.0).ok());
        }
    });
    report("d8 diagram 200 points with ζ", "blocked, labelled", 5, t);
}
