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
    shape: $('band-shape').value, baseline: null, max_iterations: 200,
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
