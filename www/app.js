// ddlens page shell: file drop, sample list, plots and exports.
// All science runs in wasm (core functions behind src/web); this file only
// moves data between the DOM, the worker and the drawing functions.
/* global wasm_bindgen */
'use strict';

const ddlens = (() => {
  const $ = (id) => document.getElementById(id);
  const PALETTE = ['#0072b2', '#d55e00', '#009e73', '#cc79a7', '#e69f00', '#56b4e9', '#f0e442'];
  const state = { samples: [], frame: null, nextColour: 0 };
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
      run(type, payload = {}, onProgress) {
        const id = nextId++;
        return new Promise((resolve, reject) => {
          pending.set(id, { resolve, reject, onProgress });
          w.postMessage({ id, type, ...payload });
        });
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

  // ---------- data in ----------
  // Temporary reader for two-column text until the core importer is wired in.
  function readColumns(text, name) {
    const x = [], y = [];
    const lines = text.split(/\r?\n/);
    let nm = /nm|wavelength/i.test(lines.slice(0, 5).join(' '));
    lines.forEach((line) => {
      const cells = line.split(/[,;\t ]+/).filter(Boolean).map(Number);
      if (cells.length >= 2 && cells.every(Number.isFinite)) { x.push(cells[0]); y.push(cells[1]); }
    });
    if (x.length < 2) throw new Error(`${name}: no two-column numeric data found`);
    if (!nm && x[0] < 3000) nm = true;
    const pts = x.map((v, i) => [nm ? 1e7 / v : v, y[i]]).sort((a, b) => a[0] - b[0]);
    return { name, x: pts.map((p) => p[0]), y: pts.map((p) => p[1]) };
  }

  function addSample(spec) {
    const colour = PALETTE[state.nextColour++ % PALETTE.length];
    state.samples.push({ ...spec, colour, visible: true });
    renderSamples();
    draw();
  }

  async function openFiles(files) {
    for (const file of files) {
      try {
        addSample(readColumns(await file.text(), file.name));
      } catch (e) {
        say(String(e.message || e));
      }
    }
  }

  function loadDemo() {
    addSample(readColumns(wasm_bindgen.demo_file(), 'CrX-7 (demo)'));
  }

  // ---------- samples ----------
  function renderSamples() {
    const list = $('sample-list');
    list.replaceChildren();
    state.samples.forEach((s, i) => {
      const li = document.createElement('li');
      const box = document.createElement('input');
      box.type = 'checkbox';
      box.checked = s.visible;
      box.id = `sample-${i}`;
      box.addEventListener('change', () => { s.visible = box.checked; draw(); });
      const sw = document.createElement('span');
      sw.className = 'swatch';
      sw.style.background = s.colour;
      const label = document.createElement('label');
      label.htmlFor = box.id;
      label.textContent = `${s.name} (${s.x.length} points)`;
      li.append(box, sw, label);
      list.append(li);
    });
  }

  // ---------- plotting ----------
  function figure() {
    return {
      lines: state.samples.filter((s) => s.visible).map((s) => ({ x: s.x, y: s.y, colour: s.colour, width: 1.5 })),
      y_label: 'absorbance',
    };
  }

  function draw() {
    const canvas = $('spectrum-canvas');
    const dpr = window.devicePixelRatio || 1;
    const rect = canvas.getBoundingClientRect();
    canvas.width = Math.max(1, Math.round(rect.width * dpr));
    canvas.height = Math.max(1, Math.round(rect.height * dpr));
    try {
      state.frame = wasm_bindgen.draw_spectrum(canvas, figure(), dpr);
    } catch (e) {
      say(`The plot could not be drawn: ${e.message || e}`);
    }
  }

  function readout(event) {
    const f = state.frame;
    if (!f) return;
    const canvas = $('spectrum-canvas');
    const dpr = window.devicePixelRatio || 1;
    const r = canvas.getBoundingClientRect();
    const px = (event.clientX - r.left) * dpr, py = (event.clientY - r.top) * dpr;
    const [l, t, rr, b] = f.area;
    if (px < l || px > rr || py < t || py > b) { $('readout').textContent = '\u00a0'; return; }
    const xv = f.x_range[0] + (px - l) / (rr - l) * (f.x_range[1] - f.x_range[0]);
    const yv = f.y_range[1] - (py - t) / (b - t) * (f.y_range[1] - f.y_range[0]);
    const cm = f.nm_bottom ? 1e7 / xv : xv;
    const ev = cm / 8065.544;
    $('readout').textContent = `${cm.toFixed(0)} cm⁻¹ · ${(1e7 / cm).toFixed(1)} nm · ${ev.toFixed(3)} eV · y = ${yv.toPrecision(4)}`;
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
    canvas.width = 2400; canvas.height = 1200;
    wasm_bindgen.draw_spectrum(canvas, figure(), 2);
    canvas.toBlob((blob) => download(blob, `${baseName()}-spectrum.png`), 'image/png');
  }

  // ---------- wiring ----------
  function wire() {
    $('file-input').addEventListener('change', (e) => { openFiles([...e.target.files]); e.target.value = ''; });
    $('demo-button').addEventListener('click', loadDemo);
    $('export-svg').addEventListener('click', exportSvg);
    $('export-png').addEventListener('click', exportPng);
    window.addEventListener('dragover', (e) => { e.preventDefault(); document.body.classList.add('dragging'); });
    window.addEventListener('dragleave', () => document.body.classList.remove('dragging'));
    window.addEventListener('drop', (e) => {
      e.preventDefault();
      document.body.classList.remove('dragging');
      openFiles([...(e.dataTransfer ? e.dataTransfer.files : [])]);
    });
    window.addEventListener('paste', (e) => {
      const text = e.clipboardData && e.clipboardData.getData('text/plain');
      if (!text) return;
      try { addSample(readColumns(text, `pasted ${state.samples.length + 1}`)); } catch (err) { say(String(err.message || err)); }
    });
    $('spectrum-canvas').addEventListener('mousemove', readout);
    window.addEventListener('resize', draw);
  }

  async function main() {
    wire();
    wasmModule = await loadModule();
    await wasm_bindgen({ module_or_path: wasmModule });
    $('version').textContent = wasm_bindgen.version();
    worker = startWorker(wasmModule);
    loadDemo();
    await worker.ready;
    document.body.dataset.ready = 'true';
  }

  const ready = main().catch((e) => {
    say(`ddlens could not start: ${e.message || e}`);
    throw e;
  });
  return { ready, state, get worker() { return worker; } };
})();
window.ddlens = ddlens;
