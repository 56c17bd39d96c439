// ---------- ligand field ----------
// The analysis runs in the worker (`analysis::analyze` on the sample's
// document, with the band model on screen); predictions for the what-if
// control and the diagram read-out come from the engine's levels on the main
// thread. Each sample keeps its analysed document (`s.doc`, its `results`
// and `ligand_field.choices`) and the page's view of it (`s.lf`: what-if,
// diagram, read-out), so undo restores them together; `state.lf` is the
// record of the sample selected in the Cleaning panel.
/** A value with its σ as the engine writes it (`Estimate`), with a unit, or a dash. */
const fmt = (e, unit = '') => (e && Number.isFinite(e.value) ? `${wasm_bindgen.format_estimate(e.value, e.sigma == null ? undefined : e.sigma, e.determined === false ? false : undefined)}${unit}` : '—');
/** χ², with a rounding-level value of an exactly determined fit shown as 0. */
const chi2Text = (v) => (v < 1e-9 ? '0' : v.toPrecision(3));
/** A whole number without a minus sign on zero, or a dash. */
const whole = (v) => (v != null && Number.isFinite(v) ? String(Math.round(v) || 0) : '—');
const selectedSample = () => activeSample();
Object.defineProperty(state, 'lf', { get: () => { const s = selectedSample(); return (s && s.lf) || null; } });
state.lfSort = { key: null, dir: 1 };

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

/** The document's ligand-field options from the panel's controls and a sample's choices. */
function ligandFieldOf(c, choices) {
  const cb = parseFloat(c.c_over_b);
  return {
    ion: c.ion, geometry: c.geometry,
    c_over_b: Number.isFinite(cb) ? cb : null,
    free_c: !!c.free_c, spin_forbidden: !!c.spin_forbidden,
    b0_source: c.b0 || null,
    ligand: c.ligand || null,
    choices,
  };
}

/** The panel's controls that a document's options stand for (the inverse of `ligandFieldOf`). */
function controlsOf(doc) {
  const lf = doc.ligand_field || {};
  const count = doc.bands.count || {};
  return {
    ion: lf.ion, geometry: lf.geometry, c_over_b: lf.c_over_b != null ? String(lf.c_over_b) : '',
    free_c: !!lf.free_c, spin_forbidden: !!lf.spin_forbidden, b0: lf.b0_source || '', ligand: lf.ligand || '',
    band_count: count.fixed != null ? String(count.fixed) : '', shape: doc.bands.shape,
  };
}

/** The document to analyse: the sample's own with the panel's options and
 *  the band model on screen (none: the core deconvolves automatically). */
function docToAnalyse(s, c, choices) {
  const n = parseInt(c.band_count, 10);
  return copyDoc(s.doc, (d) => {
    d.bands = { ...bandSetup(d, Number.isFinite(n) && n > 0 ? n : 0, modelForDoc(s)), shape: c.shape || d.bands.shape };
    d.ligand_field = ligandFieldOf(c, choices);
    d.results = null;
  });
}

/** Runs the analysis of one sample in the worker; returns the analysed document (throws on failure). */
function analyse(s, controls, choices) {
  return runDocument(`Analysing ${s.name}…`, docToAnalyse(s, controls, choices));
}

/** The page's view of an analysed document; `model` is the band model on screen it rests on. */
function lfRecord(s, doc, model) {
  const ion = [...$('lf-ion').options].find((o) => o.value === doc.ligand_field.ion);
  return { sampleId: s.id, analysis: doc.results, controls: controlsOf(doc), n: ion ? Number(ion.dataset.n) : null, geometry: doc.ligand_field.geometry, whatIf: null, model };
}

/** Stores an analysed document on its sample (inside an edit): results, the
 *  band fit it used (shown in the Bands panel, editable) and the ligand-field view. */
function takeAnalysis(t, doc) {
  t.doc = doc;
  Object.assign(t, { stale: null, lfError: null, controls: controlsOf(doc) });
  const model = takeBandFit(t, doc.results, t.model);
  t.lf = lfRecord(t, doc, model);
  return t;
}

async function analyzeSample() {
  const s = selectedSample();
  if (!s) { say('Load a spectrum first.', 'info'); return; }
  try {
    const doc = await analyse(s, lfControls(), s.choices);
    edit(() => { takeAnalysis(find(s.id), doc); });
  } catch (e) {
    if (e.cancelled) { jobFailed(s, 'analysis', e); return; }
    // The old card no longer stands: it goes, and the reason shows in its place.
    edit(() => Object.assign(find(s.id), { lf: null, stale: null, lfError: `The analysis failed: ${e.message || e}` }));
  }
}

