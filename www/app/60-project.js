// ---------- project file, share link, autosave ----------
// One document holds the whole workspace: the samples' data, the band and
// ligand-field choices and the view. The analysis itself is recomputed on
// load (the core is deterministic), so a link restores the same numbers.
const PROJECT_SCHEMA = 1;
const AUTOSAVE_KEY = 'ddlens-workspace';
const LONG_LINK = 32000; // common practice: some browsers and mail tools cut links near 32 000 characters

const lfControls = () => ({
  ion: $('lf-ion').value, geometry: $('lf-geometry').value, c_over_b: $('lf-cb').value,
  free_c: $('lf-free-c').checked, spin_forbidden: $('lf-spin-forbidden').checked, b0: $('lf-b0').value, ligand: $('lf-ligand').value,
  band_count: $('band-count').value, shape: $('band-shape').value,
});
function setLfControls(c) {
  $('lf-ion').value = c.ion; $('lf-geometry').value = c.geometry; $('lf-cb').value = c.c_over_b || '';
  $('lf-free-c').checked = !!c.free_c; $('lf-spin-forbidden').checked = !!c.spin_forbidden; $('lf-b0').value = c.b0 || 'common'; $('lf-ligand').value = c.ligand || '';
  if (c.band_count !== undefined) { $('band-count').value = c.band_count || ''; $('band-shape').value = c.shape || 'gaussian'; }
}

function projectDoc() {
  const keep = ['name', 'file', 'quantity', 'xUnit', 'saturated', 'metadata', 'concentration', 'path', 'colour', 'visible', 'lfChoices'];
  const selected = state.samples.findIndex((s) => s.id === Number($('clean-target').value));
  return {
    ddlens_project: PROJECT_SCHEMA,
    program: `ddlens ${wasm_bindgen.version()}`,
    saved: new Date().toISOString(),
    samples: state.samples.map((s) => ({
      ...Object.fromEntries(keep.map((k) => [k, s[k]])), wavenumber: Array.from(s.wavenumber), values: Array.from(s.values),
      ligand_field: s.lf ? { controls: s.lf.controls } : null,
      // A cleaned sample also keeps the file's data and its steps, so the
      // cleaning can still be changed or undone after a reload.
      ...(s.processing ? { processing: s.processing, raw: { wavenumber: Array.from(s.raw.wavenumber), values: Array.from(s.raw.values) } } : {}),
    })),
    selected,
    bands: { count: $('band-count').value, shape: $('band-shape').value },
    series_sort: state.lfSort,
    view: state.view,
  };
}

/** Replaces the workspace with a project document; throws an Error with a plain sentence. */
async function loadProject(doc) {
  if (!doc || typeof doc !== 'object' || !('ddlens_project' in doc)) throw new Error('this is not a ddlens project');
  if (!Number.isInteger(doc.ddlens_project) || doc.ddlens_project < 1) throw new Error('the project names no valid schema version');
  if (doc.ddlens_project > PROJECT_SCHEMA) throw new Error(`the project was saved by a newer ddlens (schema ${doc.ddlens_project}); this page reads schema ${PROJECT_SCHEMA}`);
  const ok = (a) => Array.isArray(a) && a.every(Number.isFinite);
  if (!Array.isArray(doc.samples) || doc.samples.some((s) => !ok(s.wavenumber) || !ok(s.values) || s.wavenumber.length !== s.values.length)) {
    throw new Error('the project is damaged: a sample has missing or unequal data');
  }
  const rawOf = (s) => (s.processing && s.raw && ok(s.raw.wavenumber) && ok(s.raw.values) && s.raw.wavenumber.length === s.raw.values.length
    ? { raw: s.raw, processing: s.processing } : { raw: { wavenumber: s.wavenumber, values: s.values }, processing: null });
  edit(() => {
    state.samples = doc.samples.map((s) => ({
      ...s, id: state.nextId++, ...rawOf(s), fit: null, lf: null, lfChoices: s.lfChoices || [],
      saturated: s.saturated || [], metadata: s.metadata || {}, warnings: [], colour: s.colour || PALETTE[state.nextColour++ % PALETTE.length], visible: s.visible !== false,
    }));
  });
  if (doc.view) Object.assign(state.view, doc.view);
  if (doc.series_sort) state.lfSort = doc.series_sort;
  if (doc.bands) { $('band-count').value = doc.bands.count || ''; $('band-shape').value = doc.bands.shape || 'gaussian'; }
  // Each sample's analysis is recomputed from its stored controls and choices
  // (an older project kept one `ligand_field` for one sample).
  const lfOf = (i) => (doc.samples[i].ligand_field || (doc.ligand_field && doc.ligand_field.sample === i ? doc.ligand_field : null));
  for (const [i, s] of state.samples.entries()) {
    const lf = lfOf(i);
    if (!lf) continue;
    try { s.lf = await analyse(s, lf.controls, s.lfChoices); } catch (e) { jobFailed(s, 'analysis', e); }
  }
  refresh();
  if (state.samples[doc.selected]) selectSample(state.samples[doc.selected].id);
}

let autosaveTimer = null;
let autosaveWarned = false;
function autosaveSoon() {
  clearTimeout(autosaveTimer);
  autosaveTimer = setTimeout(() => {
    try { localStorage.setItem(AUTOSAVE_KEY, JSON.stringify(projectDoc())); } catch (e) {
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
  const data = toB64url(await pipe(new TextEncoder().encode(JSON.stringify(projectDoc())), new CompressionStream('deflate-raw')));
  const url = `${location.href.split('#')[0]}#project=${data}`;
  $('share-box').hidden = false;
  $('share-output').value = url;
  $('share-output').select();
  if (url.length > LONG_LINK) say(`The link is ${url.length} characters long, too long for some browsers and mail programs: send the project file (Save project) instead.`);
  try { await navigator.clipboard.writeText(url); say('Share link copied to the clipboard.', 'info'); } catch { say('Copy the share link from the box above.', 'info'); }
}

async function openShareLink() {
  const data = location.hash.slice('#project='.length);
  let doc;
  try {
    doc = JSON.parse(new TextDecoder().decode(await pipe(fromB64url(data), new DecompressionStream('deflate-raw'))));
  } catch {
    throw new Error('The share link is damaged or incomplete: nothing was loaded.');
  }
  await loadProject(doc);
}

function saveProject() {
  download(new Blob([JSON.stringify(projectDoc())], { type: 'application/json' }), `${baseName()}.ddlens.json`);
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
