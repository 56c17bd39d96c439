// ---------- data in ----------
/** The active sample's import settings from its properties panel. */
function propsImportOptions() {
  const num = (id) => { const v = parseFloat($(id).value); return Number.isFinite(v) && v > 0 ? v : null; };
  return {
    x_unit: $('ov-x').value || null,
    y_quantity: $('ov-y').value || null,
    air_to_vacuum: false,
    concentration_mol_l: num('ov-conc'),
    // A path length alone changes nothing: pass it only with a concentration.
    path_length_cm: num('ov-conc') ? num('ov-path') : null,
  };
}
/** What a new file is read with: the format as detected, no overrides (they belong to one file). */
const importOptions = () => ({ x_unit: null, y_quantity: null, air_to_vacuum: false, concentration_mol_l: null, path_length_cm: null });

// ---------- long jobs ----------
// One job at a time runs in the worker with a progress line and a Cancel
// button; cancelling terminates the worker and starts a fresh one from the
// cached WebAssembly.Module (a compile is not repeated).
let cancelCurrent = null;
/** The buttons that start a worker job: one runs at a time, the others wait disabled. */
const RUN_BUTTONS = ['fit-bands', 'refit-bands', 'bic-helper', 'lf-analyze', 'lf-analyze-all', 'lf-reanalyse'];
/** Shows a job as busy: in the pressed run button with Cancel beside it, else in the notices at the top. */
function showBusy(on) {
  const busy = $('busy');
  const pressed = on && document.activeElement && RUN_BUTTONS.includes(document.activeElement.id) ? document.activeElement : null;
  if (pressed) pressed.after(busy); else if (on) $('notices').prepend(busy);
  for (const id of RUN_BUTTONS) {
    const b = $(id);
    if (!b) continue;
    b.disabled = on && b !== pressed;
    if (b === pressed) b.setAttribute('aria-busy', 'true'); else b.removeAttribute('aria-busy');
  }
  busy.hidden = !on;
}
async function runJob(label, type, payload) {
  $('busy-label').textContent = label;
  $('busy-progress').removeAttribute('value');
  showBusy(true);
  cancelCurrent = () => {
    worker.terminate(); // rejects the running job with a `cancelled` error
    worker = startWorker(wasmModule);
  };
  try {
    return await worker.run(type, payload, (p) => { $('busy-progress').value = p; });
  } finally {
    cancelCurrent = null;
    showBusy(false);
  }
}

/** Imports one file's bytes in the worker; returns the report or throws an Error naming the file. */
async function importBytes(bytes, name, options) {
  try {
    return await runJob(`Reading ${name}…`, 'import', { bytes, name, options });
  } catch (e) {
    throw Object.assign(new Error(e.cancelled ? `${name}: reading cancelled; nothing was added` : `${name}: ${e.message || e}`), { cancelled: e.cancelled });
  }
}

/** A new sample from spectrum `k` of an import report: a blank document
 *  (the engine's default band setup) around the imported data. */
function sampleFrom(report, k, fileName, options) {
  const sp = report.spectra[k];
  const doc = wasm_bindgen.new_document({
    name: sp.name && sp.name !== fileName ? sp.name : fileName.replace(/\.[a-z0-9]+$/i, ''),
    source: { file_name: fileName, spectrum: k, import: options },
    concentration: options.concentration_mol_l, path_length: options.path_length_cm,
    metadata: sp.metadata || {},
    display: { colour: DEFAULTS.palette[state.nextColour++ % DEFAULTS.palette.length], visible: true },
    data: { wavenumber: sp.wavenumber, values: sp.values, quantity: sp.quantity, x_unit_read: sp.x_unit_read, saturated: sp.saturated || [] },
  });
  return withCleaned(new Sample(doc, { warnings: [...(report.warnings || []), ...(sp.warnings || [])] }));
}

/** Adds the spectra of an import report (in place of `replaceIds`); the first becomes the active sample. */
function addReport(report, fileName, options, bytes, replaceIds = []) {
  const added = report.spectra.map((_, k) => Object.assign(sampleFrom(report, k, fileName, options), { bytes }));
  edit(() => {
    const at = state.samples.findIndex((s) => replaceIds.includes(s.id));
    const kept = state.samples.filter((s) => !replaceIds.includes(s.id));
    state.samples = at >= 0 ? [...kept.slice(0, at), ...added, ...kept.slice(at)] : kept.concat(added);
  });
  state.lastImport = { report, fileName, bytes, options, ids: added.map((s) => s.id) };
  showImport();
  if (added.length) selectSample(added[0].id);
}

