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
