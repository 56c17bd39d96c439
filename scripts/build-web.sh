#!/usr/bin/env bash
# Builds the release wasm, its glue, the static site (dist/site/) and the
# single self-contained file (dist/ddlens.html).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --quiet --release --lib --target wasm32-unknown-unknown
rm -rf dist/pkg && mkdir -p dist/pkg
wasm-bindgen --target no-modules --no-typescript --out-dir dist/pkg --out-name ddlens_glue \
  "${CARGO_TARGET_DIR:-target}/wasm32-unknown-unknown/release/ddlens.wasm"
node scripts/assemble.mjs
