// ---------- report ----------
// A printable view of the selected sample's analysis (the print stylesheet
// hides everything else) and the same data as JSON. One object,
// `reportData()`, feeds both, so the page and the file never disagree.
const CAUTION = 'Results are model estimates: a ligand-field fit can match the numbers with a wrong assignment, and the model leaves out spin–orbit coupling and low-symmetry splittings. They need a chemist\'s judgement.';

/** A band-model baseline as serde writes it ("linear", {polynomial: 2}) in words. */
const baselineText = (m) => (typeof m === 'string' ? m.replace(/-/g, ' ') : `polynomial of order ${m && m.polynomial}`);

/** A cleaning step in words. */
function stepText(st) {
  const [kind, v] = Object.entries(st)[0];
  if (kind === 'crop') return `cropped to ${v.low}–${v.high} cm⁻¹`;
  if (kind === 'smooth') return `Savitzky–Golay smoothing (window ${v.window}, order ${v.order})`;
  const m = v.method;
  return `baseline subtracted (${typeof m === 'string' ? m.replace(/_/g, ' ') : Object.keys(m)[0].replace(/_/g, ' ')})`;
}

/** Everything the report shows, as plain data (null without a fit). */
function reportData() {
  const s = selectedSample();
  const lf = state.lf;
  if (!s || !lf || !lf.analysis.fit) return null;
  const a = lf.analysis, best = a.fit.best, d = best.derived, c = lf.controls;
  const setup = s.doc.bands;
  const cb = parseFloat(c.c_over_b);
  const choices = s.choices.map((x) => `${x.energy.toFixed(0)} cm⁻¹ → ${x.not_dd ? 'not d–d' : x.assign}`);
  return {
    title: `Ligand-field analysis of ${s.name}`,
    date: new Date().toISOString(),
    program: `ddlens ${wasm_bindgen.version()}`,
    sample: { name: s.name, file: s.file, points: a.import.points, range_cm: a.import.x_range_cm },
    method: [
      ['configuration and site', `d${lf.n} ${lf.geometry} (${c.ion})`],
      ['model', 'exact dⁿ levels in a cubic field, H = Dq·V + B·K_B + C·K_C (Tanabe & Sugano 1954); no spin–orbit coupling or low-symmetry splitting'],
      ['C/B', c.free_c ? 'fitted (free)' : Number.isFinite(cb) ? `held at ${cb} (given)` : `held at ${cOverB(lf).toFixed(3)} (the free ion's C₀/B₀)`],
      ['B₀ for β', d.b0 ? `${d.b0} cm⁻¹, ${d.b0_source}` : 'none known'],
      ['spin-forbidden transitions', c.spin_forbidden ? 'considered' : 'considered only for narrow bands or chosen states'],
      ['bands', `${setup.model ? `${setup.model.bands.length} as set in the Bands panel (${setup.model.bands.filter((b) => b.fixed.length).length} with locked values)` : setup.count.fixed ? `${setup.count.fixed} (fixed)` : `count chosen by BIC (up to ${setup.count.auto})`}, ${setup.shape} shape, ${baselineText(a.bands.baseline.model)} baseline${setup.baseline == null && !setup.model ? ` (${DEFAULTS.baseline_candidates.map(baselineText).join(' or ')}, chosen by BIC)` : ''}, points weighted by their share of the wavenumber axis`],
      ['band position uncertainty', 'σ of each band centre from the band fit\'s covariance (scaled by the residual scatter); no fixed allowance'],
      ['cleaning', s.steps.length ? s.steps.map(stepText).join('; ') : 'none (the file\'s data)'],
      ['assignment', choices.length ? `search with the chosen bands fixed: ${choices.join('; ')}` : 'automatic search over the candidate transitions'],
    ],
    bands: a.bands.bands.map((b) => ({ centre: b.centre, centre_nm: b.centre_nm, fwhm: b.fwhm, height: b.height, area: b.area, shape: b.shape })),
    results: cardRows(a.fit).map(([label, value]) => ({ label, value })),
    assignment: assignmentRows(lf),
    predicted: best.predicted,
    warnings: lfWarnings(lf),
    caution: CAUTION,
    samples: seriesSamples().map((x) => Object.fromEntries(SERIES_COLUMNS.map(([label, get]) => [label, get(x).text]))),
    analysis: a,
  };
}

