// ---------- bands ----------
// A sample's band state: `model` (the band model on screen: the fitted bands
// or the user's edits, with locks and ties, as a core `BandModel`; `s.edited`
// says it was changed since the last fit), `fit` (the last band fit: band
// table, BIC per count) and `curves` (total, components, baseline and
// residual on x, drawn on the plot). The model on screen is what the
// document hands the core (`doc.bands.model`) when the sample is fitted,
// analysed or saved. Every change goes through edit(), so undo restores
// them together.
const est = (e) => fmt(e);
const selected = () => activeSample();
const LOCKS = [['centre', 'centre'], ['fwhm', 'width'], ['height', 'height']];

/** The document's band setup for a band count (0: chosen by BIC up to the engine's limit) and a model (null: automatic). */
function bandSetup(d, n, model) {
  return { ...d.bands, count: n > 0 ? { fixed: n } : { auto: DEFAULTS.auto_bands }, shape: $('band-shape').value, model };
}

/** The model on screen as the core's `BandModel` (no page-only fields), or null. */
function modelForDoc(s) {
  const m = s.model;
  if (!m || !m.bands.length) return null;
  return { bands: m.bands, ties: m.ties, baseline: m.baseline || (s.fit && s.fit.fit.baseline.model) || DEFAULTS.refit_baseline };
}

/** Runs `analysis::analyze` on a document in the worker (the function `ddlens analyze --project` runs); returns the analysed document. */
function runDocument(label, doc) {
  return runJob(label, 'analyze', { doc });
}

/** A band fit (no ligand field) of a sample: automatic with `n` bands (0: by BIC) or from `model`. */
function runFit(s, label, n, model = null) {
  return runDocument(label, copyDoc(s.doc, (d) => { d.bands = bandSetup(d, n, model); d.ligand_field = null; d.results = null; }));
}

/** Starting bands from a fit, keeping the locks and ties of `previous` when the count is unchanged. */
function modelFrom(fit, previous) {
  const same = previous && previous.bands.length === fit.bands.length;
  return {
    bands: fit.bands.map((b, i) => ({
      shape: b.shape, centre: b.centre.value, fwhm: b.fwhm.value, height: b.height.value,
      extra: b.extra ? b.extra.value : null, fixed: same ? [...previous.bands[i].fixed] : [],
    })),
    ties: same ? previous.ties : [],
    baseline: fit.baseline.model,
  };
}

/** Sets a sample's band fit, model and curves from the band fit of an analysed document (inside an edit). */
function takeBandFit(t, results, previous) {
  t.fit = { fit: results.bands, bic_per_band_count: results.bands.bic_per_band_count, reduced_chi2_per_band_count: results.bands.reduced_chi2_per_band_count };
  t.model = modelFrom(results.bands, previous);
  t.edited = false;
  t.curves = modelCurves(t, t.model);
  return t.model;
}

function storeFit(id, doc, previous) {
  edit(() => { markStale(find(id), 'the bands changed'); takeBandFit(find(id), doc.results, previous); });
}

async function fitBands() {
  const s = selected();
  if (!s) return;
  const n = parseInt($('band-count').value, 10);
  try {
    const result = await runFit(s, `Fitting bands to ${s.name}…`, Number.isFinite(n) && n > 0 ? n : 0);
    storeFit(s.id, result, s.model);
  } catch (e) {
    jobFailed(s, 'fit', e);
  }
}

/** Fits from the current (edited) bands with their locks and ties. */
async function refitBands() {
  const s = selected();
  if (!s || !s.model || !s.model.bands.length) { say('Add a band or fit bands first: there is nothing to refit.', 'info'); return; }
  try {
    // A refit keeps the baseline model of the fit it starts from.
    const result = await runFit(s, `Refitting ${s.name}…`, s.model.bands.length, modelForDoc(s));
    storeFit(s.id, result, s.model);
    const [lo, hi] = [s.wavenumber[0], s.wavenumber.at(-1)];
    const odd = find(s.id).model.bands.map((b, i) => (b.centre < lo || b.centre > hi ? `band ${i + 1} ended outside the data` : !(b.height > 0) ? `band ${i + 1} ended with no height` : null)).filter(Boolean);
    if (odd.length) say(`${s.name}: the refit left ${odd.join(' and ')}; remove it or lock its centre and refit.`);
  } catch (e) {
    jobFailed(s, 'refit', e);
  }
}

