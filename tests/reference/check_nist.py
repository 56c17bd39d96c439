#!/usr/bin/env python3
"""NIST StRD nonlinear regression check of the ddlens least-squares solver.

Outside source: NIST Statistical Reference Datasets (public domain), the .dat
files shipped in the lmfit 1.3.4 sdist (folder NIST_STRD/), fetched with
`pip download --no-deps --no-binary :all: lmfit==1.3.4` into $DDLENS_CACHE.
The Rust test tests/bands_nist.rs parses each file, fits from both NIST
starting points and compares certified parameters (>= 6 digits) and
standard deviations (>= 4 digits); this script runs it, shows its table and
asserts that it really ran (not skipped) and covered enough problems.
"""
import os, subprocess, sys, tarfile, pathlib

cache = pathlib.Path(os.environ.get("DDLENS_CACHE", "/tmp/ddlens-cache"))
cache.mkdir(parents=True, exist_ok=True)
sdist = cache / "lmfit-1.3.4.tar.gz"
if not sdist.exists():
    subprocess.run([sys.executable, "-m", "pip", "download", "--no-deps", "--no-binary", ":all:",
                    "-d", str(cache), "lmfit==1.3.4"], check=True)
unpacked = cache / "lmfit-1.3.4"
if not unpacked.exists():
    with tarfile.open(sdist) as tar:
        tar.extractall(cache, filter="data")
nist_dir = unpacked / "NIST_STRD"
env = dict(os.environ, DDLENS_NIST_DIR=str(nist_dir))
root = pathlib.Path(__file__).resolve().parents[2]
out = subprocess.run(["cargo", "test", "--quiet", "--test", "bands_nist", "--", "--ignored", "--nocapture"],
                     cwd=root, env=env, capture_output=True, text=True)
print(out.stdout)
lines = out.stdout.splitlines()
summary = [l for l in lines if l.endswith("failed") and "passed" in l and l[0].isdigit()]
rows = [l for l in lines if l.endswith(" pass") or l.endswith(" FAIL") or l.endswith(" hard")]
ok = (out.returncode == 0 and "1 passed" in out.stdout and len(summary) == 1
      and any(l.startswith("Gauss3") for l in rows) and len(rows) >= 16)
passed = sum(1 for l in rows if l.endswith(" pass"))
failed = len(rows) - passed - sum(1 for l in rows if l.endswith(" hard"))
if not ok:
    print(out.stderr[-3000:])
    failed = max(failed, 1)
print(f"{passed} passed, {failed} failed")
sys.exit(0 if failed == 0 else 1)