/** The file name of the invented demo spectrum (its samples are badged and left out of "Analyse all"). */
const DEMO_FILE = 'CrX-7 (demo).csv';
const isDemo = (s) => s.file === DEMO_FILE;
/** Import overrides in force for a sample (x unit or y quantity not as detected). */
const overridesOf = (s) => { const o = s.doc.sample.source.import || {}; return [o.x_unit && `x in ${o.x_unit}`, o.y_quantity && `y as ${o.y_quantity}`].filter(Boolean); };

async function openFiles(files) {
  const options = importOptions();
  for (const file of files) {
    try {
      const bytes = new Uint8Array(await file.arrayBuffer());
      if (/\.json$/i.test(file.name) || bytes[0] === 0x7b) {
        try { await loadProject(new TextDecoder().decode(bytes)); } catch (e) { throw new Error(`${file.name}: ${e.message}`); }
        continue;
      }
      addReport(await importBytes(bytes.slice(), file.name, options), file.name, options, bytes);
    } catch (e) {
      say(String(e.message || e), e.cancelled ? 'info' : 'warn');
      if (e.cancelled) break;
    }
  }
}

/** Reads the active sample's file again with its properties panel's settings (that file only). */
async function reimport() {
  const s = activeSample();
  if (!s) return;
  if (!s.bytes) { $('props-status').textContent = `The file of ${s.name} is not in this session (opened from a project): open it again to re-read it.`; return; }
  const options = propsImportOptions();
  const ids = state.samples.filter((v) => v.bytes === s.bytes).map((v) => v.id);
  try {
    addReport(await importBytes(s.bytes.slice(), s.file, options), s.file, options, s.bytes, ids);
    $('props-status').textContent = `${s.file} read again with these settings.`;
  } catch (e) {
    $('props-status').textContent = String(e.message || e);
  }
}

async function loadDemo() {
  const bytes = new TextEncoder().encode(wasm_bindgen.demo_file());
  try {
    addReport(await importBytes(bytes.slice(), DEMO_FILE, importOptions()), DEMO_FILE, importOptions(), bytes);
  } catch (e) {
    say(String(e.message || e));
  }
}

function showImport() {
  const last = state.lastImport;
  $('import-panel').hidden = !last;
  if (!last) return;
  const first = last.report.spectra[0] || {};
  const facts = [
    ['file', last.fileName], ['format', last.report.format], ['x unit read', first.x_unit_read],
    ['y quantity', first.quantity], ['spectra found', String(last.report.spectra.length)],
    ['points', last.report.spectra.map((s) => s.wavenumber.length).join(', ')],
  ];
  $('import-facts').replaceChildren(...facts.flatMap(([k, v]) => {
    const dt = document.createElement('dt'); dt.textContent = k;
    const dd = document.createElement('dd'); dd.textContent = v ?? '—';
    return [dt, dd];
  }));
  const warnings = [...(last.report.warnings || []), ...last.report.spectra.flatMap((s) => s.warnings || [])];
  $('import-warnings').replaceChildren(...warnings.map((w) => {
    const li = document.createElement('li');
    li.textContent = w.line ? `line ${w.line}: ${w.message}` : w.message;
    return li;
  }));
}

