// ---------- data in ----------
function importOptions() {
  const num = (id) => { const v = parseFloat($(id).value); return Number.isFinite(v) && v > 0 ? v : null; };
  return {
    x_unit: $('ov-x').value || null,
    y_quantity: $('ov-y').value || null,
    air_to_vacuum: false,
    concentration_mol_l: num('ov-conc'),
    // The path length field defaults to 1 cm: pass it only with a concentration.
    path_length_cm: num('ov-conc') ? num('ov-path') : null,
  };
}

// ---------- long jobs ----------
// One job at a time runs in the worker with a progress line and a Cancel
// button; cancelling terminates the worker and starts a fresh one from the
// cached WebAssembly.Module (a compile is not repeated).
let cancelCurrent = null;
async function runJob(label, type, payload) {
  $('busy-label').textContent = label;
  $('busy-progress').removeAttribute('value');
  $('busy').hidden = false;
  cancelCurrent = () => {
    worker.terminate(); // rejects the running job with a `cancelled` error
    worker = startWorker(wasmModule);
  };
  try {
    return await worker.run(type, payload, (p) => { $('busy-progress').value = p; });
  } finally {
    cancelCurrent = null;
    $('busy').hidden = true;
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

function addReport(report, fileName, options, bytes, replaceIds = []) {
  const added = report.spectra.map((_, k) => sampleFrom(report, k, fileName, options));
  edit(() => {
    state.samples = state.samples.filter((s) => !replaceIds.includes(s.id)).concat(added);
  });
  state.lastImport = { report, fileName, bytes, options, ids: added.map((s) => s.id) };
  showImport();
}

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

async function reimport() {
  const last = state.lastImport;
  if (!last) return;
  const options = importOptions();
  try {
    addReport(await importBytes(last.bytes.slice(), last.fileName, options), last.fileName, options, last.bytes, last.ids);
  } catch (e) {
    say(String(e.message || e));
  }
}

async function loadDemo() {
  const bytes = new TextEncoder().encode(wasm_bindgen.demo_file());
  try {
    addReport(await importBytes(bytes.slice(), 'CrX-7 (demo).csv', importOptions()), 'CrX-7 (demo).csv', importOptions(), bytes);
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
  list.replaceChildren();
  state.samples.forEach((s) => {
    const li = document.createElement('li');
    li.dataset.id = s.id;
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
    const meta = Object.entries(s.metadata);
    if (meta.length) li.title = meta.map(([k, v]) => `${k}: ${v}`).join('\n');
    list.append(li);
  });
}
const find = (id) => state.samples.find((s) => s.id === id);