/** BIC and χ²ᵥ for 1…6 bands (the pipeline's automatic count), shown as a table to pick from. */
async function compareCounts() {
  const s = selected();
  if (!s) return;
  try {
    const r = (await runFit(s, `Comparing band counts for ${s.name}…`, 0)).results.bands;
    const chi = new Map(r.reduced_chi2_per_band_count || []);
    state.bic = { id: s.id, best: r.bands.length, rows: (r.bic_per_band_count || []).map(([n, bic]) => ({ n, bic, chi: chi.get(n) })) };
    renderBic();
  } catch (e) {
    jobFailed(s, 'comparison', e);
  }
}

function renderBic() {
  const b = state.bic;
  const s = selected();
  $('bic-table').hidden = !(b && s && b.id === s.id);
  if ($('bic-table').hidden) return;
  const low = Math.min(...b.rows.map((r) => r.bic));
  $('bic-table').tBodies[0].replaceChildren(...b.rows.map((r) => {
    const tr = document.createElement('tr');
    if (r.n === b.best) tr.className = 'chosen';
    for (const v of [`${r.n}${r.n === b.best ? ' (suggested)' : ''}`, r.bic.toFixed(1), (r.bic - low).toFixed(1), r.chi != null ? r.chi.toPrecision(3) : '—']) {
      const td = document.createElement('td');
      td.textContent = v;
      tr.append(td);
    }
    const td = document.createElement('td');
    tr.append(td);
    if (r.n === 0) { td.textContent = 'baseline only'; return tr; } // the no-band model is a row to compare, not a fit to pick
    const use = document.createElement('button');
    use.type = 'button';
    use.textContent = `Fit ${r.n} band${r.n > 1 ? 's' : ''}`;
    use.addEventListener('click', () => { $('band-count').value = r.n; fitBands(); });
    td.append(use);
    tr.addEventListener('click', (e) => { if (e.target === tr || e.target.tagName === 'TD') use.click(); });
    return tr;
  }));
}

// ---------- editing bands ----------
/** Curves of a model on the sample's x (bands at their set values, the last fit's baseline). */
function modelCurves(s, model) {
  // One Float64Array: the total, then each band's component, each on x.
  const packed = wasm_bindgen.evaluate_bands(Float64Array.from(s.wavenumber), model.bands, s.fit ? s.fit.fit.baseline : null);
  const n = s.wavenumber.length;
  const total = packed.subarray(0, n);
  const components = model.bands.map((_, k) => packed.subarray((k + 1) * n, (k + 2) * n));
  return { x: s.wavenumber, total, components, residual: s.fit ? s.values.map((v, i) => v - total[i]) : null };
}

/** Applies `change(model)` to a copy of the selected sample's model, as one undoable edit. */
function editModel(change) {
  const s = selected();
  if (!s) return;
  const model = { bands: (s.model ? s.model.bands : []).map((b) => ({ ...b, fixed: [...b.fixed] })), ties: s.model ? [...s.model.ties] : [], baseline: s.model && s.model.baseline };
  try {
    change(model);
    const curves = modelCurves(s, model);
    edit(() => markStale(Object.assign(find(s.id), { model, curves, edited: true }), 'the bands changed'));
  } catch (e) {
    say(`${s.name}: ${e.message || e}`);
  }
}

