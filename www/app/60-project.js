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

// ---------- loading: validated first, one undoable step, a backup kept ----------
/** Reads a project's text into page samples without touching the workspace.
 *  The core validates it completely (`project_from_json`: a sentence naming
 *  the field on any error); the page takes only the typed fields it returns. */
function readProject(text) {
  const { project, notices } = JSON.parse(wasm_bindgen.project_from_json(text));
  const samples = project.samples.map(sampleFromDoc);
  const { view, series_sort: sort } = project.page;
  return {
    samples, notices: (notices || []).map(String), active: project.active, saved: project.saved,
    view: { x: view.x, y: view.y, nmBottom: view.nm_bottom === true, yMode: String(view.y_mode) },
    sort: { key: Number.isInteger(sort.key) ? sort.key : null, dir: sort.dir < 0 ? -1 : 1 },
  };
}

/** Puts a read project on screen as one undoable step, after keeping the
 *  workspace it replaces as the backup; returns the number of samples. */
async function applyProject(read) {
  const replaced = state.samples.length;
  if (replaced) await keepBackup();
  edit(() => { state.samples = read.samples; });
  for (const n of read.notices) say(n, 'info');
  Object.assign(state.view, read.view);
  state.lfSort = read.sort;
  // A document with ligand-field options but no results (or results of another version) is analysed again.
  for (const s of state.samples) {
    if (!s.doc.ligand_field || s.lf) continue;
    const doc = copyDoc(s.doc, (d) => { d.bands = { ...d.bands, model: modelForDoc(s) }; d.results = null; });
    try { takeAnalysis(s, await runDocument(`Analysing ${s.name}…`, doc)); } catch (e) { jobFailed(s, 'analysis', e); }
  }
  refresh();
  const active = state.samples[read.active];
  if (active) selectSample(active.id);
  if (replaced) sayWithAction(`The ${plural(replaced, 'sample')} it replaced: Undo brings them back, and a copy is kept in this browser.`, 'Restore that copy', restoreBackup);
  return read.samples.length;
}

/** Replaces the workspace with a project (JSON text); nothing changes when the core refuses it. */
const loadProject = (text) => applyProject(readProject(text));

const plural = (n, word) => `${n} ${word}${n === 1 ? '' : 's'}`;

/** Keeps the workspace on screen under the backup key (when work may be kept on this computer). */
async function keepBackup() {
  if (!keepingWork()) return;
  try { store(BACKUP_KEY, await worker.run('project', { text: workspaceJson() })); } catch (e) {
    if (!e.cancelled) say(`No backup of the workspace could be kept (${e.message || e}): Undo still brings it back.`);
  }
}
async function restoreBackup() {
  const text = stored(BACKUP_KEY);
  if (!text) { say('There is no backup in this browser.'); return; }
  try { await loadProject(text); } catch (e) { say(`The backup could not be opened: ${e.message || e}`); }
}

/** A message with one button (the action runs once). */
function sayWithAction(text, label, action, kind = 'info') {
  say(text, kind);
  const b = document.createElement('button');
  b.type = 'button';
  b.textContent = label;
  b.addEventListener('click', () => { b.disabled = true; action(); }, { once: true });
  $('messages').firstChild.append(' ', b);
}

// ---------- the browser's storage ----------
const BACKUP_KEY = 'ddlens-workspace-backup'; // the workspace a load or Start fresh replaced
const DAMAGED_KEY = 'ddlens-workspace-damaged'; // an autosave the core could not read, kept aside
const KEEP_KEY = 'ddlens-keep-work'; // "no" once the user asked not to keep work on this computer
const stored = (key) => { try { return localStorage.getItem(key); } catch { return null; } };
const store = (key, text) => localStorage.setItem(key, text);
const unstore = (key) => { try { localStorage.removeItem(key); } catch { /* storage disabled */ } };
const keepingWork = () => stored(KEEP_KEY) !== 'no';

/** Autosave switches: held while the page starts or loads (a failed load never
 *  writes), and stopped when another tab wrote the workspace later (this
 *  tab then never overwrites it silently). */
const autosave = { held: true, otherTab: false, timer: null, warned: false };
/** Keeps the workspace in the browser's storage, 300 ms after the last change;
 *  the core writes the project text in the worker, off the main thread. */
function autosaveSoon() {
  clearTimeout(autosave.timer);
  if (autosave.held || autosave.otherTab || !keepingWork()) return;
  autosave.timer = setTimeout(async () => {
    let text;
    try { text = await worker.run('project', { text: workspaceJson() }); } catch (e) {
      if (!e.cancelled) say(`The workspace could not be kept: ${e.message || e}`);
      return;
    }
    if (autosave.otherTab || !keepingWork()) return;
    try { store(AUTOSAVE_KEY, text); } catch (e) {
      if (!autosave.warned) say('This browser refused to keep the workspace (storage full or disabled): save the project file to keep your work.');
      autosave.warned = true;
    }
  }, 300);
}
/** Another tab of this page wrote the autosave: stop writing it from here. */
function otherTabSaved(e) {
  if (e.key !== AUTOSAVE_KEY || e.newValue === null || autosave.otherTab) return;
  autosave.otherTab = true;
  clearTimeout(autosave.timer);
  sayWithAction('Another ddlens tab saved its workspace, so this tab stopped autosaving to avoid overwriting it. Save project keeps this tab\'s work.',
    'Autosave this tab instead', () => { autosave.otherTab = false; autosaveSoon(); }, 'warn');
}

