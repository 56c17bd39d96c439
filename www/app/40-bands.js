// ---------- bands ----------
const est = (e) => (e && Number.isFinite(e.value) ? (e.sigma != null ? `${+e.value.toPrecision(5)} ± ${+e.sigma.toPrecision(2)}` : `${+e.value.toPrecision(5)}`) : '—');

async function fitBands() {
  const s = find(Number($('clean-target').value));
  if (!s) return;
  const n = parseInt($('band-count').value, 10);
  try {
    const result = await runJob(`Fitting bands to ${s.name}…`, 'fit', {
      x: Float64Array.from(s.wavenumber), y: Float64Array.from(s.values),
      n: Number.isFinite(n) && n > 0 ? n : 0, shape: $('band-shape').value,
    });
    edit(() => { find(s.id).fit = { ...result, x: s.wavenumber }; });
  } catch (e) {
    say(e.cancelled ? `${s.name}: fit cancelled` : `${s.name}: ${e.message || e}`, e.cancelled ? 'info' : 'warn');
  }
}

/** The band table as rows of cells (value and σ in separate columns, full precision). */
function bandRows() {
  const s = find(Number($('clean-target').value));
  const fit = s && s.fit && s.fit.fit;
  if (!fit) return null;
  const cols = [['centre_cm-1', 'centre'], ['centre_nm', 'centre_nm'], ['fwhm_cm-1', 'fwhm'], ['height', 'height'], ['area', 'area'], ['f', 'oscillator_strength']];
  const head = ['band', 'shape', ...cols.flatMap(([n]) => [n, `${n}_sigma`]), 'class'];
  const num = (v) => (v == null || !Number.isFinite(v) ? '' : String(v));
  const rows = fit.bands.map((b, i) => [String(i + 1), b.shape, ...cols.flatMap(([, k]) => [num(b[k] && b[k].value), num(b[k] && b[k].sigma)]), b.class || '']);
  return { name: s.name, rows: [head, ...rows] };
}

function exportBandsCsv() {
  const t = bandRows();
  if (!t) { say('Fit bands first: there is no band table to export.'); return; }
  const quote = (c) => (/[",\n]/.test(c) ? `"${c.replace(/"/g, '""')}"` : c);
  download(new Blob([`${t.rows.map((r) => r.map(quote).join(',')).join('\n')}\n`], { type: 'text/csv' }), `${t.name.replace(/[^\w.-]+/g, '_')}-bands.csv`);
}

async function copyBands() {
  const t = bandRows();
  if (!t) { say('Fit bands first: there is no band table to copy.'); return; }
  try {
    await navigator.clipboard.writeText(`${t.rows.map((r) => r.join('\t')).join('\n')}\n`);
    say('Band table copied as tab-separated text.', 'info');
  } catch (e) {
    say(`The clipboard refused the table: ${e.message || e}`);
  }
}

function renderBands() {
  const s = find(Number($('clean-target').value));
  const fit = s && s.fit && s.fit.fit;
  $('band-table').hidden = !fit;
  if (!fit) return;
  const st = fit.statistics;
  $('fit-stats').textContent = `${s.name}: ${fit.bands.length} bands · χ²ᵥ ${st.reduced_chi2 != null ? st.reduced_chi2.toPrecision(3) : '—'} · R² ${st.r2 != null ? st.r2.toFixed(4) : '—'} · BIC ${st.bic != null ? st.bic.toFixed(1) : '—'} · ${st.evaluations} evaluations`;
  $('band-table').tBodies[0].replaceChildren(...fit.bands.map((b, i) => {
    const tr = document.createElement('tr');
    for (const v of [String(i + 1), b.shape, est(b.centre), est(b.centre_nm), est(b.fwhm), est(b.height), est(b.area), est(b.oscillator_strength), b.class || '—']) {
      const td = document.createElement('td');
      td.textContent = v;
      tr.append(td);
    }
    return tr;
  }));
}
