// ---------- cleaning ----------
// A sample's document keeps the file's data and the cleaning steps (crop,
// smoothing, baseline subtraction, in the order the panel lists them); the
// core applies them (`apply_steps`, the function `ddlens analyze` uses), and
// the cleaned spectrum on screen (`wavenumber`/`values`) is recomputed from
// both, so any step can be changed or dropped and the edit history restores them.
const STEP = {
  crop: (low, high) => ({ crop: { low, high } }),
  smooth: (window, order) => ({ smooth: { window, order } }),
  baseline: (method) => ({ subtract_baseline: { method } }),
};
/** The settings of the step of `kind` ('crop', 'smooth', 'subtract_baseline') in a step list, or null. */
const stepOf = (steps, kind) => { const st = (steps || []).find((x) => x && x[kind]); return st ? st[kind] : null; };

/** The cleaned spectrum of a document's data and steps (throws the core's sentence). */
const cleaned = (data, steps) => wasm_bindgen.apply_steps(data, steps);

/** Sets the sample's cleaned spectrum from its document; returns the sample. */
function withCleaned(s) {
  const out = s.steps.length ? cleaned(s.raw, s.steps) : { wavenumber: s.raw.wavenumber, values: s.raw.values, warnings: [] };
  return Object.assign(s, { wavenumber: out.wavenumber, values: out.values, cleaningWarnings: out.warnings || [] });
}

/** The baseline method chosen in the panel (a core `BaselineMethod`), or null; throws on a bad region list. */
function baselineMethod() {
  const m = $('baseline-method').value;
  const num = (id) => parseFloat($(id).value);
  if (m === 'polynomial') {
    const regions = $('baseline-regions').value.split(/[,;]/).map((t) => t.trim()).filter(Boolean).map((t) => {
      const r = t.split(/\s*(?:-|–|:|to)\s*/).map(Number);
      if (r.length !== 2 || !r.every(Number.isFinite)) throw new Error(`the baseline region '${t}' should read like 9000-10500`);
      return [Math.min(...r), Math.max(...r)];
    });
    return { polynomial: { order: parseInt($('baseline-order').value, 10) || 0, regions } };
  }
  if (m === 'asls') return { asls: { lambda: num('baseline-lambda'), p: num('baseline-p') } };
  if (m === 'arpls') return { arpls: { lambda: num('baseline-lambda') } };
  if (m === 'scattering') return { scattering: { exponent: null } };
  return m ? m : null; // 'rubber_band' is a unit variant
}

/** Fills the cleaning inputs with the engine's defaults (Savitzky–Golay window and order, each baseline method's parameters). */
function setCleaningDefaults() {
  const c = DEFAULTS.cleaning;
  const args = Object.assign({}, ...c.baselines.filter((m) => typeof m === 'object').map((m) => Object.values(m)[0]));
  for (const [id, v] of [['smooth-window', c.smooth_window], ['smooth-order', c.smooth_order], ['baseline-order', args.order], ['baseline-lambda', args.lambda], ['baseline-p', args.p]]) {
    if (v != null) $(id).value = v;
  }
}

/** Shows only the inputs of the chosen method. */
function showBaselineInputs() {
  const m = $('baseline-method').value;
  for (const el of $('baseline-row').querySelectorAll('[data-method]')) el.hidden = !el.dataset.method.split(' ').includes(m);
}

/** The panel's crop and smoothing (without baseline), as document steps. */
function panelSteps() {
  const lo = parseFloat($('crop-lo').value), hi = parseFloat($('crop-hi').value);
  const steps = [];
  if (Number.isFinite(lo) && Number.isFinite(hi)) steps.push(STEP.crop(Math.min(lo, hi), Math.max(lo, hi)));
  if ($('smooth-on').checked) steps.push(STEP.smooth(parseInt($('smooth-window').value, 10), parseInt($('smooth-order').value, 10)));
  return steps;
}

const same = (a, b) => JSON.stringify(a) === JSON.stringify(b);
/** Recomputes the dashed previews (the panel's smoothing, its baseline) while
 *  the panel differs from the applied steps; none once they are applied. */
function previewBaseline() {
  showBaselineInputs();
  const s = activeSample();
  state.baselinePreview = null;
  state.smoothPreview = null;
  $('baseline-method').removeAttribute('aria-invalid');
  try {
    const method = s && baselineMethod();
    const steps = [...panelSteps(), ...(method ? [STEP.baseline(method)] : [])];
    if (s && !same(steps, s.steps)) {
      const d = cleaned(s.raw, panelSteps());
      const smooth = stepOf(steps, 'smooth');
      if (smooth && !same(smooth, stepOf(s.steps, 'smooth'))) state.smoothPreview = { id: s.id, x: d.wavenumber, y: d.values };
      if (method) state.baselinePreview = { id: s.id, x: d.wavenumber, y: Array.from(wasm_bindgen.baseline(Float64Array.from(d.wavenumber), Float64Array.from(d.values), method)) };
    }
    $('baseline-status').textContent = '';
  } catch (e) {
    $('baseline-method').setAttribute('aria-invalid', 'true');
    $('baseline-status').textContent = `No preview: ${e.message || e}`;
  }
  drawSoon();
}

let previewTimer = null;
/** The preview off the refresh path (every edit redraws the panel): computed 150 ms after the last call. */
function previewBaselineSoon() {
  clearTimeout(previewTimer);
  previewTimer = setTimeout(previewBaseline, 150);
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
  const s = activeSample();
  $('cleaning-for').textContent = s ? `— ${s.name}` : '';
  const steps = s ? s.steps : [];
  const crop = stepOf(steps, 'crop'), smooth = stepOf(steps, 'smooth'), sub = stepOf(steps, 'subtract_baseline');
  $('crop-lo').value = crop ? crop.low : '';
  $('crop-hi').value = crop ? crop.high : '';
  $('smooth-on').checked = !!smooth;
  if (smooth) { $('smooth-window').value = smooth.window; $('smooth-order').value = smooth.order; }
  const b = sub && sub.method;
  const kind = b ? (typeof b === 'string' ? b : Object.keys(b)[0]) : '';
  $('baseline-method').value = kind;
  const args = b && typeof b === 'object' ? b[kind] : {};
  if (args.order != null) $('baseline-order').value = args.order;
  if (args.regions) $('baseline-regions').value = args.regions.map((r) => r.join('-')).join(', ');
  if (args.lambda != null) $('baseline-lambda').value = args.lambda;
  if (args.p != null) $('baseline-p').value = args.p;
  previewBaselineSoon();
}

/** Applies the panel's steps (or none) to the selected sample through the core; one undoable edit. */
function applyCleaning(clear = false) {
  const s = activeSample();
  if (!s) return;
  let steps, out;
  try {
    const method = clear ? null : baselineMethod();
    steps = clear ? [] : [...panelSteps(), ...(method ? [STEP.baseline(method)] : [])];
    out = cleaned(s.raw, steps);
  } catch (e) {
    say(`${s.name}: ${e.message || e}`);
    return;
  }
  for (const w of out.warnings || []) say(`${s.name}: ${w.message || w}`, 'info');
  edit(() => {
    const t = markStale(withDoc(find(s.id), (d) => { d.steps = steps; d.bands.model = null; d.results = null; }), 'the cleaning changed');
    Object.assign(t, { wavenumber: out.wavenumber, values: out.values, cleaningWarnings: out.warnings || [], fit: null, model: null, edited: false, curves: null });
  });
  // Applied: the panel now matches the steps, so no preview is left drawn (not even for the debounce).
  clearTimeout(previewTimer);
  previewBaseline();
}
