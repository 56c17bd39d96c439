// ---------- the global fit ----------
// "Fit the spectrum with the model": the active sample's analysed document
// goes to the worker (`analysis::fit_globally`: the whole spectrum fitted with
// band centres at the model's transition energies, started from the two-step
// result), with the progress line and Cancel of every worker job. The results
// card then shows both fits side by side (`globalCard`), the warnings list the
// global fit's (held parameters, a disagreement beyond the combined σ), and
// the spectrum plot draws the global fit's components at the model's
// positions; while the what-if control is moved, the components move to the
// engine's transition energies at the what-if point (`globalBands`).
RUN_BUTTONS.push('lf-global');

async function fitGlobal() {
  const s = selectedSample();
  const r = s && s.lf && s.lf.analysis;
  if (!r || !r.fit) { say('Analyse the sample first: the global fit starts from its ligand-field fit.', 'info'); return; }
  if (s.stale || optionsChanged(s)) { say(`${s.name}: the results are out of date; analyse again before fitting the spectrum with the model.`, 'info'); return; }
  try {
    const doc = await runJob(`Fitting ${s.name} with the model…`, 'global', { doc: s.doc });
    edit(() => { const t = find(s.id); t.doc = doc; t.lf = { ...t.lf, analysis: doc.results }; });
  } catch (e) { jobFailed(s, 'global fit', e); }
}

/** The global column beside each card row that has a global counterpart. */
function globalCells(fit, g) {
  const d = g.derived, p = g.parameters;
  return {
    '10Dq (Δ)': fmt(d.delta, ' cm⁻¹'), B: fmt(p.b, ' cm⁻¹'), C: fmt(p.c, ' cm⁻¹'), 'C/B': fmt(d.c_over_b),
    'β = B/B₀': fmt(d.beta), 'Dq/B': fmt(d.dq_over_b), 'ground state': g.ground === fit.best.ground ? fit.best.ground_typeset : g.ground,
    'χ²': `${chi2Text(g.chi2)} over ${g.points} points${g.bic != null ? `, BIC ${fmt({ value: g.bic })}` : ''}`,
  };
}

/** The results card with the two-step numbers and the global fit's in two columns. */
function globalCard(tbody, fit, g) {
  tbody.closest('table').classList.add('global-card');
  const head = document.createElement('tr');
  for (const [text, scope] of [['', null], ['two-step', 'col'], ['global fit', 'col']]) {
    const th = document.createElement(scope ? 'th' : 'td');
    if (scope) th.scope = scope;
    th.textContent = text;
    head.append(th);
  }
  tbody.append(head);
  const cells = globalCells(fit, g);
  for (const [label, text] of cardRows(fit)) row(tbody, [label, text, cells[label] ?? ''], true).dataset.label = label;
}

/** The global fit's held parameters and warnings, each marked as the global fit's. */
const globalWarnings = (g) => [
  ...(g.held || []).map((h) => `global fit: ${h.parameter} held at ${fmt({ value: h.value }, ' cm⁻¹')} — ${h.reason}`),
  ...g.warnings.map((w) => `global fit: ${w}`),
];

/** The global fit's bands (`BandSpec`s): at the fit, or with each assigned
 *  centre at the engine's transition energy at the what-if point. */
function globalBands(lf) {
  const g = lf.analysis.global;
  let at = () => null;
  if (lf.whatIf) {
    const levels = levelsAt(lf, lf.whatIf.x, lf.whatIf.b);
    const energy = (label) => { const l = levels.find((v) => v.label === label); return l ? l.energy : null; };
    const ground = energy(g.ground);
    at = (state) => { const e = state ? energy(state) : null; return e != null && ground != null ? e - ground : null; };
  }
  return g.bands.map((b) => ({
    shape: b.shape, centre: at(b.state) ?? b.centre.value, fwhm: b.fwhm.value, height: b.height.value,
    extra: b.extra ? b.extra.value : null, fixed: [],
  }));
}

/** The global fit's components of the sample it belongs to, as figure lines (layer `component`, dashed). */
function globalLines() {
  const lf = state.lf;
  const g = lf && lf.analysis && lf.analysis.global;
  const s = g && find(lf.sampleId);
  if (!s || !s.visible || state.view.yMode !== 'a') return [];
  const bands = globalBands(lf);
  const packed = wasm_bindgen.evaluate_bands(Float64Array.from(s.wavenumber), bands, null);
  const n = s.wavenumber.length;
  return bands.map((_, k) => ({
    layer: 'component', x: s.wavenumber, y: packed.subarray((k + 1) * n, (k + 2) * n),
    colour: DEFAULTS.palette[(k + 1) % DEFAULTS.palette.length], width: 2, dashed: true,
  }));
}

// The spectrum figure gains the global components: `figure` (the plot's) is
// wrapped here, so drawing, exports and the what-if redraw all carry them.
{
  const withoutGlobal = figure;
  figure = () => {
    const fig = withoutGlobal();
    if (state.layers.component !== false) fig.lines.push(...globalLines());
    return fig;
  };
}

$('lf-global').addEventListener('click', fitGlobal);
