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

/** The lines of one visible sample, each with its `layer` (what the layer toggles filter). */
function sampleLines(s, y, plain) {
  const lines = [], residuals = [];
  if (s.steps.length && plain) lines.push({ layer: 'raw', x: s.raw.wavenumber, y: s.raw.values, colour: '#858585', width: 1 });
  lines.push({ layer: 'data', x: s.wavenumber, y, colour: s.colour, width: 1.5 });
  for (const [p, colour] of [[state.smoothPreview, s.colour], [state.baselinePreview, '#555555']]) {
    if (p && p.id === s.id && plain) lines.push({ layer: 'preview', x: p.x, y: p.y, colour, width: 2, dashed: true });
  }
  const drag = state.drag && state.drag.id === s.id ? state.drag : null;
  const c = drag ? drag.curves : s.curves;
  if (c && plain) {
    c.components.forEach((v, k) => lines.push({ layer: 'component', x: c.x, y: v, colour: DEFAULTS.palette[(k + 1) % DEFAULTS.palette.length], fill: true }));
    lines.push({ layer: 'envelope', x: c.x, y: c.total, colour: '#000000', width: 1.5, dashed: true });
    if (c.residual) residuals.push({ layer: 'residual', x: c.x, y: c.residual, colour: s.colour, width: 1 });
  }
  return { lines, residuals };
}

function figure() {
  const lines = [], shaded = [], residuals = [];
  let handles = [];
  const plain = state.view.yMode === 'a';
  const target = activeSample();
  const shown = (l) => state.layers[l.layer] !== false;
  for (const s of state.samples) {
    if (!s.visible) continue;
    const y = shownValues(s);
    if (!y) continue;
    const own = sampleLines(s, y, plain);
    lines.push(...own.lines.filter(shown));
    residuals.push(...own.residuals.filter(shown));
    const drag = state.drag && state.drag.id === s.id ? state.drag : null;
    if (s.model && target && s.id === target.id && plain) handles = bandHandles(drag ? drag.model : s.model);
    if (state.layers.saturation) shaded.push(...s.saturated);
  }
  const v = state.view;
  const markers = state.layers.prediction && state.lf && state.samples.some((x) => x.id === state.lf.sampleId && x.visible) ? predictions() : [];
  return {
    lines, shaded, markers, handles, residuals,
    x_range: v.x, y_range: v.y, nm_bottom: v.nmBottom,
    y_label: { a: 'absorbance', eps: 'ε / M⁻¹ cm⁻¹', logeps: 'log(ε / M⁻¹ cm⁻¹)' }[v.yMode],
  };
}

/** Draws a figure on a canvas: the curves go to wasm packed in one
 *  Float64Array (one copy), the rest as a small description. */
function drawFigure(canvas, fig, scale) {
  const curves = [...fig.lines, ...fig.residuals];
  const lengths = Uint32Array.from(curves, (l) => l.x.length);
  const data = new Float64Array(curves.reduce((n, l) => n + 2 * l.x.length, 0));
  let at = 0;
  for (const l of curves) { data.set(l.x, at); data.set(l.y, at + l.x.length); at += 2 * l.x.length; }
  const bare = ({ x, y, layer, ...rest }) => rest; // eslint-disable-line no-unused-vars
  return wasm_bindgen.draw_spectrum(canvas, { ...fig, lines: fig.lines.map(bare), residuals: fig.residuals.map(bare) }, data, lengths, scale);
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
    state.frame = drawFigure(canvas, figure(), dpr);
  } catch (e) {
    say(`The plot could not be drawn: ${e.message || e}`);
  }
  state.lastDrawMs = performance.now() - t0;
  showLimits();
  showEpsilonNeeds();
}

/** Fills the typed axis limits with the drawn ranges (x in cm⁻¹), except the one being typed in. */
function showLimits() {
  const f = state.frame;
  if (!f) return;
  const [a, b] = currentX();
  const focused = document.activeElement && document.activeElement.id;
  const digits = (v) => String(+v.toPrecision(5));
  for (const [id, v] of [['lim-x-lo', a], ['lim-x-hi', b], ['lim-y-lo', f.y_range[0]], ['lim-y-hi', f.y_range[1]]]) {
    if (focused !== id) $(id).value = digits(v);
  }
}
/** Sets the view from the typed axis limits (an empty pair: from the data). */
function typedLimits(xChanged) {
  const pair = (lo, hi) => {
    const [a, b] = [parseFloat($(lo).value), parseFloat($(hi).value)];
    if (!Number.isFinite(a) || !Number.isFinite(b)) return null;
    return a === b ? undefined : [Math.min(a, b), Math.max(a, b)];
  };
  const x = pair('lim-x-lo', 'lim-x-hi'), y = pair('lim-y-lo', 'lim-y-hi');
  if (x === undefined || y === undefined) { $('lim-status').textContent = 'An axis needs two different limits.'; return; }
  $('lim-status').textContent = '';
  state.view.x = x;
  // A new x range autoscales y to what it shows.
  state.view.y = xChanged ? null : y;
  draw();
}
/** Says beside the y-axis choice which visible samples ε needs a concentration for. */
function showEpsilonNeeds() {
  const missing = state.view.yMode === 'a' ? [] : state.samples.filter((s) => s.visible && !shownValues(s));
  $('y-mode-hint').textContent = missing.length
    ? `ε needs a concentration and path length: set them under “Properties” for ${missing.map((s) => s.name).join(', ')}.`
    : '';
}