// ---------- samples ----------
function renderSamples() {
  const list = $('sample-list');
  const active = activeSample();
  const hadFocus = list.contains(document.activeElement) && document.activeElement.tagName === 'LI';
  list.replaceChildren();
  state.samples.forEach((s) => {
    const li = document.createElement('li');
    li.dataset.id = s.id;
    const on = !!active && s.id === active.id;
    li.className = `${on ? 'active' : ''}${isDemo(s) ? ' demo' : ''}${isDemo(s) && !on && state.samples.length > 1 ? ' collapsed' : ''}`;
    li.tabIndex = on ? 0 : -1;
    if (on) li.setAttribute('aria-current', 'true');
    li.setAttribute('aria-label', `${s.name}${on ? ' (active)' : ''}`);
    li.addEventListener('click', (e) => { if (!on && !e.target.closest('input, button, select')) selectSample(s.id); });
    const box = document.createElement('input');
    box.type = 'checkbox';
    box.checked = s.visible;
    box.setAttribute('aria-label', `show ${s.name}`);
    box.addEventListener('change', () => edit(() => withDoc(find(s.id), (d) => { d.sample.display.visible = box.checked; })));
    const colour = document.createElement('input');
    colour.type = 'color';
    colour.value = s.colour;
    colour.setAttribute('aria-label', `colour of ${s.name}`);
    colour.addEventListener('change', () => edit(() => withDoc(find(s.id), (d) => { d.sample.display.colour = colour.value; })));
    const name = document.createElement('input');
    name.type = 'text';
    name.value = s.name;
    name.setAttribute('aria-label', 'sample name');
    name.addEventListener('change', () => edit(() => withDoc(find(s.id), (d) => { d.sample.name = name.value.trim() || s.name; })));
    const count = document.createElement('span');
    count.className = 'count';
    count.textContent = `${s.wavenumber.length} points`;
    const remove = document.createElement('button');
    remove.type = 'button';
    remove.className = 'icon';
    remove.textContent = '×';
    remove.setAttribute('aria-label', `remove ${s.name}`);
    remove.addEventListener('click', () => edit(() => { state.samples = state.samples.filter((v) => v.id !== s.id); }));
    li.append(box, colour, name, count, remove);
    const badges = [...(isDemo(s) ? ['invented demo data'] : []), ...overridesOf(s).map((o) => `override: ${o}`)];
    for (const text of badges) li.append(Object.assign(document.createElement('span'), { className: 'badge', textContent: text }));
    const meta = Object.entries(s.metadata);
    if (meta.length) li.title = meta.map(([k, v]) => `${k}: ${v}`).join('\n');
    list.append(li);
  });
  if (hadFocus) { const li = list.querySelector('li.active'); if (li) li.focus(); }
}

/** Up and down arrows (Home, End) on the sample list change the active sample. */
function sampleListKeys(e) {
  if (e.target.tagName !== 'LI' || !['ArrowUp', 'ArrowDown', 'Home', 'End'].includes(e.key)) return;
  e.preventDefault();
  const k = state.samples.findIndex((s) => s.id === Number(e.target.dataset.id));
  const to = { ArrowUp: k - 1, ArrowDown: k + 1, Home: 0, End: state.samples.length - 1 }[e.key];
  const s = state.samples[Math.min(Math.max(to, 0), state.samples.length - 1)];
  if (!s) return;
  selectSample(s.id);
  const li = $('sample-list').querySelector('li.active');
  if (li) li.focus();
}

/** The properties panel of the active sample: concentration, path length and its own import overrides. */
function renderProps() {
  const s = activeSample();
  $('props').hidden = !s;
  if (!s) return;
  $('props-for').textContent = s.name;
  const o = s.doc.sample.source.import || {};
  const focused = document.activeElement && document.activeElement.id;
  const set = (id, v) => { if (focused !== id) $(id).value = v ?? ''; };
  set('ov-conc', s.concentration);
  set('ov-path', s.path);
  set('ov-x', o.x_unit || '');
  set('ov-y', o.y_quantity || '');
  $('reimport').disabled = !s.bytes;
  if (focused !== 'reimport') $('props-status').textContent = s.bytes ? '' : 'Opened from a project: open the file again to change how it is read.';
}

/** Sets the active sample's concentration and path length (for ε and f) as one undoable edit. */
function setAmounts() {
  const s = activeSample();
  if (!s) return;
  const num = (id) => { const v = parseFloat($(id).value); return Number.isFinite(v) && v > 0 ? v : null; };
  const [c, l] = [num('ov-conc'), num('ov-path')];
  if (c === s.concentration && l === s.path) return;
  edit(() => markStale(withDoc(find(s.id), (d) => { d.sample.concentration = c; d.sample.path_length = l; }), 'the concentration or path length changed'));
}

function wireSamples() {
  $('sample-list').addEventListener('keydown', sampleListKeys);
  $('ov-conc').addEventListener('change', setAmounts);
  $('ov-path').addEventListener('change', setAmounts);
}
const find = (id) => state.samples.find((s) => s.id === id);
