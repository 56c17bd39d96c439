// ---------- the first-use path ----------
// A row of five steps under the header (open → clean → bands → ligand field
// → report): each opens its panel and moves the focus there; a step is ticked
// once the active sample has done it, and the hint names the next one.
/** What the active sample has done so far, step by step. */
function pathDone() {
  const s = activeSample();
  return {
    open: !!s && !isDemo(s),
    cleaning: !!s && s.steps.length > 0,
    'bands-panel': !!(s && s.model && s.model.bands.length),
    'lf-panel': !!(s && s.lf && s.lf.analysis.fit && !s.stale),
    report: false,
  };
}
const PATH_HINTS = {
  open: 'Start here: open your spectrum (CSV, TXT or JCAMP-DX), or try the invented demo already loaded.',
  cleaning: 'Optional: crop, smooth or subtract a baseline, then Apply.',
  'bands-panel': 'Fit bands (or leave it to the analysis), then check them on the plot.',
  'lf-panel': 'Choose the ion and site, then “Analyse the selected sample”.',
  report: 'Open the report to print it, and save the project to keep your work.',
};

function renderPath() {
  const done = pathDone();
  let next = null;
  for (const b of $('path').querySelectorAll('button[data-step]')) {
    const step = b.dataset.step;
    b.classList.toggle('done', done[step]);
    b.setAttribute('aria-label', `${b.textContent.replace(/ ✓$/, '')}${done[step] ? ' (done)' : ''}`);
    if (!next && !done[step] && step !== 'cleaning') next = step;
  }
  $('path-hint').textContent = PATH_HINTS[next || 'report'];
}

/** Opens a step's panel (or the file chooser, or the report) and brings it into view. */
function goToStep(step) {
  if (step === 'open') { $('file-input').click(); return; }
  if (step === 'report') { $('report-open').click(); return; }
  const panel = $(step);
  panel.open = true;
  panel.scrollIntoView({ block: 'start' });
  panel.querySelector('summary').focus();
}
