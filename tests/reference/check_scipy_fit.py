#!/usr/bin/env python3
"""Band fits of `ddlens deconvolve` against scipy.optimize.least_squares.

Outside reference: SciPy least_squares (MINPACK lm) on the same synthetic
spectra (Gaussians + linear baseline + seeded noise, generated here), started
independently near the truth. Both must reach the same minimum: χ² to 1e-6
relative and band parameters to 1e-5 relative (or 1e-3 of their σ).
Needs DDLENS_BIN (the built ddlens binary).
"""
import json, os, subprocess, sys, tempfile
import numpy as np
from scipy.optimize import least_squares

BIN = os.environ.get("DDLENS_BIN", "target/debug/ddlens")
K = 4 * np.log(2)
CASES = [
    ("two separated", [(14000, 3000, 0.7), (22000, 3500, 0.4)], 0.004),
    ("three overlapping", [(13500, 2600, 0.5), (17000, 3000, 0.9), (21500, 3800, 0.45)], 0.003),
    ("four in epsilon units", [(11000, 2500, 8.0), (15500, 2800, 20.0), (19500, 3000, 14.0), (25000, 4000, 30.0)], 0.2),
]
rng = np.random.default_rng(7)
passed = failed = 0
for name, truth, noise in CASES:
    x = np.linspace(8000, 30000, 1200)
    y = sum(h * np.exp(-K * (x - c) ** 2 / w ** 2) for c, w, h in truth) + 0.02 * truth[0][2] + 2e-6 * (x - 8000) * truth[0][2]
    y = y + rng.normal(0, noise, x.size)
    with tempfile.NamedTemporaryFile("w", suffix=".txt", delete=False) as f:
        for a, b in zip(x, y):
            f.write(f"{a:.6f} {b:.10e}\n")
        path = f.name
    out = subprocess.run([BIN, "deconvolve", path, "--bands", str(len(truth)), "--json"], capture_output=True, text=True)
    os.unlink(path)
    if out.returncode != 0:
        print(f"FAIL {name}: ddlens exited {out.returncode}: {out.stderr.strip()}")
        failed += 1
        continue
    doc = json.loads(out.stdout)
    n = len(truth)
    t = (x - 0.5 * (x.min() + x.max())) / (0.5 * (x.max() - x.min()))
    # ddlens weights each point by its share of the wavenumber axis (trapezoid
    # weights, mean 1; src/analysis/mod.rs): on this even grid the two end points get ½.
    wt = np.r_[0.5 * (x[1] - x[0]), 0.5 * (x[2:] - x[:-2]), 0.5 * (x[-1] - x[-2])]
    wt = wt / wt.mean()
    sw = np.sqrt(wt)
    def resid(p):
        f = p[3 * n] + p[3 * n + 1] * t
        for k in range(n):
            c, w, h = p[3 * k:3 * k + 3]
            f = f + h * np.exp(-K * (x - c) ** 2 / w ** 2)
        return sw * (f - y)
    p0 = []
    for c, w, h in truth:
        p0 += [c * 1.01, w * 1.1, h * 0.9]
    r = least_squares(resid, np.array(p0 + [0.0, 0.0]), method="lm", xtol=1e-15, ftol=1e-15, gtol=1e-15)
    chi2_scipy = float(np.sum(r.fun ** 2))
    chi2_ddlens = doc["statistics"]["chi2"]
    rel = abs(chi2_ddlens - chi2_scipy) / chi2_scipy
    ok = rel < 1e-6
    worst = 0.0
    for k, band in enumerate(sorted(doc["bands"], key=lambda b: b["centre"]["value"])):
        for j, key in enumerate(("centre", "fwhm", "height")):
            v, s = band[key]["value"], band[key]["sigma"] or 0.0
            ref = r.x[3 * k + j]
            dev = abs(v - ref)
            good = dev <= 1e-5 * abs(ref) or (s > 0 and dev <= 1e-3 * s)
            worst = max(worst, dev / abs(ref))
            ok = ok and good
    print(f"{'pass' if ok else 'FAIL'} {name}: chi2 ddlens {chi2_ddlens:.10e} scipy {chi2_scipy:.10e} (rel {rel:.1e}), worst parameter rel dev {worst:.1e}")
    passed += ok
    failed += not ok
print(f"{passed} passed, {failed} failed")
sys.exit(0 if failed == 0 else 1)
