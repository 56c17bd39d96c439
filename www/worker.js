// The compute worker: holds its own wasm instance and runs the long jobs
// (import, fitting) so that the page never blocks. Messages in:
// {type:'init', module} then {id, type, ...}; out: {id, ok, result|error} and {id, progress}.
/* global wasm_bindgen, importScripts */
if (typeof wasm_bindgen === 'undefined') importScripts('ddlens_glue.js');

// TEMPORARY stand-in for the core JCAMP-DX reader (spectrum::jcamp is still a
// stub on main): reads AFFN (X++(Y..Y)) only and returns the contract's
// ImportReport shape. Delimited text already goes to the core importer; once
// the core reads JCAMP, delete this block and the branch in `jobs.import`.
const interimJcamp = (() => {
  const fail = (line, message) => { throw new Error(line ? `line ${line}: ${message}` : message); };
  function finish(name, xs, ys, xUnit, opts, meta, warnings, format) {
    const unit = opts.x_unit || xUnit;
    const pts = xs.map((v, i) => [unit === 'nm' ? 1e7 / v : v, ys[i]]).sort((a, b) => a[0] - b[0]);
    return {
      format,
      spectra: [{
        name, wavenumber: pts.map((p) => p[0]), values: pts.map((p) => p[1]),
        quantity: opts.y_quantity || 'absorbance', x_unit_read: unit, saturated: [], metadata: meta, warnings,
      }],
      warnings: [],
    };
  }
  function jcamp(text, name, opts) {
    const lines = text.split(/\r?\n/);
    const meta = {}, xs = [], ys = [];
    let xf = 1, yf = 1, inData = false, step = null, npoints = null, first = null, last = null;
    for (let i = 0; i < lines.length; i++) {
      const line = lines[i].trim();
      const m = /^##([^=]+)=\s*(.*)$/.exec(line);
      if (m) {
        const key = m[1].trim().toUpperCase(), value = m[2].trim();
        inData = key === 'XYDATA';
        if (inData && !/\(X\+\+\(Y\.\.Y\)\)/.test(value)) fail(i + 1, `unsupported data form '${value}'`);
        if (key === 'XFACTOR') xf = Number(value);
        else if (key === 'YFACTOR') yf = Number(value);
        else if (key === 'NPOINTS') npoints = Number(value);
        else if (key === 'FIRSTX') first = Number(value);
        else if (key === 'LASTX') last = Number(value);
        else if (!inData && key !== 'END') meta[key.toLowerCase()] = value;
        if (inData && npoints > 1) step = (last - first) / (npoints - 1);
        continue;
      }
      if (!inData || !line) continue;
      const cells = line.split(/\s+/).map(Number);
      if (!cells.every(Number.isFinite)) fail(i + 1, `only plain numbers (AFFN) are read for now, found '${line.slice(0, 40)}'`);
      const x0 = cells[0] * xf;
      cells.slice(1).forEach((v, k) => { xs.push(x0 + k * (step ?? xf)); ys.push(v * yf); });
    }
    if (xs.length < 2) fail(null, 'no ##XYDATA block found');
    const warnings = npoints && npoints !== xs.length ? [{ line: null, message: `##NPOINTS says ${npoints}, ${xs.length} read` }] : [];
    const unit = /NANOMETERS|NM/i.test(meta.xunits || '') ? 'nm' : 'cm-1';
    return finish(meta.title || name, xs, ys, unit, opts, meta, warnings, 'JCAMP-DX');
  }
  return (bytes, name, opts) => jcamp(new TextDecoder().decode(bytes), name, opts);
})();

const jobs = {
  version: () => wasm_bindgen.version(),
  import: (msg) => (/^\s*##/.test(new TextDecoder().decode(msg.bytes.subarray(0, 200)))
    ? interimJcamp(msg.bytes, msg.name, msg.options || {})
    : wasm_bindgen.import_spectrum(msg.bytes, msg.name, msg.options || null)),
};

let ready = null;
self.onmessage = async (event) => {
  const msg = event.data;
  if (msg.type === 'init') {
    ready = wasm_bindgen({ module_or_path: msg.module });
    try { await ready; self.postMessage({ type: 'ready' }); }
    catch (e) { self.postMessage({ type: 'init-failed', error: String(e && e.message || e) }); }
    return;
  }
  await ready;
  const job = jobs[msg.type];
  try {
    if (!job) throw new Error(`unknown job '${msg.type}'`);
    const result = job(msg, (progress) => self.postMessage({ id: msg.id, progress }));
    self.postMessage({ id: msg.id, ok: true, result });
  } catch (e) {
    self.postMessage({ id: msg.id, ok: false, error: String(e && e.message || e) });
  }
};