/** The options a sample is analysed with: the panel's for the active one, else its own (as last set or analysed). */
const controlsFor = (s) => (s === activeSample() ? lfControls() : s.controls || (s.lf && s.lf.controls) || lfControls());

/** Analyses every sample with its own options; the demo only when asked. */
async function analyzeAll() {
  const done = [];
  const chosen = state.samples.filter((s) => !isDemo(s) || $('lf-include-demo').checked || state.samples.length === 1);
  for (const s of chosen) {
    try { done.push([s.id, await analyse(s, controlsFor(s), s.choices)]); } catch (e) { jobFailed(s, 'analysis', e); if (e.cancelled) break; }
  }
  const noFit = done.filter(([, d]) => !d.results.fit).map(([id]) => find(id).name);
  if (noFit.length) say(`No ligand-field fit for ${noFit.join(', ')}: see each sample's panel.`);
  if (done.length) edit(() => done.forEach(([id, doc]) => { const t = find(id); if (t) takeAnalysis(t, doc); }));
}

/** Changes one band's choice and reruns the analysis with it; undoable with the result. */
async function choose(energy, value) {
  const s = selectedSample();
  if (!s || !s.lf) return;
  const choice = value === '' ? null : value === '!x' ? { energy, not_dd: true } : { energy, assign: value };
  // A new choice replaces any earlier one the core would match to this band (the engine's matching tolerance).
  const choices = s.choices.filter((c) => Math.abs(c.energy - energy) > DEFAULTS.choice_match * energy);
  if (choice) choices.push(choice);
  try {
    const doc = await analyse(s, s.lf.controls, choices);
    if (!doc.results.fit) { say(`${s.name}: no fit with that choice — ${doc.results.fit_error}`); renderLf(); return; }
    edit(() => { takeAnalysis(find(s.id), doc); });
  } catch (e) { jobFailed(s, 'analysis', e); renderLf(); }
}

function row(tbody, cells, header = false) {
  const tr = document.createElement('tr');
  cells.forEach((c, i) => {
    const td = document.createElement(header && i === 0 ? 'th' : 'td');
    if (header && i === 0) td.scope = 'row';
    if (c instanceof Node) td.append(c); else td.textContent = c;
    tr.append(td);
  });
  tbody.append(tr);
  return tr;
}

/** The results card as [label, text] rows (the page and the report). */
function cardRows(fit) {
  const b = fit.best, d = b.derived, p = b.parameters;
  const margin = b.spin.margin != null ? ` — spin change at Δ/B = ${b.spin.spin_change_delta_over_b.toFixed(2)} (margin ${b.spin.margin >= 0 ? '+' : ''}${b.spin.margin.toFixed(2)})` : '';
  const rows = [
    ['10Dq (Δ)', fmt(d.delta, ' cm⁻¹')], ['B', fmt(p.b, ' cm⁻¹')], ['C', fmt(p.c, ' cm⁻¹')], ['C/B', fmt(d.c_over_b)],
    ['β = B/B₀', d.beta ? `${fmt(d.beta)} (B₀ = ${d.b0} cm⁻¹, ${d.b0_source})` : '— (no free-ion B₀)'],
    ['Dq/B', fmt(d.dq_over_b)], ['ground state', `${b.ground_typeset}, ${b.spin.state}${margin}`],
  ];
  if (fit.jorgensen) {
    const j = fit.jorgensen;
    rows.push([`Jørgensen estimate (${j.ligand})`, `Δ ≈ ${j.delta ? j.delta.toFixed(0) + ' cm⁻¹' : '—'}, β ≈ ${j.beta ? j.beta.toFixed(2) : '—'} (${j.source})`]);
  }
  rows.push(['χ²', `${chi2Text(b.chi2)} (${b.degrees_of_freedom} degrees of freedom)`]);
  return rows;
}

/** Every observed band with its assignment (or the reason it has none) and the user's choice. */
function assignmentRows(lf) {
  const b = lf.analysis.fit.best;
  return lf.analysis.observed.map((o) => {
    const a = b.assignment.find((x) => Math.abs(x.observed - o.energy) < 1e-6 * o.energy);
    return { energy: o.energy, nm: 1e7 / o.energy, choice: o.not_dd ? '!x' : o.assign || '', state: a ? a.typeset : 'not d–d', calculated: a ? a.calculated : null, residual: a ? a.residual : null };
  });
}

