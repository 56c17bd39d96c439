"""Compare ddlens c^k(m, m') with SymPy's Gaunt coefficients.

Source: sympy.physics.wigner.gaunt (exact Gaunt integrals of three spherical
harmonics). c^k(m, m') = sqrt(4π/(2k+1)) ∫ Y*_{2m} Y_{k,m-m'} Y_{2m'} dΩ and
Y*_{2m} = (-1)^m Y_{2,-m} (Condon & Shortley 1935).
Env: DDLENS_BIN = the ddlens binary. Prints "N passed, M failed".
"""
import json
import os
import subprocess
import sys

from sympy import pi, sqrt
from sympy.physics.wigner import gaunt

out = subprocess.run([os.environ["DDLENS_BIN"], "levels", "--dump-ck", "--json"],
                     check=True, capture_output=True, text=True).stdout
rows = json.loads(out)["ck"]
passed = failed = 0
for r in rows:
    k, m, mp, value = r["k"], r["m"], r["m_prime"], r["value"]
    ref = (-1) ** m * sqrt(4 * pi / (2 * k + 1)) * gaunt(2, k, 2, -m, m - mp, mp)
    ref = float(ref)
    if abs(ref - value) < 1e-12:
        passed += 1
    else:
        failed += 1
        print(f"c^{k}({m},{mp}): ddlens {value}, sympy {ref}")
print(f"compared {len(rows)} c^k(m, m') values with sympy.physics.wigner.gaunt")
print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
