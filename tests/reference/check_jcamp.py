#!/usr/bin/env python3
"""Compare ddlens's JCAMP-DX reader with the files and the reader of the `jcamp` package.

Outside source: the jcamp sdist 1.3.2 on PyPI (N. Hagen, MIT licence), fetched into $DDLENS_CACHE
with `pip download --no-deps --no-binary :all: jcamp==1.3.2`. For every .jdx/.dx file in its data folders:
  * `$DDLENS_BIN import FILE --raw --json` must not crash (exit 0 or a refusal with a message);
  * for (X++(Y..Y)) data: point count == ##NPOINTS, first/last x == ##FIRSTX/##LASTX (1e-9 relative);
  * y equal to jcamp.readfile's y to 1e-9 relative wherever that reader's own count equals ##NPOINTS
    (where it does not, the package's reader disagrees with the file's NPOINTS; reported, not compared).
Refusals are listed with their message and counted separately from failures.
Last line: "N passed, M failed"; exit 1 on any failure.
"""
import glob, json, os, subprocess, sys, tarfile, io, contextlib

import numpy as np

BIN = os.environ.get("DDLENS_BIN", "target/debug/ddlens")
CACHE = os.environ.get("DDLENS_CACHE", "/tmp/ddlens-cache")
os.makedirs(CACHE, exist_ok=True)
sdist = os.path.join(CACHE, "jcamp-1.3.2.tar.gz")
if not os.path.exists(sdist):
    subprocess.run([sys.executable, "-m", "pip", "download", "--no-deps", "--no-binary", ":all:",
                    "-d", CACHE, "jcamp==1.3.2"], check=True)
root = os.path.join(CACHE, "jcamp-1.3.2")
if not os.path.isdir(root):
    with tarfile.open(sdist) as t:
        t.extractall(CACHE)
sys.path.insert(0, root)
import jcamp  # noqa: E402

read_ref = getattr(jcamp, "jcamp_readfile", None) or jcamp.readfile
files = sorted(f for f in glob.glob(os.path.join(root, "data", "**", "*"), recursive=True)
               if f.lower().endswith((".jdx", ".dx")))

def close(a, b, rel=1e-9):
    return abs(a - b) <= rel * max(abs(a), abs(b), 1e-300) or abs(a - b) < 1e-12

def header_number(text, label):
    for line in text.splitlines():
        s = line.strip()
        if s.startswith("##"):
            k, _, v = s[2:].partition("=")
            if k.replace(" ", "").replace("-", "").replace("_", "").replace("/", "").upper() == label:
                try:
                    return float(v.split("$$")[0].strip().replace(",", "."))
                except ValueError:
                    return None
    return None

passed = failed = refused = inconsistent_files = 0
rows = []
for path in files:
    name = os.path.relpath(path, os.path.join(root, "data"))
    proc = subprocess.run([BIN, "import", path, "--raw", "--json"], capture_output=True, text=True, timeout=60)
    if proc.returncode not in (0, 1) or "panicked" in proc.stderr:
        failed += 1; rows.append((name, "FAIL", f"crash: exit {proc.returncode} {proc.stderr.strip()[:80]}")); continue
    if proc.returncode == 1:
        refused += 1; rows.append((name, "refused", proc.stderr.strip().replace("ddlens: ", "")[:90])); continue
    ours = json.loads(proc.stdout)["spectra"]
    text = open(path, "rb").read().decode("latin-1")
    compound = "LINK" in text.upper() and "##BLOCKS" in text.upper().replace(" ", "")
    with contextlib.redirect_stdout(io.StringIO()):
        try:
            ref = read_ref(path)
        except Exception as e:  # the reference reader itself fails on some files
            ref = None; ref_err = str(e)[:60]
    refs = (ref.get("children") if ref and compound else [ref]) if ref else []
    problems, notes = [], []
    xy_blocks = [s for s in ours]
    if compound and len(refs) != len(xy_blocks):
        notes.append(f"reference has {len(refs)} blocks, ddlens {len(xy_blocks)} XY spectra; compared by order")
    single = None if compound else text
    if not compound and len(ours) > 1:
        # Several blocks without LINK: the reference reader keeps only the last one.
        notes.append(f"{len(ours)} blocks; reference compared with the last")
        refs = [None] * (len(ours) - 1) + refs
    inconsistent = []
    for i, s in enumerate(ours):
        x, y = np.array(s["x"]), np.array(s["y"])
        if single is not None and "X++(Y..Y)" in single.replace(" ", "").upper():
            npts = header_number(single, "NPOINTS"); fx = header_number(single, "FIRSTX"); lx = header_number(single, "LASTX")
            ref_len = len(refs[-1]["y"]) if refs and isinstance(refs[-1], dict) and "y" in refs[-1] else None
            if npts is not None and len(y) != int(npts):
                if ref_len == len(y):
                    # Both readers decode the same points: the file's own NPOINTS is wrong.
                    inconsistent.append(f"file holds {len(y)} points but says NPOINTS={int(npts)} (reference reader agrees with ddlens)")
                    continue
                problems.append(f"{len(y)} points, NPOINTS={int(npts)}")
            if fx is not None and len(x) and not close(x[0], fx): problems.append(f"first x {x[0]} != FIRSTX {fx}")
            if lx is not None and len(x) and not close(x[-1], lx): problems.append(f"last x {x[-1]} != LASTX {lx}")
        r = refs[i] if i < len(refs) and isinstance(refs[i], dict) else None
        if r is None or "y" not in r or len(r["y"]) == 0:
            notes.append("no reference y"); continue
        ry = np.asarray(r["y"], dtype=float)
        if len(ry) != len(y):
            notes.append(f"reference reader gives {len(ry)} points (ddlens {len(y)}); y not compared")
            continue
        bad = [k for k in range(len(y)) if not close(y[k], ry[k])]
        if bad:
            k = bad[0]; problems.append(f"y[{k}] = {y[k]} vs reference {ry[k]} ({len(bad)} differ)")
    if inconsistent and not problems:
        inconsistent_files += 1; rows.append((name, "file-bad", "; ".join(inconsistent)[:120])); continue
    if problems:
        failed += 1; rows.append((name, "FAIL", "; ".join(problems)[:120]))
    else:
        passed += 1; rows.append((name, "pass", "; ".join(notes)[:120]))

width = max(len(r[0]) for r in rows)
for n, status, why in rows:
    print(f"{n:<{width}}  {status:<7}  {why}")
print(f"{refused} refused (listed with the reason); {inconsistent_files} files contradict their own NPOINTS (listed as file-bad)")
print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