/** Turns the add-band-by-clicking mode on or off: the button says so, the cursor changes, Escape ends it. */
function setAddMode(on) {
  const b = $('add-band-mode');
  b.setAttribute('aria-pressed', String(on));
  b.textContent = on ? 'Adding a band: click the plot (Esc ends)' : 'Add a band by clicking on the plot';
  $('spectrum-canvas').classList.toggle('adding', on);
}
const addMode = () => $('add-band-mode').getAttribute('aria-pressed') === 'true';

function wireView() {
  for (const id of ['lim-x-lo', 'lim-x-hi', 'lim-y-lo', 'lim-y-hi']) $(id).addEventListener('change', () => typedLimits(id.startsWith('lim-x')));
  for (const box of $('layers').querySelectorAll('input[data-layer]')) {
    box.addEventListener('change', () => { state.layers[box.dataset.layer] = box.checked; draw(); });
  }
  // 90-main toggles aria-pressed first; this listener shows the mode.
  $('add-band-mode').addEventListener('click', () => setAddMode(addMode()));
  window.addEventListener('keydown', (e) => { if (e.key === 'Escape' && addMode()) setAddMode(false); });
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
/** Backend pixel of a point (x in cm⁻¹) under the last frame. */
function toPixel(cm, y) {
  const f = state.frame;
  const [l, t, r, b] = f.area;
  const xb = f.nm_bottom ? 1e7 / cm : cm;
  return [l + (xb - f.x_range[0]) / (f.x_range[1] - f.x_range[0]) * (r - l), t + (f.y_range[1] - y) / (f.y_range[1] - f.y_range[0]) * (b - t)];
}
/** The band handle (band index, 'peak' or 'width') within reach of a pointer position, or null. */
function handleAt(p) {
  const s = activeSample();
  if (!s || !s.model || !s.visible || state.view.yMode !== 'a') return null;
  const reach = 9 * (window.devicePixelRatio || 1);
  let best = null;
  bandHandles(s.model).forEach((h, k) => {
    const [hx, hy] = toPixel(h.x, Math.min(Math.max(h.y, state.frame.y_range[0]), state.frame.y_range[1]));
    const d = Math.hypot(hx - p.px, hy - p.py);
    if (d <= reach && (!best || d < best.d)) best = { d, band: k >> 1, kind: k % 2 ? 'width' : 'peak', sample: s };
  });
  return best;
}
/** Moves the dragged band to the pointer and redraws (the edit is stored on release). */
function dragBand(p) {
  const d = state.drag;
  const t0 = performance.now();
  const b = d.model.bands[d.band];
  if (d.kind === 'peak') Object.assign(b, { centre: p.cm, height: p.y });
  else b.fwhm = Math.max(2 * Math.abs(p.cm - b.centre), 1);
  d.curves = modelCurves(d.sample, d.model);
  d.moved = true;
  draw();
  state.dragMs.push(performance.now() - t0);
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
  $('readout').textContent = `${p.cm.toFixed(0)} cm⁻¹ · ${(1e7 / p.cm).toFixed(1)} nm · ${(p.cm / DEFAULTS.wavenumber_per_ev).toFixed(3)} eV · y = ${p.y.toPrecision(4)}`;
}

function wirePlot() {
  wireView();
  wireSamples();
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
    if (addMode()) {
      setAddMode(false);
      addBand(p.cm, p.y);
      return;
    }
    canvas.setPointerCapture(e.pointerId);
    const h = handleAt(p);
    if (h) {
      const m = h.sample.model;
      state.drag = { id: h.sample.id, sample: h.sample, band: h.band, kind: h.kind, model: { ...m, bands: m.bands.map((b) => ({ ...b })) }, curves: h.sample.curves };
      return;
    }
    drag = { start: p, pan: e.shiftKey, x0: currentX(), clientX: e.clientX, clientY: e.clientY, y0: state.frame.y_range };
  });
  canvas.addEventListener('pointermove', (e) => {
    readout(e);
    if (state.drag) { const p = toData(e); if (p) dragBand(p); return; }
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
  canvas.addEventListener('pointerup', () => {
    const d = state.drag;
    if (!d) return;
    state.drag = null;
    if (d.moved) edit(() => markStale(Object.assign(find(d.id), { model: d.model, curves: d.curves, edited: true }), 'the bands changed'));
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

/** Export file names follow the active sample (else the first visible one). */
function baseName() {
  const s = activeSample() || state.samples.find((v) => v.visible);
  return (s ? s.name : 'ddlens').replace(/\.[a-z0-9]+$/i, '').replace(/[^\w.-]+/g, '_');
}

function exportSvg() {
  const svg = wasm_bindgen.spectrum_svg(figure(), 1200, 600);
  download(new Blob([svg], { type: 'image/svg+xml' }), `${baseName()}-spectrum.svg`);
}

function exportPng() {
  const canvas = document.createElement('canvas');
  canvas.width = 3600; canvas.height = 1800;
  drawFigure(canvas, figure(), 3);
  canvas.toBlob((blob) => download(blob, `${baseName()}-spectrum-300dpi.png`), 'image/png');
}

/** The visible spectra as shown (y mode applied), one block of columns per sample. */
function exportCsv() {
  const shown = state.samples.filter((s) => s.visible).map((s) => ({ s, y: shownValues(s) })).filter((v) => v.y);
  if (!shown.length) { say('No visible spectrum to export.'); return; }
  const label = { a: 'absorbance', eps: 'epsilon_M-1cm-1', logeps: 'log_epsilon' }[state.view.yMode];
  const quote = (t) => wasm_bindgen.csv_cell(String(t)); // the core's text cell: formula starts neutralised
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