const el = (tag, content = [], cls) => {
  const e = document.createElement(tag);
  if (cls) e.className = cls;
  if (typeof content === 'string') e.textContent = content; else e.append(...content);
  return e;
};
function table(head, rows) {
  const t = el('table', [], 'band-table');
  t.append(el('thead', [el('tr', head.map((h) => { const th = el('th', h); th.scope = 'col'; return th; }))]));
  // Numbers (with their ± and digit groups) are never broken across lines.
  const cell = (v) => el('td', String(v), /^[-−\d\s.,±e+—]+(cm⁻¹)?$/.test(String(v)) ? 'num' : '');
  t.append(el('tbody', rows.map((r) => el('tr', r.map(cell)))));
  return t;
}
/** An SVG export as a scalable inline figure. */
function figureOf(svgText, caption) {
  const svg = new DOMParser().parseFromString(svgText, 'image/svg+xml').documentElement;
  const w = svg.getAttribute('width'), h = svg.getAttribute('height');
  if (w && h) { svg.setAttribute('viewBox', `0 0 ${parseFloat(w)} ${parseFloat(h)}`); svg.removeAttribute('width'); svg.removeAttribute('height'); }
  return el('figure', [document.importNode(svg, true), el('figcaption', caption)], 'figure');
}

function renderReport(r) {
  const section = (title, ...content) => el('section', [el('h2', title), ...content]);
  const nm = (e) => (e && Number.isFinite(e.value) ? e.value.toFixed(1) : '—');
  const body = [
    el('h1', r.title, ''),
    el('p', `${r.program} · ${r.date.replace('T', ' ').slice(0, 16)} UTC · sample ${r.sample.name} (${r.sample.file || 'no file name'}, ${r.sample.points} points, ${Math.round(r.sample.range_cm[0])}–${Math.round(r.sample.range_cm[1])} cm⁻¹)`),
    el('p', r.caution, 'caution'),
    section('Results', table(['quantity', 'value'], r.results.map((x) => [x.label, x.value]))),
    section('Spectrum', figureOf(wasm_bindgen.spectrum_svg(figure(), 760, 380), 'The spectrum as shown in the workspace, with the predicted transitions (dashed: spin-forbidden).')),
    section('Assignment', table(['observed / cm⁻¹', 'λ / nm', 'state', 'chosen', 'calculated / cm⁻¹', 'residual / cm⁻¹'],
      r.assignment.map((x) => [x.energy.toFixed(0), x.nm.toFixed(1), x.state, x.choice === '' ? 'automatic' : x.choice === '!x' ? 'not d–d' : x.choice, whole(x.calculated), whole(x.residual)]))),
    section('Bands', table(['#', 'shape', 'centre / cm⁻¹', 'λ / nm', 'FWHM / cm⁻¹', 'height', 'area'],
      r.bands.map((b, i) => [i + 1, b.shape, fmt(b.centre), nm(b.centre_nm), fmt(b.fwhm), fmt(b.height), fmt(b.area)]))),
    section('Energy-level diagram', figureOf(wasm_bindgen.level_diagram_svg(state.lf.diagram), 'E/B against Δ/B at the fitted C/B; vertical line: the fitted Δ/B; points: the observed bands; dashed: the spin change.')),
    section('Predicted transitions', table(['state', 'energy / cm⁻¹', 'λ / nm', 'spin', 'observed'],
      r.predicted.map((p) => [p.typeset, fmt({ value: p.energy, sigma: p.sigma }), (1e7 / p.energy).toFixed(0), p.spin_allowed ? 'allowed' : 'forbidden', p.observed ? 'yes' : '']))),
    section('Method and model', el('dl', r.method.flatMap(([k, v]) => [el('dt', k), el('dd', v)]))),
    section('Warnings', r.warnings.length ? el('ul', r.warnings.map((w) => el('li', w)), 'warnings') : el('p', 'none')),
  ];
  if (r.samples.length >= 2) {
    const cols = SERIES_COLUMNS.map(([label]) => label);
    body.push(section('All analysed samples', table(cols, r.samples.map((x) => cols.map((k) => x[k]))),
      figureOf(wasm_bindgen.series_plot_svg(seriesPoints()), 'Δ and β of each sample (± one standard uncertainty), in the order of the table.')));
  }
  $('report-body').replaceChildren(...body);
}

function openReport() {
  const r = reportData();
  if (!r) { say('Analyse a sample first: the report needs a ligand-field result.', 'info'); return; }
  renderReport(r);
  $('report').hidden = false;
  document.body.classList.add('report-view');
  window.scrollTo(0, 0);
  $('report-print').focus();
}

function closeReport() {
  $('report').hidden = true;
  document.body.classList.remove('report-view');
  $('report-open').focus();
}

function wireReport() {
  $('report-open').addEventListener('click', openReport);
  $('report-close').addEventListener('click', closeReport);
  $('report-print').addEventListener('click', () => window.print());
  $('report-json').addEventListener('click', () => {
    const r = reportData();
    if (r) download(new Blob([JSON.stringify(r, null, 2)], { type: 'application/json' }), `${baseName()}-report.json`);
  });
}
