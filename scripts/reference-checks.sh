#!/usr/bin/env bash
# Runs every comparison against an outside reference (tests/reference/check_*.py):
# SymPy's Wigner symbols, SciPy's solvers and filters, the NIST StRD problems in
# the lmfit sdist and the JCAMP-DX files in the jcamp sdist (fetched into
# .cache/ by the scripts, never committed).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --quiet --bin ddlens
export DDLENS_BIN="$PWD/target/debug/ddlens" DDLENS_CACHE="$PWD/.cache/reference"
mkdir -p "$DDLENS_CACHE"
shopt -s nullglob
pass=0; fail=0
for check in tests/reference/check_*.py; do
  echo "== $check"
  if python3 "$check"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "FAILED: $check"; fi
done
echo "reference checks: $pass passed, $fail failed"
[ "$fail" -eq 0 ]