function addBand(centre, height) {
  const s = selected();
  if (!s) { say('Load a spectrum first.', 'info'); return; }
  const [lo, hi] = [s.wavenumber[0], s.wavenumber.at(-1)];
  if (!(centre >= lo && centre <= hi) || !Number.isFinite(height)) {
    say(`A band needs a centre inside ${lo.toFixed(0)}–${hi.toFixed(0)} cm⁻¹ and a height.`);
    return;
  }
  const span = state.frame ? Math.abs(currentX()[1] - currentX()[0]) : hi - lo;
  editModel((m) => m.bands.push({ shape: $('band-shape').value, centre, fwhm: span / 10, height, extra: null, fixed: [] }));
}

/** Drag handles of the selected sample's bands: a dot at the peak, a ring at the half-width point. */
function bandHandles(model) {
  return model.bands.flatMap((b) => [{ x: b.centre, y: b.height }, { x: b.centre + b.fwhm / 2, y: b.height / 2, hollow: true }]);
}

// ---------- band table ----------
/** The band table as rows of cells (value and σ in separate columns, full precision). */
function bandRows() {
  const s = selected();
  const fit = s && s.fit && s.fit.fit;
  if (!fit) return null;
  const cols = [['centre_cm-1', 'centre'], ['centre_nm', 'centre_nm'], ['fwhm_cm-1', 'fwhm'], ['height', 'height'], ['area', 'area'], ['f', 'oscillator_strength']];
  const head = ['band', 'shape', ...cols.flatMap(([n]) => [n, `${n}_sigma`]), 'class'];
  const num = (v) => (v == null || !Number.isFinite(v) ? '' : String(v));
  const rows = fit.bands.map((b, i) => [String(i + 1), b.shape, ...cols.flatMap(([, k]) => [num(b[k] && b[k].value), num(b[k] && b[k].sigma)]), b.class || '']);
  return { name: s.name, rows: [head, ...rows] };
}

/** A number cell as it is; any other cell as the core's text cell (formula starts neutralised, quoted when needed). */
const numberOrTextCell = (c) => (c !== '' && Number.isFinite(Number(c)) ? c : wasm_bindgen.csv_cell(String(c)));

function exportBandsCsv() {
  const t = bandRows();
  if (!t) { say('Fit bands first: there is no band table to export.'); return; }
  const quote = numberOrTextCell;
  download(new Blob([`${t.rows.map((r) => r.map(quote).join(',')).join('\n')}\n`], { type: 'text/csv' }), `${t.name.replace(/[^\w.-]+/g, '_')}-bands.csv`);
}

async function copyBands() {
  const t = bandRows();
  if (!t) { say('Fit bands first: there is no band table to copy.'); return; }
  try {
    await navigator.clipboard.writeText(`${t.rows.map((r) => r.map(numberOrTextCell).join('\t')).join('\n')}\n`);
    say('Band table copied as tab-separated text.', 'info');
  } catch (e) {
    say(`The clipboard refused the table: ${e.message || e}`);
  }
}

/** One control of the band table, labelled for screen readers, that edits band `i`. */
function control(tag, id, label, attrs, onChange) {
  const el = Object.assign(document.createElement(tag), { id, ...attrs });
  el.setAttribute('aria-label', label);
  el.addEventListener('change', onChange);
  return el;
}

