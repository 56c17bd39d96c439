// ---------- cleaning ----------
// A sample keeps the file's data (`raw`) and the steps applied to it
// (`processing`); `wavenumber`/`values` are recomputed from both, so any
// step can be changed or dropped and the edit history restores them.
// Order: crop, smoothing, then baseline subtraction.
function processed(raw, p) {
  let x = raw.wavenumber, y = raw.values;
  if (p && p.crop) {
    const keep = x.map((v, i) => i).filter((i) => x[i] >= p.crop[0] && x[i] <= p.crop[1]);
    if (keep.length < 2) throw new Error('the crop range holds fewer than two points');
    x = keep.map((i) => x[i]);
    y = keep.map((i) => y[i]);
  }
  if (p && p.smooth) y = Array.from(wasm_bindgen.smooth_savgol(Float64Array.from(y), p.smooth.window, p.smooth.order));
  if (p && p.baseline) {
    const b = wasm_bindgen.baseline(Float64Array.from(x), Float64Array.from(y), p.baseline);
    y = y.map((v, i) => v - b[i]);
  }
  return { x, y };
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

/** Shows only the inputs of the chosen method. */
function showBaselineInputs() {
  const m = $('baseline-method').value;
  for (const el of $('baseline-row').querySelectorAll('[data-method]')) el.hidden = !el.dataset.method.split(' ').includes(m);
}

/** The panel's crop and smoothing (without baseline), as a processing record. */
function panelSteps() {
  const lo = parseFloat($('crop-lo').value), hi = parseFloat($('crop-hi').value);
  return {
    crop: Number.isFinite(lo) && Number.isFinite(hi) ? [Math.min(lo, hi), Math.max(lo, hi)] : null,
    smooth: $('smooth-on').checked ? { window: parseInt($('smooth-window').value, 10), order: parseInt($('smooth-order').value, 10) } : null,
  };
}

/** Recomputes the dashed baseline preview from the panel's settings (or clears it). */
function previewBaseline() {
  showBaselineInputs();
  const s = find(Number($('clean-target').value));
  state.baselinePreview = null;
  $('baseline-method').removeAttribute('aria-invalid');
  try {
    const method = s && baselineMethod();
    if (method) {
      const d = processed(s.raw, panelSteps());
      state.baselinePreview = { id: s.id, x: d.x, y: Array.from(wasm_bindgen.baseline(Float64Array.from(d.x), Float64Array.from(d.y), method)) };
    }
    $('baseline-status').textContent = '';
  } catch (e) {
    $('baseline-method').setAttribute('aria-invalid', 'true');
    $('baseline-status').textContent = `No preview: ${e.message || e}`;
  }
  drawSoon();
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
  const b = p.baseline;
  const kind = b ? (typeof b === 'string' ? b : Object.keys(b)[0]) : '';
  $('baseline-method').value = kind;
  const args = b && typeof b === 'object' ? b[kind] : {};
  if (args.order != null) $('baseline-order').value = args.order;
  if (args.regions) $('baseline-regions').value = args.regions.map((r) => r.join('-')).join(', ');
  if (args.lambda != null) $('baseline-lambda').value = args.lambda;
  if (args.p != null) $('baseline-p').value = args.p;
  previewBaseline();
}

function applyCleaning(clear = false) {
  const s = find(Number($('clean-target').value));
  if (!s) return;
  let p, out;
  try {
    p = clear ? null : { ...panelSteps(), baseline: baselineMethod() };
    out = processed(s.raw, p);
  } catch (e) {
    say(`${s.name}: ${e.message || e}`);
    return;
  }
  edit(() => Object.assign(find(s.id), { processing: p, wavenumber: out.x, values: out.y, fit: null, model: null, curves: null }));
}
