#!/usr/bin/env bash
# Installs what the build and the tests need, when it is missing:
#   web     the wasm target, wasm-bindgen-cli at the version in Cargo.lock, and
#           the npm packages (binaryen's wasm-opt shrinks the module)
#   browser Debian's chromium + chromium-driver, poppler-utils (pdftoppm, pdftotext
#           for the report test), and the npm packages (playwright-core drives
#           that chromium; never a browser download)
#   python  numpy, scipy, sympy for the reference checks
set -euo pipefail
cd "$(dirname "$0")/.."
say() { echo "ensure-tools: $*"; }

web() {
  if ! rustup target list --installed 2>/dev/null | grep -qx wasm32-unknown-unknown; then
    say "adding the wasm32-unknown-unknown target"
    rustup target add wasm32-unknown-unknown
  fi
  local want
  want=$(awk '/^name = "wasm-bindgen"$/ { getline; gsub(/version = |"/, ""); print; exit }' Cargo.lock)
  if [ "$(wasm-bindgen --version 2>/dev/null | awk '{print $2}')" != "$want" ]; then
    say "installing wasm-bindgen-cli $want (takes a few minutes once)"
    # Plain install: --locked fails against this registry (a locked dependency is missing).
    cargo install wasm-bindgen-cli --version "$want" --quiet
  fi
  npm_packages
}

npm_packages() {
  if [ ! -d node_modules/playwright-core ] || [ ! -x node_modules/.bin/wasm-opt ]; then
    say "installing the npm packages in package.json (playwright-core, binaryen; no browser download)"
    PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD=1 npm install --no-audit --no-fund --silent
  fi
}

# Debian packages, with sudo when not root.
apt_install() {
  if [ "$(id -u)" = 0 ]; then SUDO=; else SUDO=sudo; fi
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "$@" >/dev/null
}

browser() {
  if [ ! -x /usr/bin/chromium ]; then
    say "installing Debian's chromium"
    apt_install chromium chromium-driver
  fi
  if ! command -v pdftoppm >/dev/null; then
    say "installing Debian's poppler-utils"
    apt_install poppler-utils
  fi
  npm_packages
}

python() {
  if ! python3 -c 'import numpy, scipy, sympy' 2>/dev/null; then
    say "installing numpy, scipy, sympy"
    python3 -m pip install --quiet --disable-pip-version-check numpy scipy sympy
  fi
}

for what in "${@:-web browser python}"; do
  for w in $what; do "$w"; done
done
