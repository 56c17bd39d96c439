#!/usr/bin/env python3
"""SciPy reference timing for `deconvolve 2000 pts × 5 Gaussians`.

Same data (fixtures/bands/five_gaussians_2000.txt) and same start as
examples/bench_bands.rs; scipy.optimize.least_squares with an analytic
Jacobian, methods trf and lm, single-threaded BLAS. `--write-fixture`
regenerates the data file from the fixed seed.
"""
import os
os.environ["OPENBLAS_NUM_THREADS"] = "1"
import json, pathlib, sys, time
import numpy as np
from scipy.optimize import least_squares

FIX = pathlib.Path(__file__).resolve().parents[1] / "fixtures/bands/five_gaussians_2000.txt"
TRUTH = [(12500, 2400, 0.35), (15800, 3000, 0.8), (19000, 2600, 0.5), (23500, 4200, 0.65), (27000, 3000, 0.3)]
K = 4 * np.log(2)

def write_fixture():
    rng = np.random.default_rng(20261202)
    x = np.linspace(9000, 30000, 2000)
    y = sum(h * np.exp(-K * (x - c) ** 2 / w ** 2) for c, w, h in TRUTH) + 0.05 + 1e-6 * (x - 9000)
    y = y + rng.normal(0, 0.005, x.size)
    with open(FIX, "w") as f:
        f.write("# synthetic: 5 Gaussians + linear baseline, noise 0.005, seed 20261202 (bench/bands_scipy.py --write-fixture)\n")
        for a, b in zip(x, y):
            f.write(f"{a:.6f} {b:.8f}\n")

def main():
    if "--write-fixture" in sys.argv:
        write_fixture()
    x, y = np.loadtxt(FIX, comments="#", unpack=True)
    mid, half = 0.5 * (x.min() + x.max()), 0.5 * (x.max() - x.min())
    t = (x - mid) / half
    def resid(p):
        f = p[15] + p[16] * t
        for k in range(5):
            c, w, h = p[3 * k:3 * k + 3]
            f = f + h * np.exp(-K * (x - c) ** 2 / w ** 2)
        return f - y
    def jac(p):
        J = np.empty((x.size, 17))
        for k in range(5):
            c, w, h = p[3 * k:3 * k + 3]
            e = np.exp(-K * (x - c) ** 2 / w ** 2)
            J[:, 3 * k] = h * e * 2 * K * (x - c) / w ** 2
            J[:, 3 * k + 1] = h * e * 2 * K * (x - c) ** 2 / w ** 3
            J[:, 3 * k + 2] = e
        J[:, 15] = 1.0
        J[:, 16] = t
        return J
    signs = [1, -1, 1, -1, 1]
    p0 = []
    for (c, w, h), s in zip(TRUTH, signs):
        p0 += [c * (1 + 0.03 * s), w * 1.3, h * 1.4]
    p0 = np.array(p0 + [0.0, 0.0])
    for method in ("trf", "lm"):
        runs = 30
        times = []
        for _ in range(runs):
            t0 = time.perf_counter()
            r = least_squares(resid, p0, jac=jac, method=method)
            times.append((time.perf_counter() - t0) * 1e6)
        print(f"chi2 = {2 * r.cost:.8e} nfev = {r.nfev}", file=sys.stderr)
        print(json.dumps({"group": "deconvolve 2000 pts × 5 Gaussians", "impl": f"scipy least_squares {method}",
                          "median_us": round(float(np.median(times)), 1), "runs": runs}, ensure_ascii=False))

main()
