// ---------- wiring ----------
function wire() {
  $('file-input').addEventListener('change', (e) => { openFiles([...e.target.files]); e.target.value = ''; });
  $('open-label').addEventListener('keydown', (e) => {
    if (e.key === 'Enter' || e.key === ' ') { e.preventDefault(); $('file-input').click(); }
  });
  $('demo-button').addEventListener('click', loadDemo);
  $('undo-button').addEventListener('click', undo);
  $('redo-button').addEventListener('click', redo);
  $('export-svg').addEventListener('click', exportSvg);
  $('export-png').addEventListener('click', exportPng);
  $('export-csv').addEventListener('click', exportCsv);
  $('reimport').addEventListener('click', reimport);
  $('reset-view').addEventListener('click', resetView);
  $('busy-cancel').addEventListener('click', () => cancelCurrent && cancelCurrent());
  $('clean-target').addEventListener('change', () => selectSample(Number($('clean-target').value)));
  $('fit-bands').addEventListener('click', fitBands);
  $('refit-bands').addEventListener('click', refitBands);
  $('bic-helper').addEventListener('click', compareCounts);
  $('add-band-mode').addEventListener('click', (e) => e.currentTarget.setAttribute('aria-pressed', String(e.currentTarget.getAttribute('aria-pressed') !== 'true')));
  $('add-band').addEventListener('click', () => addBand(parseFloat($('add-centre').value), parseFloat($('add-height').value)));
  for (const id of ['baseline-method', 'baseline-order', 'baseline-regions', 'baseline-lambda', 'baseline-p', 'crop-lo', 'crop-hi', 'smooth-on', 'smooth-window', 'smooth-order']) {
    $(id).addEventListener('input', previewBaseline);
  }
  $('bands-csv').addEventListener('click', exportBandsCsv);
  $('bands-copy').addEventListener('click', copyBands);
  $('clean-apply').addEventListener('click', () => applyCleaning());
  $('clean-clear').addEventListener('click', () => applyCleaning(true));
  $('crop-view').addEventListener('click', () => {
    if (!state.frame) return;
    const [a, b] = currentX();
    $('crop-lo').value = Math.round(a);
    $('crop-hi').value = Math.round(b);
  });
  $('nm-bottom').addEventListener('change', (e) => { state.view.nmBottom = e.target.checked; draw(); });
  $('y-mode').addEventListener('change', (e) => {
    state.view.yMode = e.target.value;
    state.view.y = null;
    const hidden = state.samples.filter((s) => s.visible && !shownValues(s));
    if (hidden.length) say(`${hidden.map((s) => s.name).join(', ')}: give concentration and path length in the import panel to show ε.`, 'info');
    draw();
  });
  window.addEventListener('dragover', (e) => { e.preventDefault(); document.body.classList.add('dragging'); });
  window.addEventListener('dragleave', () => document.body.classList.remove('dragging'));
  window.addEventListener('drop', (e) => {
    e.preventDefault();
    document.body.classList.remove('dragging');
    openFiles([...(e.dataTransfer ? e.dataTransfer.files : [])]);
  });
  window.addEventListener('paste', async (e) => {
    if (e.target instanceof HTMLInputElement) return;
    const text = e.clipboardData && e.clipboardData.getData('text/plain');
    if (!text) return;
    const name = `pasted ${state.nextId}.txt`;
    const bytes = new TextEncoder().encode(text);
    try { addReport(await importBytes(bytes.slice(), name, importOptions()), name, importOptions(), bytes); } catch (err) { say(String(err.message || err)); }
  });
  window.addEventListener('keydown', (e) => {
    if (!(e.ctrlKey || e.metaKey) || e.target instanceof HTMLInputElement && e.target.type === 'text') return;
    const k = e.key.toLowerCase();
    if (k === 'z' && !e.shiftKey) { e.preventDefault(); undo(); } else if ((k === 'z' && e.shiftKey) || k === 'y') { e.preventDefault(); redo(); }
  });
  wirePlot();
  window.addEventListener('resize', drawSoon);
}

async function main() {
  wire();
  wasmModule = await loadModule();
  await wasm_bindgen({ module_or_path: wasmModule });
  $('version').textContent = wasm_bindgen.version();
  DEFAULTS = wasm_bindgen.defaults();
  setCleaningDefaults();
  wireLf();
  wireReport();
  worker = startWorker(wasmModule);
  await worker.ready;
  // A share link wins over the autosaved workspace, which wins over the demo.
  let saved = null;
  try { saved = localStorage.getItem(AUTOSAVE_KEY); } catch { saved = null; }
  if (location.hash.startsWith('#project=')) {
    try { await openShareLink(); } catch (e) { say(e.message); }
  } else if (saved) {
    try { await loadProject(saved); say('The previous workspace was restored (Start fresh clears it).', 'info'); } catch (e) { say(`The saved workspace could not be restored: ${e.message}`); }
    if (!state.samples.length) await loadDemo();
  } else {
    await loadDemo();
  }
  history.past = [];
  refresh();
  document.body.dataset.readyMs = performance.now().toFixed(0);
  document.body.dataset.ready = 'true';
}

const ready = main().catch((e) => {
  say(`ddlens could not start: ${e.message || e}`);
  throw e;
});

/** What the tests and the console may reach: the page's state and a few actions. */
const api = { ready, state, draw, figure, modelCurves, undo, redo, openFiles, analyzeSample, get worker() { return worker; } };
