#!/usr/bin/env bash
# Runs every benchmark (examples/bench_*.rs natively, bench/*.py for the
# side-by-side references) and prints one table of medians, with each row's
# ratio to the first implementation of its group. Each program prints JSON
# lines: {"group": …, "impl": …, "median_us": …, "runs": …}.
#
# `BASE=REV bash scripts/bench.sh` (or `make bench BASE=REV`) also builds the
# benchmarks of commit REV in a scratch worktree and runs the two trees in
# turn, program by program, in the same run; the table then shows each row
# before and after with the ratio after/before. The Python references run once.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$PWD
out=$(mktemp)
base_out=$(mktemp)
shopt -s nullglob

base_dir=""
if [ -n "${BASE:-}" ]; then
  base_dir=$(mktemp -d)
  git worktree add --quiet --detach "$base_dir" "$BASE"
  trap 'git -C "$root" worktree remove --force "$base_dir"; rm -f "$out" "$base_out"' EXIT
  echo "building the benchmarks of $BASE" >&2
  (cd "$base_dir" && CARGO_TARGET_DIR="$root/target/bench-base" cargo build --quiet --release --examples)
else
  trap 'rm -f "$out" "$base_out"' EXIT
fi
cargo build --quiet --release --examples

for b in examples/bench_*.rs; do
  name=$(basename "$b" .rs)
  if [ -n "$base_dir" ] && [ -f "$base_dir/examples/$name.rs" ]; then
    echo "running $name ($BASE)" >&2
    (cd "$base_dir" && "$root/target/bench-base/release/examples/$name") | grep '^{' >> "$base_out" || echo "bench $name ($BASE) failed" >&2
  fi
  echo "running $name" >&2
  "target/release/examples/$name" | grep '^{' >> "$out" || echo "bench $name failed" >&2
done
for p in bench/*.py; do
  echo "running $p" >&2
  OPENBLAS_NUM_THREADS=1 python3 "$p" | grep '^{' >> "$out" || echo "bench $p failed" >&2
done
python3 - "$out" "$base_out" <<'PY'
import json, sys
def read(path):
    return [json.loads(l) for l in open(path) if l.strip()]
rows, base = read(sys.argv[1]), read(sys.argv[2])
before = {(r["group"], r["impl"]): r["median_us"] for r in base}
def t(us):
    return f"{us/1000:.3f} ms" if us >= 1000 else f"{us:.2f} µs"
first = {}
head = f"{'group':42} {'implementation':28} {'median':>12} {'runs':>7} {'ratio':>8}"
if before:
    head += f" {'before':>12} {'after/before':>13}"
print(head)
for r in rows:
    g = r["group"]; first.setdefault(g, r["median_us"])
    ratio = r["median_us"] / first[g] if first[g] else float("nan")
    line = f"{g:42} {r['impl']:28} {t(r['median_us']):>12} {r.get('runs', ''):>7} {ratio:>7.2f}×"
    b = before.get((g, r["impl"]))
    if before:
        line += f" {t(b):>12} {r['median_us'] / b:>12.2f}×" if b else f" {'—':>12} {'new':>13}"
    print(line)
for (g, i), us in before.items():
    if not any(r["group"] == g and r["impl"] == i for r in rows):
        print(f"{g:42} {i:28} {'—':>12} {'':>7} {'':>8} {t(us):>12} {'gone':>13}")
PY
