#!/usr/bin/env bash
# Builds the release wasm, its glue, the static site (dist/site/) and the
# single self-contained file (dist/ddlens.html).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --quiet --release --lib --target wasm32-unknown-unknown
rm -rf dist/pkg && mkdir -p dist/pkg
wasm-bindgen --target no-modules --no-typescript --out-dir dist/pkg --out-name ddlens_glue \
  "${CARGO_TARGET_DIR:-target}/wasm32-unknown-unknown/release/ddlens.wasm"
# binaryen's size pass (npm binaryen, a node build of wasm-opt): about 15 %
# smaller; skipped with a note when the package is not installed.
if [ -x node_modules/.bin/wasm-opt ]; then
  node_modules/.bin/wasm-opt -Oz dist/pkg/ddlens_glue_bg.wasm -o dist/pkg/ddlens_glue_bg.wasm
else
  echo "build-web: node_modules/.bin/wasm-opt missing (run scripts/ensure-tools.sh web); the wasm is not size-optimised"
fi
node scripts/assemble.mjs
