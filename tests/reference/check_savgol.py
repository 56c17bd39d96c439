#!/usr/bin/env python3
"""Savitzky–Golay coefficients of ddlens against scipy.signal.savgol_coeffs.

Outside source: SciPy's savgol_coeffs (scipy.signal), use="dot" (correlation order), delta=1.
ddlens side: the hidden option `$DDLENS_BIN import --savgol-coeffs W,O,D --json`.
Tolerance 1e-9 absolute on each coefficient. Where SciPy and ddlens differ by more, the exact
rational least-squares solution (SymPy, row `deriv` of (AᵀA)⁻¹Aᵀ times deriv!) decides: ddlens must be
within 1e-12 of it (SciPy's lstsq on unscaled positions loses digits for wide windows, e.g. (51,6,0)). Last line "N passed, M failed"; exit 1 on failure.
"""
import json, os, subprocess, sys
from scipy.signal import savgol_coeffs

BIN = os.environ.get("DDLENS_BIN", "target/debug/ddlens")
table = [(w, o, d) for w in (3, 5, 7, 9, 11, 15, 21, 31, 51) for o in (0, 1, 2, 3, 4, 5, 6) for d in (0, 1, 2, 3)
         if o < w and d <= o]
def exact_error(w, o, d, ours):
    import sympy as sp
    h = w // 2
    A = sp.Matrix(w, o + 1, lambda j, k: sp.Integer(j - h) ** k)
    row = ((A.T * A).inv() * A.T).row(d) * sp.factorial(d)
    return max(abs(float(v) - c) for v, c in zip(row, ours))


passed = failed = 0
worst = 0.0
for w, o, d in table:
    out = subprocess.run([BIN, "import", "--savgol-coeffs", f"{w},{o},{d}", "--json"], capture_output=True, text=True)
    if out.returncode != 0:
        failed += 1; print(f"({w},{o},{d}) FAILED: {out.stderr.strip()}"); continue
    ours = json.loads(out.stdout)["coefficients"]
    ref = savgol_coeffs(w, o, deriv=d, use="dot")
    err = max(abs(a - b) for a, b in zip(ours, ref)) if len(ours) == len(ref) else float("inf")
    if err <= 1e-9:
        passed += 1
    elif exact_error(w, o, d, ours) <= 1e-12:
        passed += 1
        print(f"({w},{o},{d}) SciPy differs by {err:.2e}; ddlens matches the exact rational solution")
    else:
        failed += 1; print(f"({w},{o},{d}) max difference {err:.3e}")
print(f"compared {len(table)} (window, order, deriv) cases with scipy.signal.savgol_coeffs; each within 1e-9 (or exact)")
print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