/** The fit's C/B, or the engine's fallback when the fit has none (d¹, d⁹). */
const cOverB = (lf) => { const d = lf.analysis.fit.best.derived; return d.c_over_b ? d.c_over_b.value : DEFAULTS.c_over_b_fallback; };
/** The fit's B, or the engine's stand-in B when the fit has none (d¹, d⁹: the levels do not depend on it). */
const fittedB = (lf) => { const p = lf.analysis.fit.best.parameters; return p.b ? p.b.value : DEFAULTS.b_stand_in; };

/** The states a band can be given: the engine's levels at the fit, spin-allowed first. */
function stateOptions(lf) {
  const p = lf.analysis.fit.best.parameters;
  const b = fittedB(lf);
  const c = p.c ? p.c.value : cOverB(lf) * b;
  const levels = wasm_bindgen.levels(lf.n, lf.geometry, p.dq.value, b, c);
  const ground = levels[0];
  const rest = levels.slice(1);
  return [...rest.filter((l) => l.multiplicity === ground.multiplicity), ...rest.filter((l) => l.multiplicity !== ground.multiplicity)]
    .map((l) => ({ value: l.label, text: `${l.typeset} (≈ ${Math.round(l.energy)} cm⁻¹)${l.multiplicity === ground.multiplicity ? '' : ' — spin-forbidden'}`, allowed: l.multiplicity === ground.multiplicity }));
}

function choiceSelect(lf, r, options) {
  const sel = document.createElement('select');
  sel.setAttribute('aria-label', `assignment of the band at ${r.energy.toFixed(0)} cm⁻¹`);
  const add = (parent, value, text) => { const o = document.createElement('option'); o.value = value; o.textContent = text; parent.append(o); };
  add(sel, '', `automatic (${r.state})`);
  add(sel, '!x', 'charge transfer / not d–d');
  for (const [label, allowed] of [['spin-allowed', true], ['spin-forbidden', false]]) {
    const g = document.createElement('optgroup');
    g.label = label;
    options.filter((o) => o.allowed === allowed).forEach((o) => add(g, o.value, o.text));
    if (g.children.length) sel.append(g);
  }
  sel.value = r.choice;
  sel.addEventListener('change', () => choose(r.energy, sel.value));
  return sel;
}

/** Whether the panel's options differ from those the active sample's results rest on. */
function optionsChanged(s) {
  if (!s || !s.lf || s !== activeSample()) return false;
  const now = lfControls(), then = s.lf.controls;
  return ['ion', 'geometry', 'c_over_b', 'free_c', 'spin_forbidden', 'b0', 'ligand'].some((k) => String(now[k] ?? '') !== String(then[k] ?? ''));
}

/** The heading, the out-of-date line and the outcome sentence when it is not
 *  a plain assignment or the analysis failed; returns whether the card is
 *  shown (not when no d–d band was found: then there are no numbers; a held
 *  parameter or spin-forbidden bands keep the fit, so the card stays below
 *  the sentence and its choices can be changed back). */
function renderLfStatus(s) {
  const r = s && s.lf && s.lf.analysis;
  $('lf-for').textContent = s ? `— ${s.name}` : '';
  $('lf-results-title').hidden = !(r || (s && s.lfError));
  $('lf-results-title').textContent = s ? `Results for ${s.name}` : '';
  const why = r && (s.stale || (optionsChanged(s) && 'the options changed'));
  $('lf-status').hidden = !why;
  $('lf-status-text').textContent = why ? `Out of date: ${why} since this analysis.` : '';
  const outcome = r && r.outcome && r.outcome !== 'assigned' ? r.outcome_text || r.outcome : null;
  const text = (s && s.lfError) || outcome || (r && !r.fit && r.fit_error ? `No ligand-field fit: ${r.fit_error}` : null);
  $('lf-outcome').hidden = !text;
  $('lf-outcome').textContent = text || '';
  const noise = r && r.noise;
  $('lf-noise').hidden = !(noise && Number.isFinite(noise.sigma));
  if (!$('lf-noise').hidden) $('lf-noise').textContent = `Noise of the spectrum: σ ≈ ${fmt({ value: noise.sigma })} (${noise.method})`;
  return !(r && r.outcome === 'no_dd_bands');
}

