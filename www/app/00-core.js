// ddlens page shell: file drop, sample list, plots and exports.
// All science runs in wasm (core functions behind src/web, the worker's
// jobs); the page script only moves data between the DOM, the worker and
// the drawing functions, and keeps the undo history of the user's edits.
// This part: shared state, the compute worker, messages and undo.
const $ = (id) => document.getElementById(id);
/** Every default the page shows or sends (palette, band-count limit, C/B
 *  fallback, number formatting…): the engine's, read once at start-up. */
let DEFAULTS = null;
const state = {
  samples: [], frame: null, nextColour: 0, nextId: 1, lastImport: null, lastDrawMs: 0,
  // Transient view state (not in the undo history): the baseline preview,
  // a band being dragged, per-move drag redraw times, the band-count comparison.
  baselinePreview: null, drag: null, dragMs: [], bic: null,
  // The plot's layers (the `layer` of each figure line) the user chose to show.
  layers: { raw: true, component: true, envelope: true, residual: true, prediction: true, saturation: true },
  view: { x: null, y: null, nmBottom: false, yMode: 'a' },
};
let worker = null;
let wasmModule = null;

// ---------- start-up ----------
function embeddedWasmBytes() {
  const el = $('wasm-b64');
  if (!el) return null;
  const bin = atob(el.textContent.trim());
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return bytes;
}

async function loadModule() {
  const bytes = embeddedWasmBytes();
  if (bytes) return WebAssembly.compile(bytes);
  const response = await fetch('ddlens_bg.wasm');
  return WebAssembly.compileStreaming ? WebAssembly.compileStreaming(response) : WebAssembly.compile(await response.arrayBuffer());
}

function startWorker(module) {
  const glue = $('glue');
  const workerSrc = $('worker-src');
  const w = glue && workerSrc
    ? new Worker(URL.createObjectURL(new Blob([glue.textContent, '\n', workerSrc.textContent], { type: 'text/javascript' })))
    : new Worker('worker.js');
  const pending = new Map();
  let nextId = 1;
  const readyPromise = new Promise((resolve, reject) => {
    w.onmessage = (e) => {
      const m = e.data;
      if (m.type === 'ready') return resolve();
      if (m.type === 'init-failed') return reject(new Error(m.error));
      const job = pending.get(m.id);
      if (!job) return;
      if (m.progress !== undefined) { job.onProgress && job.onProgress(m.progress); return; }
      pending.delete(m.id);
      m.ok ? job.resolve(m.result) : job.reject(new Error(m.error));
    };
    w.onerror = (e) => reject(new Error(e.message || 'the compute worker failed to start'));
  });
  w.postMessage({ type: 'init', module });
  return {
    ready: readyPromise,
    run(type, payload = {}, onProgress, transfer = []) {
      const id = nextId++;
      return new Promise((resolve, reject) => {
        pending.set(id, { resolve, reject, onProgress });
        w.postMessage({ id, type, ...payload }, transfer);
      });
    },
    /** Stops a running job at once; the caller starts a fresh worker from the cached module. */
    terminate() {
      w.terminate();
      for (const job of pending.values()) job.reject(Object.assign(new Error('cancelled'), { cancelled: true }));
      pending.clear();
    },
  };
}

// ---------- messages ----------
function say(text, kind = 'warn') {
  const p = document.createElement('p');
  p.className = kind;
  p.textContent = text;
  $('messages').prepend(p);
  while ($('messages').children.length > 5) $('messages').lastChild.remove();
}
/** Reports a worker job on a sample that failed or was cancelled (`what`: "fit", "analysis"…). */
const jobFailed = (s, what, e) => say(e.cancelled ? `${s.name}: ${what} cancelled` : `${s.name}: ${e.message || e}`, e.cancelled ? 'info' : 'warn');

// ---------- samples and their documents ----------
// A sample is its analysis document (`doc`: the core's `Document`, the one
// schema of project files, links and `ddlens analyze --project`) plus what
// only the page needs: an id, the cleaned spectrum on screen, the band
// model being edited, the last band fit and its curves, the ligand-field
// view. A document is never changed in place: `withDoc` copies the parts
// that change, so an undo snapshot keeps the document it saw.
class Sample {
  constructor(doc, fields = {}) { Object.assign(this, { id: state.nextId++, doc, fit: null, curves: null, lf: null, model: null, edited: false, warnings: [] }, fields); }
  get name() { return this.doc.sample.name; }
  get file() { return this.doc.sample.source.file_name; }
  get colour() { return this.doc.sample.display.colour; }
  get visible() { return this.doc.sample.display.visible; }
  get quantity() { return this.doc.sample.data.quantity; }
  get saturated() { return this.doc.sample.data.saturated; }
  get metadata() { return this.doc.sample.metadata; }
  get concentration() { return this.doc.sample.concentration; }
  get path() { return this.doc.sample.path_length; }
  /** The imported (uncleaned) spectrum. */
  get raw() { return this.doc.sample.data; }
  get steps() { return this.doc.steps; }
  get choices() { return (this.doc.ligand_field && this.doc.ligand_field.choices) || []; }
}
/** A copy of document `d` that `change` edits (parts copied one level deep; data arrays shared). */
function copyDoc(d, change) {
  const doc = {
    ...d, steps: [...d.steps], bands: { ...d.bands }, notices: [...(d.notices || [])],
    sample: { ...d.sample, display: { ...d.sample.display }, source: { ...d.sample.source } },
    ligand_field: d.ligand_field && { ...d.ligand_field, choices: [...(d.ligand_field.choices || [])] },
  };
  change(doc);
  return doc;
}
/** The active sample: the one every panel works on (the list's highlighted row), or undefined. */
const activeSample = () => find(Number($('clean-target').value));
/** Marks a sample's results out of date (`why`: "the cleaning changed"…) when it has any. */
function markStale(s, why) {
  if (s && s.lf) s.stale = why;
  return s;
}
/** Replaces `s.doc` by an edited copy; returns the sample. */
function withDoc(s, change) {
  s.doc = copyDoc(s.doc, change);
  return s;
}

// ---------- undo history ----------
// Each entry is a snapshot of the sample list (documents and data arrays are
// never mutated, so a snapshot copies only the small per-sample records).
const history = { past: [], future: [] };
const snapshot = () => state.samples.map((s) => Object.assign(Object.create(Sample.prototype), s));
function edit(change) {
  history.past.push(snapshot());
  if (history.past.length > 200) history.past.shift();
  history.future = [];
  change();
  refresh();
}
function undo() {
  if (!history.past.length) return;
  history.future.push(snapshot());
  state.samples = history.past.pop();
  refresh();
}
function redo() {
  if (!history.future.length) return;
  history.past.push(snapshot());
  state.samples = history.future.pop();
  refresh();
}
function refresh() {
  $('undo-button').disabled = !history.past.length;
  $('redo-button').disabled = !history.future.length;
  renderSamples();
  renderCleanTargets();
  renderProps();
  renderPath();
  renderBands();
  renderLf();
  draw();
  autosaveSoon();
}
