// Assembles dist/site/ (index.html + JS + wasm, for any static host) and
// dist/ddlens.html (one file: glue and app inline, wasm as base64) from
// www/ and the wasm-bindgen output in dist/pkg/. Each inline script and
// style gets a sha256 hash in the Content-Security-Policy, so the page
// allows nothing it does not carry.
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync, copyFileSync, statSync } from 'node:fs';

const read = (p) => readFileSync(p, 'utf8');
const html = read('www/index.html');
const css = read('www/style.css');
// The page script is kept in www/app/ as one file per concern (NN-name.js,
// joined in name order into one function scope); the parts share the
// page's state and helpers, and only `api` is exposed as window.ddlens.
const parts = readdirSync('www/app').filter((f) => /^\d\d-[a-z-]+\.js$/.test(f)).sort();
const app = [
  "// ddlens page script, joined from www/app/ by scripts/assemble.mjs.",
  '/* global wasm_bindgen */',
  "'use strict';",
  'const ddlens = (() => {',
  ...parts.map((f) => `// ===== www/app/${f} =====\n${read(`www/app/${f}`)}`),
  'return api;',
  '})();',
  'window.ddlens = ddlens;',
  '',
].join('\n');
const worker = read('www/worker.js');
const glue = read('dist/pkg/ddlens_glue.js');
const wasm = readFileSync('dist/pkg/ddlens_glue_bg.wasm');

for (const [name, text] of [['glue', glue], ['app', app], ['worker', worker]]) {
  if (/<\/script/i.test(text)) throw new Error(`${name} contains '</script' and cannot be inlined`);
}

// style-src-attr: plotters measures text by giving a <span> a style attribute
// (plotters/src/style/font/web.rs); style attributes cannot run script.
const common = "default-src 'none'; base-uri 'none'; form-action 'none'; img-src 'self' data: blob:; style-src-attr 'unsafe-inline'";

// The static site.
rmSync('dist/site', { recursive: true, force: true });
mkdirSync('dist/site', { recursive: true });
const siteCsp = `${common}; script-src 'self' 'wasm-unsafe-eval'; style-src 'self'; worker-src 'self' blob:; connect-src 'self'`;
writeFileSync('dist/site/index.html', html.replace('@CSP@', siteCsp));
writeFileSync('dist/site/style.css', css);
writeFileSync('dist/site/app.js', app);
writeFileSync('dist/site/worker.js', worker);
writeFileSync('dist/site/ddlens_glue.js', glue);
copyFileSync('dist/pkg/ddlens_glue_bg.wasm', 'dist/site/ddlens_bg.wasm');

// The single file.
const hash = (text) => `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;
const glueTag = `<script id="glue">${glue}</script>`;
const appTag = `<script>${app}</script>`;
const singleCsp = `${common}; script-src ${hash(glue)} ${hash(app)} 'wasm-unsafe-eval'; style-src ${hash(css)}; worker-src blob:`;
const single = html
  .replace('@CSP@', singleCsp)
  .replace('<link rel="stylesheet" href="style.css">', () => `<style>${css}</style>`)
  .replace('<script src="ddlens_glue.js"></script>', () =>
    `<script id="wasm-b64" type="application/octet-stream">${wasm.toString('base64')}</script>\n` +
    `<script id="worker-src" type="text/plain">${worker}</script>\n${glueTag}`)
  .replace('<script src="app.js"></script>', () => appTag);
writeFileSync('dist/ddlens.html', single);
console.log(`dist/site/ and dist/ddlens.html (${(statSync('dist/ddlens.html').size / 1024).toFixed(0)} KiB, wasm ${(wasm.length / 1024).toFixed(0)} KiB)`);