function renderLf() {
  renderSeries();
  const lf = state.lf;
  const fit = lf && lf.analysis.fit;
  const cardShown = renderLfStatus(activeSample());
  $('lf-results').hidden = !fit || !cardShown;
  if ($('lf-results').hidden) return;
  const b = fit.best, p = b.parameters, d = b.derived;
  const card = $('lf-card').tBodies[0];
  card.replaceChildren();
  const global = lf.analysis.global;
  $('lf-card').classList.remove('global-card');
  if (global) globalCard(card, fit, global); else for (const r of cardRows(fit)) row(card, r, true);
  const at = $('lf-assignment').tBodies[0];
  at.replaceChildren();
  const options = stateOptions(lf);
  for (const r of assignmentRows(lf)) {
    row(at, [r.energy.toFixed(0), r.nm.toFixed(1), choiceSelect(lf, r, options), whole(r.calculated), whole(r.residual)]);
  }
  const w = $('lf-warnings');
  w.replaceChildren();
  for (const text of lfWarnings(lf)) {
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
  // Without a fitted Δ/B (d¹, d⁹) the slider starts in the middle of its range.
  const x = lf.whatIf ? lf.whatIf.x : d.delta_over_b ? d.delta_over_b.value : (Number($('whatif-x').min) + Number($('whatif-x').max)) / 2;
  $('whatif-x').value = x;
  $('whatif-x-out').textContent = x.toFixed(2);
  $('whatif-b').value = lf.whatIf ? lf.whatIf.b : Math.round(fittedB(lf));
  drawDiagram();
}

const lfWarnings = (lf) => {
  const b = lf.analysis.fit.best;
  const g = lf.analysis.global;
  return [...(g ? globalWarnings(g) : []), ...b.warnings, ...lf.analysis.fit.warnings, ...lf.analysis.warnings, ...b.notes];
};

/** Transitions (energy, typeset, spin-allowed) at the what-if point, or the fit's predictions. */
function predictions() {
  const lf = state.lf;
  const fit = lf && lf.analysis.fit;
  if (!fit) return [];
  if (!lf.whatIf) return fit.best.predicted.map((p) => ({ x: p.energy, sigma: p.sigma || 0, label: p.typeset, dashed: !p.spin_allowed }));
  const { x, b } = lf.whatIf;
  const levels = levelsAt(lf, x, b);
  const ground = levels[0];
  return levels.slice(1).filter((l) => l.energy < DEFAULTS.max_prediction)
    .map((l) => ({ x: l.energy, sigma: 0, label: l.typeset, dashed: l.multiplicity !== ground.multiplicity }));
}

/** The engine's levels at Δ/B = x and B = b, at the fit's C/B. */
function levelsAt(lf, x, b) {
  return wasm_bindgen.levels(lf.n, lf.geometry, x * b / 10, b, cOverB(lf) * b);
}

/** The Δ/B and B shown: the what-if point or the fit. */
function shownPoint(lf) {
  const b = lf.analysis.fit.best;
  if (lf.whatIf) return lf.whatIf;
  return { x: b.derived.delta_over_b ? b.derived.delta_over_b.value : null, b: b.parameters.b ? b.parameters.b.value : null };
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
  const gamma = cOverB(lf);
  const { x: xFit, b: bValue } = shownPoint(lf);
  const observed = xFit != null && bValue ? b.assignment.map((a) => [xFit, a.observed / bValue]) : [];
  const max = Math.max(40, Math.ceil((xFit || 0) * 1.25));
  lf.diagram = { n: lf.n, geometry: lf.geometry, c_over_b: gamma, max_delta_over_b: max, fitted: xFit, observed };
  try {
    lf.frame = wasm_bindgen.draw_level_diagram(canvas, lf.diagram, dpr);
  } catch (e) {
    say(`The diagram could not be drawn: ${e.message || e}`);
  }
  if (lf.cursor) showCursor(lf);
}

// ---------- diagram read-out (pointer and keyboard) ----------
// The frame from the drawing maps canvas pixels to Δ/B and E/B; the levels
// at a Δ/B come from the engine (exact, not read off the drawn curves).
const sub = (v, lo, hi) => Math.min(hi, Math.max(lo, v));
function cursorAt(lf, x, level) {
  const pt = shownPoint(lf);
  const b = pt.b || DEFAULTS.b_stand_in;
  const levels = levelsAt(lf, x, b);
  const k = sub(level, 0, levels.length - 1);
  lf.cursor = { x, level: k };
  return { levels, k, b };
}
function showCursor(lf) {
  const f = lf.frame;
  if (!f) return;
  const { levels, k, b } = cursorAt(lf, lf.cursor.x, lf.cursor.level);
  const l = levels[k];
  const y = l.energy / b;
  const e = l.energy;
  $('diagram-readout').textContent = `${l.typeset}: E/B = ${y.toFixed(2)}, E = ${Math.round(e)} cm⁻¹${e > 0 ? ` (${(1e7 / e).toFixed(0)} nm)` : ''} at Δ/B = ${lf.cursor.x.toFixed(2)} (B = ${Math.round(b)} cm⁻¹, level ${k + 1} of ${levels.length})`;
  const dpr = window.devicePixelRatio || 1;
  const [L, T, R, B] = f.area;
  const px = L + (lf.cursor.x - f.x_range[0]) / (f.x_range[1] - f.x_range[0]) * (R - L);
  const py = B - (y - f.y_range[0]) / (f.y_range[1] - f.y_range[0]) * (B - T);
  const dot = $('diagram-cursor');
  dot.hidden = !(py >= T && py <= B);
  Object.assign(dot.style, { left: `${px / dpr}px`, top: `${py / dpr}px` });
}

function wireDiagramReadout() {
  const canvas = $('diagram-canvas');
  canvas.addEventListener('pointermove', (e) => {
    const lf = state.lf;
    const f = lf && lf.frame;
    if (!f) return;
    const dpr = window.devicePixelRatio || 1;
    const r = canvas.getBoundingClientRect();
    const px = (e.clientX - r.left) * dpr, py = (e.clientY - r.top) * dpr;
    const [L, T, R, B] = f.area;
    if (px < L || px > R || py < T || py > B) return;
    const x = f.x_range[0] + (px - L) / (R - L) * (f.x_range[1] - f.x_range[0]);
    const y = f.y_range[1] - (py - T) / (B - T) * (f.y_range[1] - f.y_range[0]);
    const { levels, b } = cursorAt(lf, x, 0);
    let k = 0;
    levels.forEach((l, i) => { if (Math.abs(l.energy / b - y) < Math.abs(levels[k].energy / b - y)) k = i; });
    lf.cursor = { x, level: k };
    showCursor(lf);
  });
  canvas.addEventListener('focus', () => {
    const lf = state.lf;
    if (!lf || !lf.frame) return;
    if (!lf.cursor) lf.cursor = { x: shownPoint(lf).x || lf.frame.x_range[1] / 2, level: 1 };
    showCursor(lf);
  });
  canvas.addEventListener('keydown', (e) => {
    const lf = state.lf;
    if (!lf || !lf.frame || !lf.cursor) return;
    const span = lf.frame.x_range[1] - lf.frame.x_range[0];
    const step = (e.shiftKey ? 0.05 : 0.01) * span;
    const moves = {
      ArrowLeft: () => { lf.cursor.x = sub(lf.cursor.x - step, 0, span); },
      ArrowRight: () => { lf.cursor.x = sub(lf.cursor.x + step, 0, span); },
      ArrowUp: () => { lf.cursor.level += 1; },
      ArrowDown: () => { lf.cursor.level = Math.max(0, lf.cursor.level - 1); },
      Home: () => { lf.cursor.x = shownPoint(lf).x || 0; },
    };
    if (!moves[e.key]) return;
    e.preventDefault();
    moves[e.key]();
    showCursor(lf);
  });
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

function diagramPng() {
  if (!state.lf || !state.lf.diagram) return;
  const canvas = document.createElement('canvas');
  canvas.width = 2700; canvas.height = 2100;
  wasm_bindgen.draw_level_diagram(canvas, state.lf.diagram, 3);
  canvas.toBlob((blob) => download(blob, `${baseName()}-diagram.png`), 'image/png');
}

function wireLf() {
  fillIons();
  $('lf-analyze').addEventListener('click', analyzeSample);
  $('lf-analyze-all').addEventListener('click', analyzeAll);
  $('lf-reanalyse').addEventListener('click', analyzeSample);
  for (const id of ['lf-ion', 'lf-geometry', 'lf-cb', 'lf-free-c', 'lf-spin-forbidden', 'lf-ligand', 'lf-b0']) {
    $(id).addEventListener('change', () => { const s = activeSample(); if (s) s.controls = lfControls(); renderLfStatus(s); });
  }
  for (const b of $('path').querySelectorAll('button[data-step]')) b.addEventListener('click', () => goToStep(b.dataset.step));
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
  $('diagram-png').addEventListener('click', diagramPng);
  $('series-svg').addEventListener('click', () => download(new Blob([wasm_bindgen.series_plot_svg(seriesPoints())], { type: 'image/svg+xml' }), 'series-delta-beta.svg'));
  wireDiagramReadout();
}
