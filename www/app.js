// ddlens page shell: file drop, sample list, plots and exports.
// All science runs in wasm (core functions behind src/web, the worker's
// jobs); this file only moves data between the DOM, the worker and the
// drawing functions, and keeps the undo history of the user's edits.
/* global wasm_bindgen */
'use strict';

const ddlens = (() => {
  const $ = (id) => document.getElementById(id);
  const PALETTE = ['#0072b2', '#d55e00', '#009e73', '#cc79a7', '#e69f00', '#56b4e9', '#000000'];
  const EV_PER_CM = 1 / 8065.544; // CODATA 2018 hc/e in cm⁻¹ per eV (rounded)
  const state = {
    samples: [], frame: null, nextColour: 0, nextId: 1, lastImport: null, lastDrawMs: 0,
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

  // ---------- undo history ----------
  // Each entry is a snapshot of the sample list (the data arrays are never
  // mutated, so a snapshot copies only the small per-sample records).
  const history = { past: [], future: [] };
  const snapshot = () => state.samples.map((s) => ({ ...s }));
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
    renderBands();
    draw();
    autosaveSoon();
  }

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

  function addReport(report, fileName, options, bytes, replaceIds = []) {
    const added = report.spectra.map((sp) => ({
      id: state.nextId++,
      name: sp.name && sp.name !== fileName ? sp.name : fileName.replace(/\.[a-z0-9]+$/i, ''),
      file: fileName,
      wavenumber: sp.wavenumber,
      values: sp.values,
      raw: { wavenumber: sp.wavenumber, values: sp.values },
      processing: null,
      quantity: sp.quantity,
      xUnit: sp.x_unit_read,
      saturated: sp.saturated || [],
      metadata: sp.metadata || {},
      warnings: [...(report.warnings || []), ...(sp.warnings || [])],
      concentration: options.concentration_mol_l,
      path: options.path_length_cm,
      colour: PALETTE[state.nextColour++ % PALETTE.length],
      visible: true,
    }));
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
          let doc;
          try { doc = JSON.parse(new TextDecoder().decode(bytes)); } catch { throw new Error(`${file.name}: not valid JSON, so not a ddlens project`); }
          try { await loadProject(doc); } catch (e) { throw new Error(`${file.name}: ${e.message}`); }
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
      box.addEventListener('change', () => edit(() => { find(s.id).visible = box.checked; }));
      const colour = document.createElement('input');
      colour.type = 'color';
      colour.value = s.colour;
      colour.setAttribute('aria-label', `colour of ${s.name}`);
      colour.addEventListener('change', () => edit(() => { find(s.id).colour = colour.value; }));
      const name = document.createElement('input');
      name.type = 'text';
      name.value = s.name;
      name.setAttribute('aria-label', 'sample name');
      name.addEventListener('change', () => edit(() => { find(s.id).name = name.value.trim() || s.name; }));
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

  // ---------- bands ----------
  const est = (e) => (e && Number.isFinite(e.value) ? (e.sigma != null ? `${+e.value.toPrecision(5)} ± ${+e.sigma.toPrecision(2)}` : `${+e.value.toPrecision(5)}`) : '—');

  async function fitBands() {
    const s = find(Number($('clean-target').value));
    if (!s) return;
    const n = parseInt($('band-count').value, 10);
    try {
      const result = await runJob(`Fitting bands to ${s.name}…`, 'fit', {
        x: Float64Array.from(s.wavenumber), y: Float64Array.from(s.values),
        n: Number.isFinite(n) && n > 0 ? n : 0, shape: $('band-shape').value,
      });
      edit(() => { find(s.id).fit = { ...result, x: s.wavenumber }; });
    } catch (e) {
      say(e.cancelled ? `${s.name}: fit cancelled` : `${s.name}: ${e.message || e}`, e.cancelled ? 'info' : 'warn');
    }
  }

  /** The band table as rows of cells (value and σ in separate columns, full precision). */
  function bandRows() {
    const s = find(Number($('clean-target').value));
    const fit = s && s.fit && s.fit.fit;
    if (!fit) return null;
    const cols = [['centre_cm-1', 'centre'], ['centre_nm', 'centre_nm'], ['fwhm_cm-1', 'fwhm'], ['height', 'height'], ['area', 'area'], ['f', 'oscillator_strength']];
    const head = ['band', 'shape', ...cols.flatMap(([n]) => [n, `${n}_sigma`]), 'class'];
    const num = (v) => (v == null || !Number.isFinite(v) ? '' : String(v));
    const rows = fit.bands.map((b, i) => [String(i + 1), b.shape, ...cols.flatMap(([, k]) => [num(b[k] && b[k].value), num(b[k] && b[k].sigma)]), b.class || '']);
    return { name: s.name, rows: [head, ...rows] };
  }

  function exportBandsCsv() {
    const t = bandRows();
    if (!t) { say('Fit bands first: there is no band table to export.'); return; }
    const quote = (c) => (/[",\n]/.test(c) ? `"${c.replace(/"/g, '""')}"` : c);
    download(new Blob([`${t.rows.map((r) => r.map(quote).join(',')).join('\n')}\n`], { type: 'text/csv' }), `${t.name.replace(/[^\w.-]+/g, '_')}-bands.csv`);
  }

  async function copyBands() {
    const t = bandRows();
    if (!t) { say('Fit bands first: there is no band table to copy.'); return; }
    try {
      await navigator.clipboard.writeText(`${t.rows.map((r) => r.join('\t')).join('\n')}\n`);
      say('Band table copied as tab-separated text.', 'info');
    } catch (e) {
      say(`The clipboard refused the table: ${e.message || e}`);
    }
  }

  function renderBands() {
    const s = find(Number($('clean-target').value));
    const fit = s && s.fit && s.fit.fit;
    $('band-table').hidden = !fit;
    if (!fit) return;
    const st = fit.statistics;
    $('fit-stats').textContent = `${s.name}: ${fit.bands.length} bands · χ²ᵥ ${st.reduced_chi2 != null ? st.reduced_chi2.toPrecision(3) : '—'} · R² ${st.r2 != null ? st.r2.toFixed(4) : '—'} · BIC ${st.bic != null ? st.bic.toFixed(1) : '—'} · ${st.evaluations} evaluations`;
    $('band-table').tBodies[0].replaceChildren(...fit.bands.map((b, i) => {
      const tr = document.createElement('tr');
      for (const v of [String(i + 1), b.shape, est(b.centre), est(b.centre_nm), est(b.fwhm), est(b.height), est(b.area), est(b.oscillator_strength), b.class || '—']) {
        const td = document.createElement('td');
        td.textContent = v;
        tr.append(td);
      }
      return tr;
    }));
  }

  // ---------- cleaning ----------
  // A sample keeps the file's data (`raw`) and the steps applied to it
  // (`processing`); `wavenumber`/`values` are recomputed from both, so any
  // step can be changed or dropped and the edit history restores them.
  function processed(raw, p) {
    let x = raw.wavenumber, y = raw.values;
    if (p && p.crop) {
      const keep = x.map((v, i) => i).filter((i) => x[i] >= p.crop[0] && x[i] <= p.crop[1]);
      if (keep.length < 2) throw new Error('the crop range holds fewer than two points');
      x = keep.map((i) => x[i]);
      y = keep.map((i) => y[i]);
    }
    if (p && p.smooth) y = Array.from(wasm_bindgen.smooth_savgol(Float64Array.from(y), p.smooth.window, p.smooth.order));
    return { x, y };
  }

  function renderCleanTargets() {
    const sel = $('clean-target');
    const current = Number(sel.value);
    sel.replaceChildren(...state.samples.map((s) => {
      const o = document.createElement('option');
      o.value = s.id;
      o.textContent = s.name;
      return o;
    }));
    if (find(current)) sel.value = String(current);
    showCleaning();
  }

  function showCleaning() {
    const s = find(Number($('clean-target').value));
    const p = (s && s.processing) || {};
    $('crop-lo').value = p.crop ? p.crop[0] : '';
    $('crop-hi').value = p.crop ? p.crop[1] : '';
    $('smooth-on').checked = !!p.smooth;
    if (p.smooth) { $('smooth-window').value = p.smooth.window; $('smooth-order').value = p.smooth.order; }
  }

  function applyCleaning(clear = false) {
    const s = find(Number($('clean-target').value));
    if (!s) return;
    const lo = parseFloat($('crop-lo').value), hi = parseFloat($('crop-hi').value);
    const p = clear ? null : {
      crop: Number.isFinite(lo) && Number.isFinite(hi) ? [Math.min(lo, hi), Math.max(lo, hi)] : null,
      smooth: $('smooth-on').checked ? { window: parseInt($('smooth-window').value, 10), order: parseInt($('smooth-order').value, 10) } : null,
    };
    let out;
    try {
      out = processed(s.raw, p);
    } catch (e) {
      say(`${s.name}: ${e.message || e}`);
      return;
    }
    edit(() => Object.assign(find(s.id), { processing: p, wavenumber: out.x, values: out.y, fit: null }));
  }

  // ---------- plotting ----------
  /** The y values shown for a sample in the chosen y mode, or null with a reason. */
  function shownValues(s) {
    const mode = state.view.yMode;
    if (mode === 'a' || s.quantity === 'molar_absorptivity' && mode === 'eps') return s.values;
    const cl = s.quantity === 'molar_absorptivity' ? 1 : (s.concentration || 0) * (s.path || 0);
    if (!(cl > 0)) return null;
    const eps = s.values.map((v) => v / cl);
    return mode === 'eps' ? eps : eps.map((v) => (v > 0 ? Math.log10(v) : NaN));
  }

  function figure() {
    const lines = [], shaded = [];
    for (const s of state.samples) {
      if (!s.visible) continue;
      const y = shownValues(s);
      if (!y) continue;
      if (s.processing && state.view.yMode === 'a') lines.push({ x: s.raw.wavenumber, y: s.raw.values, colour: '#858585', width: 1 });
      lines.push({ x: s.wavenumber, y, colour: s.colour, width: 1.5 });
      if (s.fit && state.view.yMode === 'a') {
        s.fit.components.forEach((c, k) => lines.push({ x: s.fit.x, y: c, colour: PALETTE[(k + 1) % PALETTE.length], fill: true }));
        lines.push({ x: s.fit.x, y: s.fit.total, colour: '#000000', width: 1.5, dashed: true });
      }
      shaded.push(...s.saturated);
    }
    const v = state.view;
    const markers = state.lf && state.samples.some((x) => x.id === state.lf.sampleId && x.visible) ? predictions() : [];
    return {
      lines, shaded, markers,
      x_range: v.x, y_range: v.y, nm_bottom: v.nmBottom,
      y_label: { a: 'absorbance', eps: 'ε / M⁻¹ cm⁻¹', logeps: 'log(ε / M⁻¹ cm⁻¹)' }[v.yMode],
    };
  }

  let drawQueued = false;
  function draw() {
    const canvas = $('spectrum-canvas');
    const dpr = window.devicePixelRatio || 1;
    const rect = canvas.getBoundingClientRect();
    const w = Math.max(1, Math.round(rect.width * dpr)), h = Math.max(1, Math.round(rect.height * dpr));
    if (canvas.width !== w) canvas.width = w;
    if (canvas.height !== h) canvas.height = h;
    const t0 = performance.now();
    try {
      state.frame = wasm_bindgen.draw_spectrum(canvas, figure(), dpr);
    } catch (e) {
      say(`The plot could not be drawn: ${e.message || e}`);
    }
    state.lastDrawMs = performance.now() - t0;
  }
  function drawSoon() {
    if (drawQueued) return;
    drawQueued = true;
    requestAnimationFrame(() => { drawQueued = false; draw(); });
  }

  // ---------- zoom, pan, read-out ----------
  // The frame maps backend pixels to bottom-axis units (nm when nm_bottom);
  // the view keeps x in cm⁻¹ always.
  function toData(event) {
    const f = state.frame;
    if (!f) return null;
    const canvas = $('spectrum-canvas');
    const dpr = window.devicePixelRatio || 1;
    const r = canvas.getBoundingClientRect();
    const px = (event.clientX - r.left) * dpr, py = (event.clientY - r.top) * dpr;
    const [l, t, rr, b] = f.area;
    const xb = f.x_range[0] + (px - l) / (rr - l) * (f.x_range[1] - f.x_range[0]);
    const y = f.y_range[1] - (py - t) / (b - t) * (f.y_range[1] - f.y_range[0]);
    return { inside: px >= l && px <= rr && py >= t && py <= b, cm: f.nm_bottom ? 1e7 / xb : xb, xb, y, px, py };
  }
  const currentX = () => {
    const f = state.frame;
    return f.nm_bottom ? [1e7 / f.x_range[1], 1e7 / f.x_range[0]] : [...f.x_range];
  };
  /** Zooms x about the bottom-axis position `xb` by `factor` (< 1 zooms in). */
  function zoomAt(xb, factor) {
    const f = state.frame;
    if (!f) return;
    const [a, b] = f.x_range;
    const na = xb - (xb - a) * factor, nb = xb + (b - xb) * factor;
    state.view.x = f.nm_bottom ? [1e7 / nb, 1e7 / na] : [na, nb];
    state.view.y = null;
    drawSoon();
  }
  function panBy(fraction) {
    const f = state.frame;
    if (!f) return;
    const d = (f.x_range[1] - f.x_range[0]) * fraction;
    const [a, b] = [f.x_range[0] + d, f.x_range[1] + d];
    state.view.x = f.nm_bottom ? [1e7 / b, 1e7 / a] : [a, b];
    drawSoon();
  }
  function resetView() {
    state.view.x = null;
    state.view.y = null;
    draw();
  }

  function readout(event) {
    const p = toData(event);
    if (!p || !p.inside) { $('readout').textContent = '\u00a0'; return; }
    $('readout').textContent = `${p.cm.toFixed(0)} cm⁻¹ · ${(1e7 / p.cm).toFixed(1)} nm · ${(p.cm * EV_PER_CM).toFixed(3)} eV · y = ${p.y.toPrecision(4)}`;
  }

  function wirePlot() {
    const canvas = $('spectrum-canvas');
    const box = $('zoom-box');
    let drag = null;
    canvas.addEventListener('wheel', (e) => {
      const p = toData(e);
      if (!p || !p.inside) return;
      e.preventDefault();
      zoomAt(p.xb, e.deltaY < 0 ? 0.8 : 1.25);
    }, { passive: false });
    canvas.addEventListener('pointerdown', (e) => {
      const p = toData(e);
      if (!p || !p.inside || e.button !== 0) return;
      canvas.setPointerCapture(e.pointerId);
      drag = { start: p, pan: e.shiftKey, x0: currentX(), clientX: e.clientX, clientY: e.clientY, y0: state.frame.y_range };
    });
    canvas.addEventListener('pointermove', (e) => {
      readout(e);
      if (!drag) return;
      if (drag.pan) {
        const f = state.frame;
        const dpr = window.devicePixelRatio || 1;
        const dx = (e.clientX - drag.clientX) * dpr / (f.area[2] - f.area[0]);
        const dy = (e.clientY - drag.clientY) * dpr / (f.area[3] - f.area[1]);
        const [a, b] = f.nm_bottom ? [1e7 / drag.x0[1], 1e7 / drag.x0[0]] : drag.x0;
        const sx = (b - a) * dx, sy = (drag.y0[1] - drag.y0[0]) * dy;
        state.view.x = f.nm_bottom ? [1e7 / (b - sx), 1e7 / (a - sx)] : [a - sx, b - sx];
        state.view.y = [drag.y0[0] + sy, drag.y0[1] + sy];
        drawSoon();
      } else {
        const r = canvas.getBoundingClientRect();
        Object.assign(box.style, {
          left: `${Math.min(e.clientX, drag.clientX) - r.left}px`, top: `${Math.min(e.clientY, drag.clientY) - r.top}px`,
          width: `${Math.abs(e.clientX - drag.clientX)}px`, height: `${Math.abs(e.clientY - drag.clientY)}px`,
        });
        box.hidden = false;
      }
    });
    canvas.addEventListener('pointerup', (e) => {
      if (!drag) return;
      const d = drag;
      drag = null;
      box.hidden = true;
      if (d.pan) return;
      const p = toData(e);
      if (!p || Math.abs(e.clientX - d.clientX) < 5 || Math.abs(e.clientY - d.clientY) < 5) return;
      state.view.x = [Math.min(d.start.cm, p.cm), Math.max(d.start.cm, p.cm)];
      state.view.y = [Math.min(d.start.y, p.y), Math.max(d.start.y, p.y)];
      draw();
    });
    canvas.addEventListener('dblclick', resetView);
    canvas.addEventListener('mouseleave', () => { $('readout').textContent = '\u00a0'; });
    canvas.addEventListener('keydown', (e) => {
      const f = state.frame;
      if (!f) return;
      const mid = (f.x_range[0] + f.x_range[1]) / 2;
      const keys = {
        ArrowLeft: () => panBy(-0.1), ArrowRight: () => panBy(0.1),
        '+': () => zoomAt(mid, 0.8), '=': () => zoomAt(mid, 0.8), '-': () => zoomAt(mid, 1.25),
        0: resetView, Home: resetView,
      };
      if (keys[e.key]) { e.preventDefault(); keys[e.key](); }
    });
  }

  // ---------- exports ----------
  function download(blob, name) {
    const a = document.createElement('a');
    a.href = URL.createObjectURL(blob);
    a.download = name;
    document.body.append(a);
    a.click();
    a.remove();
    setTimeout(() => URL.revokeObjectURL(a.href), 10000);
  }

  function baseName() {
    const s = state.samples.find((v) => v.visible);
    return (s ? s.name : 'ddlens').replace(/\.[a-z0-9]+$/i, '').replace(/[^\w.-]+/g, '_');
  }

  function exportSvg() {
    const svg = wasm_bindgen.spectrum_svg(figure(), 1200, 600);
    download(new Blob([svg], { type: 'image/svg+xml' }), `${baseName()}-spectrum.svg`);
  }

  function exportPng() {
    const canvas = document.createElement('canvas');
    canvas.width = 3600; canvas.height = 1800;
    wasm_bindgen.draw_spectrum(canvas, figure(), 3);
    canvas.toBlob((blob) => download(blob, `${baseName()}-spectrum-300dpi.png`), 'image/png');
  }

  /** The visible spectra as shown (y mode applied), one block of columns per sample. */
  function exportCsv() {
    const shown = state.samples.filter((s) => s.visible).map((s) => ({ s, y: shownValues(s) })).filter((v) => v.y);
    if (!shown.length) { say('No visible spectrum to export.'); return; }
    const label = { a: 'absorbance', eps: 'epsilon_M-1cm-1', logeps: 'log_epsilon' }[state.view.yMode];
    const quote = (t) => `"${String(t).replace(/"/g, '""')}"`;
    const header = shown.flatMap(({ s }) => [quote(`${s.name} wavenumber_cm-1`), quote(`${s.name} wavelength_nm`), quote(`${s.name} ${label}`)]);
    const rows = [header.join(',')];
    const n = Math.max(...shown.map(({ s }) => s.wavenumber.length));
    for (let i = 0; i < n; i++) {
      rows.push(shown.flatMap(({ s, y }) => (i < s.wavenumber.length
        ? [s.wavenumber[i], 1e7 / s.wavenumber[i], y[i]].map((v) => (Number.isFinite(v) ? String(+v.toPrecision(8)) : ''))
        : ['', '', ''])).join(','));
    }
    download(new Blob([`${rows.join('\n')}\n`], { type: 'text/csv' }), `${baseName()}-spectra.csv`);
  }


  // ---------- ligand field ----------
  // The analysis runs in the worker (core pipeline); predictions for the
  // what-if control come from the engine's levels on the main thread.
  const fmt = (e, unit = '') => {
    if (!e || !Number.isFinite(e.value)) return '—';
    if (e.sigma == null) return `${+e.value.toPrecision(4)}${unit}`;
    const d = Math.max(0, 1 - Math.floor(Math.log10(e.sigma)));
    const group = (v) => v.toFixed(d).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
    return `${group(e.value)} ± ${group(e.sigma)}${unit}`;
  };

  function fillIons() {
    const sel = $('lf-ion');
    for (const ion of wasm_bindgen.ions()) {
      const o = document.createElement('option');
      o.value = ion.symbol;
      o.textContent = `${ion.symbol} (d${ion.d_electrons})`;
      o.dataset.n = ion.d_electrons;
      sel.append(o);
    }
    sel.value = 'Cr3+';
    for (const l of wasm_bindgen.ligands()) {
      const o = document.createElement('option');
      o.value = l.name;
      o.textContent = l.name;
      $('lf-ligand').append(o);
    }
  }

  function lfOptions() {
    const cb = parseFloat($('lf-cb').value);
    const n = parseInt($('band-count').value, 10);
    return {
      import: {}, spectrum: 0, range: null,
      bands: Number.isFinite(n) && n > 0 ? { fixed: n } : { auto: 6 },
      shape: $('band-shape').value, baseline: 'linear', max_iterations: 200,
      ligand_field: {
        ion: $('lf-ion').value, geometry: $('lf-geometry').value,
        c_over_b: Number.isFinite(cb) ? cb : null,
        free_c: $('lf-free-c').checked, spin_forbidden: $('lf-spin-forbidden').checked,
        b0_source: $('lf-b0').value,
        ligand: $('lf-ligand').value || null,
      },
    };
  }

  async function analyzeSample() {
    const s = find(Number($('clean-target').value));
    if (!s) { say('Load a spectrum first.', 'info'); return; }
    const spectrum = { name: s.name, wavenumber: Array.from(s.wavenumber), values: Array.from(s.values), quantity: s.quantity, saturated: s.saturated };
    try {
      const analysis = await runJob(`Analysing ${s.name}…`, 'analyze', { spectrum, options: lfOptions() });
      state.lf = { sampleId: s.id, analysis, whatIf: null, n: Number($('lf-ion').selectedOptions[0].dataset.n), geometry: $('lf-geometry').value };
      if (!analysis.fit) say(`${s.name}: no ligand-field fit — ${analysis.fit_error}`);
      renderLf();
      draw();
      autosaveSoon();
    } catch (e) {
      say(e.cancelled ? `${s.name}: analysis cancelled` : `${s.name}: ${e.message || e}`, e.cancelled ? 'info' : 'warn');
    }
  }

  function row(tbody, cells, header = false) {
    const tr = document.createElement('tr');
    cells.forEach((c, i) => {
      const td = document.createElement(header && i === 0 ? 'th' : 'td');
      if (header && i === 0) td.scope = 'row';
      td.textContent = c;
      tr.append(td);
    });
    tbody.append(tr);
  }

  function renderLf() {
    const lf = state.lf;
    const fit = lf && lf.analysis.fit;
    $('lf-results').hidden = !fit;
    if (!fit) return;
    const b = fit.best, d = b.derived, p = b.parameters;
    const card = $('lf-card').tBodies[0];
    card.replaceChildren();
    row(card, ['10Dq (Δ)', fmt(d.delta, ' cm⁻¹')], true);
    row(card, ['B', fmt(p.b, ' cm⁻¹')], true);
    row(card, ['C', fmt(p.c, ' cm⁻¹')], true);
    row(card, ['C/B', fmt(d.c_over_b)], true);
    row(card, ['β = B/B₀', d.beta ? `${fmt(d.beta)} (B₀ = ${d.b0} cm⁻¹, ${d.b0_source})` : '— (no free-ion B₀)'], true);
    row(card, ['Dq/B', fmt(d.dq_over_b)], true);
    const margin = b.spin.margin != null ? ` — spin change at Δ/B = ${b.spin.spin_change_delta_over_b.toFixed(2)} (margin ${b.spin.margin >= 0 ? '+' : ''}${b.spin.margin.toFixed(2)})` : '';
    row(card, ['ground state', `${b.ground_typeset}, ${b.spin.state}${margin}`], true);
    if (fit.jorgensen) {
      const j = fit.jorgensen;
      row(card, [`Jørgensen estimate (${j.ligand})`, `Δ ≈ ${j.delta ? j.delta.toFixed(0) + ' cm⁻¹' : '—'}, β ≈ ${j.beta ? j.beta.toFixed(2) : '—'} (${j.source})`], true);
    }
    row(card, ['χ²', `${b.chi2.toPrecision(3)} (${b.degrees_of_freedom} degrees of freedom)`], true);
    const at = $('lf-assignment').tBodies[0];
    at.replaceChildren();
    for (const a of b.assignment) row(at, [a.observed.toFixed(0), (1e7 / a.observed).toFixed(1), a.typeset, a.calculated.toFixed(0), a.residual.toFixed(0)]);
    const w = $('lf-warnings');
    w.replaceChildren();
    for (const text of [...b.warnings, ...fit.warnings, ...lf.analysis.warnings, ...b.notes]) {
      const li = document.createElement('li');
      li.textContent = text;
      w.append(li);
    }
    const alt = $('lf-alternatives').tBodies[0];
    alt.replaceChildren();
    for (const a of fit.alternatives.slice(0, 6)) {
      row(alt, [a.delta_chi2.toFixed(2), a.derived.delta.value.toFixed(0), a.parameters.b ? a.parameters.b.value.toFixed(0) : '—',
        a.assignment.map((x) => x.typeset).join(', '), a.warnings[0] || (a.plausible ? 'higher χ² or a lower band left unobserved' : '')]);
    }
    const x = d.delta_over_b ? d.delta_over_b.value : 20;
    $('whatif-x').value = x;
    $('whatif-x-out').textContent = x.toFixed(2);
    $('whatif-b').value = p.b ? Math.round(p.b.value) : 700;
    drawDiagram();
  }

  /** Transitions (energy, typeset, spin-allowed) at the what-if point, or the fit's predictions. */
  function predictions() {
    const lf = state.lf;
    const fit = lf && lf.analysis.fit;
    if (!fit) return [];
    if (!lf.whatIf) return fit.best.predicted.map((p) => ({ x: p.energy, sigma: p.sigma || 0, label: p.typeset, dashed: !p.spin_allowed }));
    const { x, b } = lf.whatIf;
    const gamma = fit.best.derived.c_over_b ? fit.best.derived.c_over_b.value : 4.5;
    const levels = wasm_bindgen.levels(lf.n, lf.geometry, x * b / 10, b, gamma * b);
    const ground = levels[0];
    return levels.slice(1).filter((l) => l.energy < 50000)
      .map((l) => ({ x: l.energy, sigma: 0, label: l.typeset, dashed: l.multiplicity !== ground.multiplicity }));
  }

  function drawDiagram() {
    const lf = state.lf;
    const fit = lf && lf.analysis.fit;
    if (!fit) return;
    const canvas = $('diagram-canvas');
    const dpr = window.devicePixelRatio || 1;
    const r = canvas.getBoundingClientRect();
    canvas.width = Math.max(1, Math.round(r.width * dpr));
    canvas.height = Math.max(1, Math.round(r.height * dpr));
    const b = fit.best;
    const gamma = b.derived.c_over_b ? b.derived.c_over_b.value : 4.5;
    const xFit = lf.whatIf ? lf.whatIf.x : (b.derived.delta_over_b ? b.derived.delta_over_b.value : null);
    const bValue = lf.whatIf ? lf.whatIf.b : (b.parameters.b ? b.parameters.b.value : null);
    const observed = xFit != null && bValue ? b.assignment.map((a) => [xFit, a.observed / bValue]) : [];
    const max = Math.max(40, Math.ceil((xFit || 0) * 1.25));
    lf.diagram = { n: lf.n, geometry: lf.geometry, c_over_b: gamma, max_delta_over_b: max, fitted: xFit, observed };
    try {
      wasm_bindgen.draw_level_diagram(canvas, lf.diagram, dpr);
    } catch (e) {
      say(`The diagram could not be drawn: ${e.message || e}`);
    }
  }

  function whatIf() {
    if (!state.lf) return;
    const x = parseFloat($('whatif-x').value), b = parseFloat($('whatif-b').value);
    if (!(x > 0 && b > 0)) return;
    state.lf.whatIf = { x, b };
    $('whatif-x-out').textContent = x.toFixed(2);
    drawSoon();
    drawDiagram();
  }

  function wireLf() {
    fillIons();
    $('lf-analyze').addEventListener('click', analyzeSample);
    $('whatif-x').addEventListener('input', whatIf);
    $('whatif-b').addEventListener('input', whatIf);
    $('whatif-reset').addEventListener('click', () => { if (state.lf) { state.lf.whatIf = null; renderLf(); draw(); } });
    $('save-project').addEventListener('click', saveProject);
    $('share-link').addEventListener('click', () => shareLink().catch((e) => say(`No share link: ${e.message || e}`)));
    $('start-fresh').addEventListener('click', startFresh);
    $('diagram-svg').addEventListener('click', () => {
      if (!state.lf || !state.lf.diagram) return;
      const svg = wasm_bindgen.level_diagram_svg(state.lf.diagram);
      download(new Blob([svg], { type: 'image/svg+xml' }), `${baseName()}-diagram.svg`);
    });
  }

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
  });
  function setLfControls(c) {
    $('lf-ion').value = c.ion; $('lf-geometry').value = c.geometry; $('lf-cb').value = c.c_over_b || '';
    $('lf-free-c').checked = !!c.free_c; $('lf-spin-forbidden').checked = !!c.spin_forbidden; $('lf-b0').value = c.b0 || 'common'; $('lf-ligand').value = c.ligand || '';
  }

  function projectDoc() {
    const keep = ['name', 'file', 'quantity', 'xUnit', 'saturated', 'metadata', 'concentration', 'path', 'colour', 'visible'];
    const selected = state.samples.findIndex((s) => s.id === Number($('clean-target').value));
    return {
      ddlens_project: PROJECT_SCHEMA,
      program: `ddlens ${wasm_bindgen.version()}`,
      saved: new Date().toISOString(),
      samples: state.samples.map((s) => ({ ...Object.fromEntries(keep.map((k) => [k, s[k]])), wavenumber: Array.from(s.wavenumber), values: Array.from(s.values) })),
      selected,
      bands: { count: $('band-count').value, shape: $('band-shape').value },
      ligand_field: state.lf ? { controls: lfControls(), sample: state.samples.findIndex((s) => s.id === state.lf.sampleId) } : null,
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
    edit(() => {
      state.samples = doc.samples.map((s) => ({
        ...s, id: state.nextId++, raw: { wavenumber: s.wavenumber, values: s.values }, processing: null, fit: null,
        saturated: s.saturated || [], metadata: s.metadata || {}, warnings: [], colour: s.colour || PALETTE[state.nextColour++ % PALETTE.length], visible: s.visible !== false,
      }));
    });
    state.lf = null;
    if (doc.view) Object.assign(state.view, doc.view);
    if (doc.bands) { $('band-count').value = doc.bands.count || ''; $('band-shape').value = doc.bands.shape || 'gaussian'; }
    const pick = (i) => state.samples[i] && ($('clean-target').value = String(state.samples[i].id));
    pick(doc.selected);
    if (doc.ligand_field && state.samples[doc.ligand_field.sample]) {
      setLfControls(doc.ligand_field.controls);
      pick(doc.ligand_field.sample);
      await analyzeSample();
    }
    refresh();
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
    state.lf = null;
    history.past = []; history.future = [];
    state.samples = [];
    if (location.hash) window.history.replaceState(null, '', location.href.split('#')[0]);
    await loadDemo();
    history.past = [];
    refresh();
  }

  // ---------- wiring ----------
  function wire() {
    $('file-input').addEventListener('change', (e) => { openFiles([...e.target.files]); e.target.value = ''; });
    $('open-label').addEventListener('keydown', (e) => {
      if (e.key === 'Enter' || e.key === ' ') { e.preventDefault(); $('file-input').click(); }
    });
    $('demo-button').addEventListener('click', loadDemo);
    $('undo-button').addEventListener('click', undo);
    $('redo-button').addEventListener('click', redo);
    $('export-svg').addEventListener('click', exportSvg);
    $('export-png').addEventListener('click', exportPng);
    $('export-csv').addEventListener('click', exportCsv);
    $('reimport').addEventListener('click', reimport);
    $('reset-view').addEventListener('click', resetView);
    $('busy-cancel').addEventListener('click', () => cancelCurrent && cancelCurrent());
    $('clean-target').addEventListener('change', () => { showCleaning(); renderBands(); });
    $('fit-bands').addEventListener('click', fitBands);
    $('bands-csv').addEventListener('click', exportBandsCsv);
    $('bands-copy').addEventListener('click', copyBands);
    $('clean-apply').addEventListener('click', () => applyCleaning());
    $('clean-clear').addEventListener('click', () => applyCleaning(true));
    $('crop-view').addEventListener('click', () => {
      if (!state.frame) return;
      const [a, b] = currentX();
      $('crop-lo').value = Math.round(a);
      $('crop-hi').value = Math.round(b);
    });
    $('nm-bottom').addEventListener('change', (e) => { state.view.nmBottom = e.target.checked; draw(); });
    $('y-mode').addEventListener('change', (e) => {
      state.view.yMode = e.target.value;
      state.view.y = null;
      const hidden = state.samples.filter((s) => s.visible && !shownValues(s));
      if (hidden.length) say(`${hidden.map((s) => s.name).join(', ')}: give concentration and path length in the import panel to show ε.`, 'info');
      draw();
    });
    window.addEventListener('dragover', (e) => { e.preventDefault(); document.body.classList.add('dragging'); });
    window.addEventListener('dragleave', () => document.body.classList.remove('dragging'));
    window.addEventListener('drop', (e) => {
      e.preventDefault();
      document.body.classList.remove('dragging');
      openFiles([...(e.dataTransfer ? e.dataTransfer.files : [])]);
    });
    window.addEventListener('paste', async (e) => {
      if (e.target instanceof HTMLInputElement) return;
      const text = e.clipboardData && e.clipboardData.getData('text/plain');
      if (!text) return;
      const name = `pasted ${state.nextId}.txt`;
      const bytes = new TextEncoder().encode(text);
      try { addReport(await importBytes(bytes.slice(), name, importOptions()), name, importOptions(), bytes); } catch (err) { say(String(err.message || err)); }
    });
    window.addEventListener('keydown', (e) => {
      if (!(e.ctrlKey || e.metaKey) || e.target instanceof HTMLInputElement && e.target.type === 'text') return;
      const k = e.key.toLowerCase();
      if (k === 'z' && !e.shiftKey) { e.preventDefault(); undo(); } else if ((k === 'z' && e.shiftKey) || k === 'y') { e.preventDefault(); redo(); }
    });
    wirePlot();
    window.addEventListener('resize', drawSoon);
  }

  async function main() {
    wire();
    wasmModule = await loadModule();
    await wasm_bindgen({ module_or_path: wasmModule });
    $('version').textContent = wasm_bindgen.version();
    wireLf();
    worker = startWorker(wasmModule);
    await worker.ready;
    // A share link wins over the autosaved workspace, which wins over the demo.
    let saved = null;
    try { saved = JSON.parse(localStorage.getItem(AUTOSAVE_KEY) || 'null'); } catch { saved = null; }
    if (location.hash.startsWith('#project=')) {
      try { await openShareLink(); } catch (e) { say(e.message); }
    } else if (saved && Array.isArray(saved.samples) && saved.samples.length) {
      try { await loadProject(saved); say('The previous workspace was restored (Start fresh clears it).', 'info'); } catch (e) { say(`The saved workspace could not be restored: ${e.message}`); await loadDemo(); }
    } else {
      await loadDemo();
    }
    history.past = [];
    refresh();
    document.body.dataset.readyMs = performance.now().toFixed(0);
    document.body.dataset.ready = 'true';
  }

  const ready = main().catch((e) => {
    say(`ddlens could not start: ${e.message || e}`);
    throw e;
  });
  return { ready, state, draw, undo, redo, get worker() { return worker; } };
})();
window.ddlens = ddlens;
