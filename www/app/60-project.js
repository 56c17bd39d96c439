// ---------- project file, share link, autosave ----------
// One `Project` (the core's schema, made and read by the engine) holds the
// whole workspace: each sample's document (its data, cleaning steps, band
// model with locks and ties, ligand-field options and choices, and the
// results when they rest on what is on screen) and the page's view. A
// document without results is analysed again on load.
const AUTOSAVE_KEY = 'ddlens-workspace';
const LONG_LINK = 32000; // common practice: some browsers and mail tools cut links near 32 000 characters

const lfControls = () => ({
  ion: $('lf-ion').value, geometry: $('lf-geometry').value, c_over_b: $('lf-cb').value,
  free_c: $('lf-free-c').checked, spin_forbidden: $('lf-spin-forbidden').checked, b0: $('lf-b0').value, ligand: $('lf-ligand').value,
  band_count: $('band-count').value, shape: $('band-shape').value,
});
function setLfControls(c) {
  if (c.ion) $('lf-ion').value = c.ion;
  if (c.geometry) $('lf-geometry').value = c.geometry;
  $('lf-cb').value = c.c_over_b || '';
  $('lf-free-c').checked = !!c.free_c; $('lf-spin-forbidden').checked = !!c.spin_forbidden;
  if (c.b0) $('lf-b0').value = c.b0;
  $('lf-ligand').value = c.ligand || '';
  if (c.band_count !== undefined) { $('band-count').value = c.band_count || ''; if (c.shape) $('band-shape').value = c.shape; }
}

/** A sample's document as saved: as analysed when its results rest on the
 *  bands on screen, else with the bands on screen and no results. */
function savedDoc(s) {
  if (s.lf && s.lf.model === s.model && s.doc.results) return s.doc;
  return copyDoc(s.doc, (d) => { d.bands = { ...d.bands, model: modelForDoc(s) }; d.results = null; });
}

/** The workspace as the JSON text of a `Project` (unchecked: `project_to_json` makes the file). */
function workspaceJson() {
  const active = state.samples.findIndex((s) => s.id === Number($('clean-target').value));
  return JSON.stringify({
    ddlens_project: DEFAULTS.schema, program: `ddlens ${wasm_bindgen.version()}`, saved: new Date().toISOString(),
    samples: state.samples.map(savedDoc),
    active: active >= 0 ? active : null,
    page: { view: { x: state.view.x, y: state.view.y, nm_bottom: state.view.nmBottom, y_mode: state.view.yMode }, series_sort: state.lfSort },
  });
}
/** The workspace as a project file's text, written by the core. */
const projectText = () => wasm_bindgen.project_to_json(workspaceJson());

/** A page sample from a loaded document: its cleaned spectrum, and its band fit and analysis when it carries results. */
function sampleFromDoc(doc) {
  const s = new Sample(doc);
  if (!doc.sample.display.colour) withDoc(s, (d) => { d.sample.display.colour = DEFAULTS.palette[state.nextColour++ % DEFAULTS.palette.length]; });
  withCleaned(s);
  const fresh = doc.results && doc.program.endsWith(wasm_bindgen.version());
  if (fresh) {
    takeBandFit(s, doc.results, doc.bands.model);
    if (doc.ligand_field) s.lf = lfRecord(s, doc, s.model);
  } else if (doc.bands.model) {
    Object.assign(s, { model: doc.bands.model, edited: true });
    s.curves = modelCurves(s, s.model);
  }
  return s;
}

/** Replaces the workspace with a project (JSON text). The core validates it
 *  completely first: on any error (a sentence naming the field) nothing is loaded. */
async function loadProject(text) {
  const { project, notices } = JSON.parse(wasm_bindgen.project_from_json(text));
  const samples = project.samples.map(sampleFromDoc);
  edit(() => { state.samples = samples; });
  for (const n of notices || []) say(String(n), 'info');
  const { view, series_sort: sort } = project.page;
  Object.assign(state.view, { x: view.x, y: view.y, nmBottom: view.nm_bottom, yMode: view.y_mode });
  state.lfSort = sort;
  // A document with ligand-field options but no results (or results of another version) is analysed again.
  for (const s of state.samples) {
    if (!s.doc.ligand_field || s.lf) continue;
    const doc = copyDoc(s.doc, (d) => { d.bands = { ...d.bands, model: modelForDoc(s) }; d.results = null; });
    try { takeAnalysis(s, await runDocument(`Analysing ${s.name}…`, doc)); } catch (e) { jobFailed(s, 'analysis', e); }
  }
  refresh();
  const active = state.samples[project.active];
  if (active) selectSample(active.id);
}

let autosaveTimer = null;
let autosaveWarned = false;
/** Keeps the workspace in the browser's storage, 300 ms after the last change;
 *  the core writes the project text in the worker, off the main thread. */
function autosaveSoon() {
  clearTimeout(autosaveTimer);
  autosaveTimer = setTimeout(async () => {
    let text;
    try { text = await worker.run('project', { text: workspaceJson() }); } catch (e) {
      if (!e.cancelled) say(`The workspace could not be kept: ${e.message || e}`);
      return;
    }
    try { localStorage.setItem(AUTOSAVE_KEY, text); } catch (e) {
      if (!autosaveWarned) say('This browser refused to keep the workspace (storage full or disabled): save the project file to keep your work.');
      autosaveWarned = true;
    }
  }, 300);
}

const toB64url = (bytes) => {
  let bin = '';
  for (let i = 0; i < bytes.length; i += 0x8000) bin += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(bin).replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
};
const fromB64url = (text) => Uint8Array.from(atob(text.replace(/-/g, '+').replace(/_/g, '/')), (c) => c.charCodeAt(0));
const pipe = async (bytes, stream) => new Uint8Array(await new Response(new Blob([bytes]).stream().pipeThrough(stream)).arrayBuffer());

async function shareLink() {
  const data = toB64url(await pipe(new TextEncoder().encode(projectText()), new CompressionStream('deflate-raw')));
  const url = `${location.href.split('#')[0]}#project=${data}`;
  $('share-box').hidden = false;
  $('share-output').value = url;
  $('share-output').select();
  if (url.length > LONG_LINK) say(`The link is ${url.length} characters long, too long for some browsers and mail programs: send the project file (Save project) instead.`);
  try { await navigator.clipboard.writeText(url); say('Share link copied to the clipboard.', 'info'); } catch { say('Copy the share link from the box above.', 'info'); }
}

async function openShareLink() {
  const data = location.hash.slice('#project='.length);
  let text;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(await pipe(fromB64url(data), new DecompressionStream('deflate-raw')));
  } catch {
    throw new Error('The share link is damaged or incomplete: nothing was loaded.');
  }
  try { await loadProject(text); } catch (e) { throw new Error(`The share link is damaged or incomplete (${e.message || e}): nothing was loaded.`); }
}

function saveProject() {
  download(new Blob([projectText()], { type: 'application/json' }), `${baseName()}.ddlens.json`);
}

async function startFresh() {
  try { localStorage.removeItem(AUTOSAVE_KEY); } catch { /* storage disabled */ }
  history.past = []; history.future = [];
  state.samples = [];
  if (location.hash) window.history.replaceState(null, '', location.href.split('#')[0]);
  await loadDemo();
  history.past = [];
  refresh();
}
