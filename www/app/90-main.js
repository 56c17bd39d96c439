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

/** At most `ms` for `promise`, then an error with `sentence` (no wait is unbounded). */
const within = (promise, ms, sentence) => Promise.race([promise, new Promise((_, reject) => setTimeout(() => reject(new Error(sentence)), ms))]);

/** A fresh compute worker from the cached module, bounded in its start-up. */
async function restartWorker() {
  if (worker) worker.terminate();
  worker = startWorker(wasmModule);
  await within(worker.ready, 60000, 'The compute worker did not start within a minute: reload the page.');
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
  wirePrivacy();
  await restartWorker();
  // The autosaved workspace first, then a share link over it (one undoable
  // step, the autosave kept as the backup); the demo only on a first visit.
  // Nothing is autosaved while the page starts: a failed load writes nothing.
  const hadSaved = keepingWork() && await restoreAutosave();
  history.past = [];
  let linked = false;
  if (location.hash.startsWith('#project=')) {
    try { await openShareLink(); linked = true; } catch (e) { say(e.message); }
  } else if (!hadSaved) {
    await loadDemo();
    history.past = [];
  }
  refresh();
  autosave.held = false;
  if (linked) autosaveSoon();
  document.body.dataset.readyMs = performance.now().toFixed(0);
  document.body.dataset.ready = 'true';
}

const ready = main().catch((e) => {
  say(`ddlens could not start: ${e.message || e}`);
  throw e;
});

/** What the tests and the console may reach: the page's state and a few actions. */
const api = { ready, state, draw, figure, modelCurves, edit, undo, redo, openFiles, analyzeSample, restartWorker, get worker() { return worker; } };