function bandCells(s, i) {
  const m = s.model;
  const b = m.bands[i];
  const shape = control('select', `band-${i}-shape`, `band ${i + 1} shape`, {}, (e) => editModel((x) => Object.assign(x.bands[i], { shape: e.target.value, extra: null, fixed: x.bands[i].fixed.filter((f) => f !== 'extra') })));
  shape.append(...[...$('band-shape').options].map((o) => new Option(o.textContent, o.value, false, o.value === b.shape)));
  const locks = document.createElement('span');
  for (const [key, word] of LOCKS) {
    const box = control('input', `band-${i}-lock-${key}`, `lock band ${i + 1} ${word}`, { type: 'checkbox', checked: b.fixed.includes(key) }, (e) => editModel((x) => {
      const f = x.bands[i].fixed.filter((v) => v !== key);
      x.bands[i].fixed = e.target.checked ? [...f, key] : f;
    }));
    const l = document.createElement('label');
    l.append(box, ` ${word}`);
    locks.append(l, ' ');
  }
  const tie = m.ties.find((t) => t.kind === 'equal-fwhm' && t.band === i);
  const tieSel = control('select', `band-${i}-tie`, `band ${i + 1} width tied to`, {}, (e) => editModel((x) => {
    x.ties = x.ties.filter((t) => !(t.kind === 'equal-fwhm' && t.band === i));
    if (e.target.value !== '') x.ties.push({ kind: 'equal-fwhm', band: i, to: Number(e.target.value) });
  }));
  tieSel.append(new Option('own', ''), ...m.bands.map((_, k) => k).filter((k) => k !== i).map((k) => new Option(`${k + 1}`, String(k), false, tie && tie.to === k)));
  const remove = Object.assign(document.createElement('button'), { type: 'button', id: `band-${i}-remove`, textContent: '×', className: 'icon' });
  remove.setAttribute('aria-label', `remove band ${i + 1}`);
  remove.addEventListener('click', () => editModel((x) => {
    x.bands.splice(i, 1);
    x.ties = x.ties.filter((t) => t.band !== i && t.to !== i).map((t) => ({ ...t, band: t.band - (t.band > i), to: t.to - (t.to > i) }));
  }));
  return [shape, locks, tieSel, remove];
}

/** A band's centre, width or height as a number field (the keyboard's way to move a band), with the fit's σ. */
function valueCell(b, r, i, key, label) {
  const box = document.createElement('span');
  const input = control('input', `band-${i}-${key}`, `band ${i + 1} ${label}`, { type: 'number', step: 'any', value: String(+b[key].toPrecision(6)) }, (e) => {
    const v = parseFloat(e.target.value);
    if (Number.isFinite(v) && (key === 'height' || v > 0)) editModel((x) => { x.bands[i][key] = v; });
    else { say(`Band ${i + 1}: the ${label.split(' ')[0]} must be a${key === 'height' ? '' : ' positive'} number.`); renderBands(); }
  });
  box.append(input);
  const sigma = r[key] && r[key].sigma;
  if (sigma != null) box.append(` ± ${+sigma.toPrecision(2)}`);
  return box;
}

function renderBands() {
  const s = selected();
  const m = s && s.model;
  renderBic();
  $('bands-for').textContent = s ? `— ${s.name}` : '';
  $('band-table').hidden = !(m && m.bands.length);
  if ($('band-table').hidden) return;
  const fit = s.fit && !s.edited ? s.fit.fit : null;
  const st = fit && fit.statistics;
  $('fit-stats').textContent = fit
    ? `${s.name}: ${fit.bands.length} bands · χ²ᵥ ${st.reduced_chi2 != null ? st.reduced_chi2.toPrecision(3) : '—'} · R² ${st.r2 != null ? st.r2.toFixed(4) : '—'} · BIC ${st.bic != null ? st.bic.toFixed(1) : '—'} · ${st.evaluations} evaluations`
    : `${s.name}: ${m.bands.length} bands as set (not fitted; “Refit from these bands” fits them)`;
  const focused = document.activeElement && document.activeElement.id;
  $('band-table').tBodies[0].replaceChildren(...m.bands.map((b, i) => {
    const r = fit ? fit.bands[i] : { centre_nm: { value: 1e7 / b.centre } };
    const [shape, locks, tie, remove] = bandCells(s, i);
    const tr = document.createElement('tr');
    for (const v of [String(i + 1), shape, valueCell(b, r, i, 'centre', 'centre / cm⁻¹'), est(r.centre_nm), valueCell(b, r, i, 'fwhm', 'FWHM / cm⁻¹'), valueCell(b, r, i, 'height', 'height'),
      est(r.area), est(r.oscillator_strength), r.class || '—', locks, tie, remove]) {
      const td = document.createElement('td');
      td.append(v);
      tr.append(td);
    }
    return tr;
  }));
  if (focused && focused.startsWith('band-') && $(focused)) $(focused).focus();
}