/** Restores the autosaved workspace at start-up; a damaged one is kept aside under its own key. */
async function restoreAutosave() {
  const saved = stored(AUTOSAVE_KEY);
  if (!saved) return false;
  let read;
  try { read = readProject(saved); } catch (e) {
    try { store(DAMAGED_KEY, saved); unstore(AUTOSAVE_KEY); } catch { /* kept where it was */ }
    sayWithAction(`The saved workspace could not be restored (${e.message || e}). It was kept aside in this browser, not deleted.`, 'Download the damaged copy',
      () => download(new Blob([saved], { type: 'application/json' }), 'ddlens-damaged-workspace.json'), 'warn');
    return true;
  }
  await applyProject(read);
  const when = read.saved ? `, saved ${read.saved.replace('T', ' ').slice(0, 16)} UTC` : '';
  say(`The previous workspace (${plural(read.samples.length, 'sample')}${when}) was restored. Start fresh clears it.`, 'info');
  return true;
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

/** Inflates a link's bytes, counting them: beyond the core's cap the stream is stopped and nothing is kept. */
async function inflateLink(bytes) {
  const reader = new Blob([bytes]).stream().pipeThrough(new DecompressionStream('deflate-raw')).getReader();
  const parts = [];
  let total = 0;
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > DEFAULTS.max_link_bytes) {
      reader.cancel().catch(() => {});
      throw new Error(`The share link unpacks to more than ${DEFAULTS.max_link_bytes / 1048576} MiB, more than any analysis the page writes into a link: nothing was loaded.`);
    }
    parts.push(value);
    // Chunks arrive as microtasks: yield to the event loop every 4 MiB, so inflating is never one long task.
    if (parts.length % 64 === 0) await new Promise((resolve) => setTimeout(resolve, 0));
  }
  const text = new Uint8Array(total);
  let at = 0;
  for (const p of parts) { text.set(p, at); at += p.length; }
  return text;
}

/** Opens the link in the address bar's fragment over the workspace (one
 *  undoable step, the replaced workspace kept as the backup); the fragment
 *  is cleared once it is loaded, so a reload keeps the later edits. */
async function openShareLink() {
  let text;
  try {
    const bytes = fromB64url(location.hash.slice('#project='.length));
    text = new TextDecoder('utf-8', { fatal: true }).decode(await inflateLink(bytes));
  } catch (e) {
    if (/MiB/.test(e.message)) throw e;
    throw new Error('The share link is damaged or incomplete: nothing was loaded.');
  }
  let read;
  try { read = readProject(text); } catch (e) { throw new Error(`The share link is damaged or incomplete (${e.message || e}): nothing was loaded.`); }
  const n = await applyProject(read);
  clearFragment();
  say(`Opened a shared analysis of ${plural(n, 'sample')}.`, 'info');
}
const clearFragment = () => { if (location.hash) window.history.replaceState(null, '', location.href.split('#')[0]); };

/** A new `#project=` fragment in an open tab: asks before replacing work on screen. */
async function fragmentChanged() {
  if (!location.hash.startsWith('#project=')) return;
  const n = state.samples.length;
  if (n && !window.confirm(`Open the shared analysis in the new link? It replaces the ${plural(n, 'sample')} on screen (Undo brings them back).`)) {
    clearFragment();
    say('The shared analysis was not opened.', 'info');
    return;
  }
  try { await openShareLink(); } catch (e) { say(e.message); }
}

function saveProject() {
  download(new Blob([projectText()], { type: 'application/json' }), `${baseName()}.ddlens.json`);
}

/** Clears the workspace after asking (one undoable step; the cleared work is kept as the backup). */
async function startFresh() {
  const n = state.samples.length;
  if (n && !window.confirm(`Start fresh? This clears the ${plural(n, 'sample')} on screen; Undo brings them back.`)) return;
  if (n) await keepBackup();
  clearFragment();
  edit(() => { state.samples = []; });
  say('Started fresh: the workspace is empty.', 'info');
}

/** The privacy controls beside Start fresh: the switch that keeps no work
 *  in this browser, and on file:// the sentence on who else can read it. */
function wirePrivacy() {
  const label = document.createElement('label');
  label.id = 'keep-work-label';
  const box = document.createElement('input');
  box.type = 'checkbox';
  box.id = 'keep-work';
  box.checked = !keepingWork();
  label.append(box, ' Don\'t keep my work on this computer');
  box.addEventListener('change', () => {
    if (box.checked) {
      try { store(KEEP_KEY, 'no'); } catch { /* storage disabled: nothing is kept anyway */ }
      for (const key of [AUTOSAVE_KEY, BACKUP_KEY, DAMAGED_KEY]) unstore(key);
      say('Nothing of your work is kept in this browser any more: save the project file before closing the tab.', 'info');
    } else {
      unstore(KEEP_KEY);
      say('The workspace is kept in this browser again (autosave).', 'info');
      autosaveSoon();
    }
  });
  $('start-fresh').after(' ', label);
  if (location.protocol === 'file:') {
    const note = document.createElement('small');
    note.id = 'file-storage-note';
    note.textContent = ' Opened from a file: other local pages opened in this browser can read the autosaved work.';
    label.after(note);
  }
  const share = document.createElement('p');
  share.id = 'share-privacy';
  share.textContent = 'The link carries the data themselves: anyone who has it can read them.';
  $('share-box').append(share);
  window.addEventListener('storage', otherTabSaved);
  window.addEventListener('hashchange', fragmentChanged);
}
