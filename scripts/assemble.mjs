// Assembles dist/site/ (index.html + worker + wasm, for any static host) and
// dist/ddlens.html (one file: wasm as base64) from www/ and the wasm-bindgen
// output in dist/pkg/. Both pages carry the glue and the app inline, each
// script and inline style with its sha256 hash in the Content-Security-Policy,
// so a page runs no script it does not carry. (Hashes of external scripts,
// CSP Level 3, would need Firefox 116 and Safari 15.6, per MDN's
// browser-compat-data: later than the engine's own floor in README.md.)
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
// The glue gains `forget()`: after a wasm trap the worker drops
// the broken instance and instantiate the cached module again (issue 20).
const END = 'return Object.assign(__wbg_init, { initSync }, exports);';
const rawGlue = read('dist/pkg/ddlens_glue.js');
if (!rawGlue.includes(END)) throw new Error('the wasm-bindgen glue changed: its last line is not the expected one');
const glue = rawGlue.replace(END, 'const forget = () => { wasm = undefined; __wbg_init_promise = undefined; };\n    ' + END.replace('{ initSync }', '{ initSync, forget }'));
const wasm = readFileSync('dist/pkg/ddlens_glue_bg.wasm');

for (const [name, text] of [['glue', glue], ['app', app], ['worker', worker]]) {
  if (/<\/script/i.test(text)) throw new Error(`${name} contains '</script' and cannot be inlined`);
}

const hash = (text) => `sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}`;
const source = (text) => `'${hash(text)}'`;

// style-src-attr: plotters measures text by giving a <span> a style attribute
// (plotters/src/style/font/web.rs); style attributes cannot run script.
// No image is loaded (figures are drawn on a canvas or inline SVG), so img-src
// stays at default-src 'none'; the figure exports are downloads of blob: URLs,
// which no fetch directive governs.
const common = "default-src 'none'; base-uri 'none'; form-action 'none'; style-src-attr 'unsafe-inline'";
const scriptSrc = `script-src ${source(glue)} ${source(app)} 'wasm-unsafe-eval'`;

// Both pages: the glue (with `before` ahead of it) and the app inline.
const inlineScripts = (page, before = '') => page
  .replace('<script src="ddlens_glue.js"></script>', () => `${before}<script id="glue">${glue}</script>`)
  .replace('<script src="app.js"></script>', () => `<script>${app}</script>`);

// The static site. The worker is one file (the glue, then worker.js, as the
// single file's blob), so it loads no script of its own and works the same
// when the host sends this policy with every file.
rmSync('dist/site', { recursive: true, force: true });
mkdirSync('dist/site', { recursive: true });
const siteCsp = `${common}; ${scriptSrc}; style-src 'self'; worker-src 'self'; connect-src 'self'`;
writeFileSync('dist/site/index.html', inlineScripts(html.replace('@CSP@', siteCsp)));
writeFileSync('dist/site/style.css', css);
writeFileSync('dist/site/worker.js', `${glue}\n${worker}`);
copyFileSync('dist/pkg/ddlens_glue_bg.wasm', 'dist/site/ddlens_bg.wasm');

// The single file. The worker is made from the inline glue and worker source
// as a blob: URL.
const singleCsp = `${common}; ${scriptSrc}; style-src ${source(css)}; worker-src blob:`;
const embedded = `<script id="wasm-b64" type="application/octet-stream">${wasm.toString('base64')}</script>\n` +
  `<script id="worker-src" type="text/plain">${worker}</script>\n`;
const single = inlineScripts(html
  .replace('@CSP@', singleCsp)
  .replace('<link rel="stylesheet" href="style.css">', () => `<style>${css}</style>`), embedded);
writeFileSync('dist/ddlens.html', single);
console.log(`dist/site/ and dist/ddlens.html (${(statSync('dist/ddlens.html').size / 1024).toFixed(0)} KiB, wasm ${(wasm.length / 1024).toFixed(0)} KiB)`);
