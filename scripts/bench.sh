#!/usr/bin/env bash
# Runs every benchmark (examples/bench_*.rs natively, bench/*.py for the
# side-by-side references) and prints one table of medians, with each row's
# ratio to the first implementation of its group. Each program prints JSON
# lines: {"group": …, "impl": …, "median_us": …, "runs": …}.
set -euo pipefail
cd "$(dirname "$0")/.."
out=$(mktemp)
shopt -s nullglob
for b in examples/bench_*.rs; do
  name=$(basename "$b" .rs)
  echo "running $name" >&2
  cargo run --quiet --release --example "$name" | grep '^{' >> "$out" || echo "bench $name failed" >&2
done
for p in bench/*.py; do
  echo "running $p" >&2
  OPENBLAS_NUM_THREADS=1 python3 "$p" | grep '^{' >> "$out" || echo "bench $p failed" >&2
done
python3 - "$out" <<'PY'
import json, sys
rows = [json.loads(l) for l in open(sys.argv[1]) if l.strip()]
first = {}
print(f"{'group':42} {'implementation':28} {'median':>12} {'runs':>7} {'ratio':>8}")
for r in rows:
    g = r["group"]; first.setdefault(g, r["median_us"])
    ratio = r["median_us"] / first[g] if first[g] else float("nan")
    us = r["median_us"]
    t = f"{us/1000:.3f} ms" if us >= 1000 else f"{us:.2f} µs"
    print(f"{g:42} {r['impl']:28} {t:>12} {r.get('runs', ''):>7} {ratio:>7.2f}×")
PY
rm -f "$out"
