// The compute worker: holds its own wasm instance and runs the long jobs
// (import, fitting) so that the page never blocks. Messages in:
// {type:'init', module} then {id, type, ...}; out: {id, ok, result|error} and {id, progress}.
/* global wasm_bindgen, importScripts */
if (typeof wasm_bindgen === 'undefined') importScripts('ddlens_glue.js');

const jobs = {
  version: () => wasm_bindgen.version(),
  import: (msg) => wasm_bindgen.import_spectrum(msg.bytes, msg.name, msg.options || null),
  // `analysis::analyze` on one document (the function `ddlens analyze --project` runs):
  // its cleaning steps, its band model (none: automatic deconvolution), its ligand field.
  // A project file's text from the page's workspace JSON (autosave, off the main thread).
  project: (msg) => wasm_bindgen.project_to_json(msg.text),
  analyze: (msg, progress) => wasm_bindgen.analyze_document(msg.doc, (it) => { progress(it); return true; }),
  // `analysis::fit_globally`: the spectrum of an analysed document fitted with the ligand-field model.
  global: (msg, progress) => wasm_bindgen.global_fit_document(msg.doc, (it) => { progress(it); return true; }),
};

let ready = null;
let module = null;
/** After a wasm trap the instance may be broken: drop it and instantiate the cached module again. */
function restartEngine(e) {
  wasm_bindgen.forget();
  ready = wasm_bindgen({ module_or_path: module });
  return `The engine stopped on an internal error (${e.message}) and was restarted; nothing of the workspace was lost. Please report what you did.`;
}
self.onmessage = async (event) => {
  const msg = event.data;
  if (msg.type === 'init') {
    module = msg.module;
    ready = wasm_bindgen({ module_or_path: module });
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
    const error = e instanceof WebAssembly.RuntimeError ? restartEngine(e) : String(e && e.message || e);
    self.postMessage({ id: msg.id, ok: false, error });
  }
};
