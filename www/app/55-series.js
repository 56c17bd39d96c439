// ---------- several samples ----------
const bestOf = (s) => s.lf.analysis.fit.best;
const numCell = (e) => ({ value: e ? e.value : -Infinity, text: fmt(e) });
const textCell = (t) => ({ value: t, text: t });
/** The results table: heading and, per sample, the cell's sort value and text. */
const SERIES_COLUMNS = [
  ['sample', (s) => textCell(s.name)], ['ion', (s) => textCell(`${s.lf.controls.ion} ${s.lf.controls.geometry}`)],
  ['Δ / cm⁻¹', (s) => numCell(bestOf(s).derived.delta)], ['B / cm⁻¹', (s) => numCell(bestOf(s).parameters.b)],
  ['β', (s) => numCell(bestOf(s).derived.beta)], ['C/B', (s) => numCell(bestOf(s).derived.c_over_b)],
  ['Dq/B', (s) => numCell(bestOf(s).derived.dq_over_b)],
  ['ground state', (s) => textCell(`${bestOf(s).ground_typeset}, ${bestOf(s).spin.state}`)],
  ['χ²', (s) => ({ value: bestOf(s).chi2, text: chi2Text(bestOf(s).chi2) })],
];
/** The samples with a fit, in the table's sort order. */
function seriesSamples() {
  const list = state.samples.filter((s) => s.lf && s.lf.analysis.fit);
  const { key, dir } = state.lfSort;
  const col = SERIES_COLUMNS[key];
  if (!col) return list;
  const order = (a, b) => { const [x, y] = [col[1](a).value, col[1](b).value]; return typeof x === 'number' ? x - y : String(x).localeCompare(String(y)); };
  return [...list].sort((a, b) => order(a, b) * dir);
}
const seriesPoints = () => seriesSamples().map((s) => ({ sample: s.name, delta: bestOf(s).derived.delta, beta: bestOf(s).derived.beta }));

function renderSeries() {
  const list = seriesSamples();
  $('series').hidden = list.length < 2;
  if (list.length < 2) return;
  const head = $('series-table').tHead.rows[0];
  head.replaceChildren(...SERIES_COLUMNS.map(([label], i) => {
    const th = document.createElement('th');
    th.scope = 'col';
    const sorted = state.lfSort.key === i;
    th.setAttribute('aria-sort', sorted ? (state.lfSort.dir > 0 ? 'ascending' : 'descending') : 'none');
    const button = document.createElement('button');
    button.type = 'button';
    button.className = 'sort';
    button.textContent = `${label}${sorted ? (state.lfSort.dir > 0 ? ' ▲' : ' ▼') : ''}`;
    button.addEventListener('click', () => {
      state.lfSort = { key: i, dir: sorted ? -state.lfSort.dir : 1 };
      renderSeries();
      $('series-table').tHead.rows[0].cells[i].firstChild.focus();
      autosaveSoon();
    });
    th.append(button);
    return th;
  }));
  const body = $('series-table').tBodies[0];
  body.replaceChildren();
  for (const s of list) {
    const tr = row(body, SERIES_COLUMNS.map(([, get]) => get(s).text));
    const show = document.createElement('button');
    show.type = 'button';
    show.className = 'sort';
    show.textContent = s.name;
    show.title = `show the analysis of ${s.name}`;
    show.addEventListener('click', () => selectSample(s.id));
    tr.cells[0].replaceChildren(show);
  }
  const canvas = $('series-canvas');
  const dpr = window.devicePixelRatio || 1;
  const r = canvas.getBoundingClientRect();
  canvas.width = Math.max(1, Math.round(r.width * dpr));
  canvas.height = Math.max(1, Math.round(r.height * dpr));
  try { wasm_bindgen.draw_series_plot(canvas, seriesPoints(), dpr); } catch (e) { say(`The series plot could not be drawn: ${e.message || e}`); }
}

/** Makes a sample the active one: the list highlights it and every panel shows it. */
function selectSample(id) {
  if (!find(id)) return;
  $('clean-target').value = String(id);
  const s = find(id);
  const controls = s.controls || (s.lf && s.lf.controls);
  if (controls) setLfControls(controls);
  renderSamples();
  renderProps();
  renderPath();
  showCleaning();
  renderBands();
  renderLf();
  draw();
}
