// Performance figures of the browser build, measured and logged, never
// asserted (benchmarks are reports, not pass/fail checks; goals from issue 8):
//  - the whole pipeline on a 2 000-point spectrum with three bands, from the
//    dropped file to the results card (goal ≤ 300 ms), median of 5 runs;
//  - the what-if control: updates of the spectrum markers and the diagram per
//    second (goal ≥ 30), as frames shown and as the work per update.
// The numbers go to the log and to tests/browser/output/perf.json.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, writeFileSync } from 'node:fs';
import { launch, startSite, openPage, OUTPUT } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

const median = (v) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];

test('performance: pipeline from file drop to results card, and the what-if update rate', async () => {
  const { context, page, log } = await openPage(browser, site.url, { scale: 1 });
  const text = readFileSync('fixtures/demo/perf-crx7-2000.csv', 'utf8');
  await page.locator('#bands-panel > summary').click();
  await page.locator('#band-count').fill('3');
  const runs = await page.evaluate(async (csv) => {
    const out = [];
    for (let i = 0; i < 5; i++) {
      const file = new File([csv], 'perf-crx7-2000.csv', { type: 'text/csv' });
      const t0 = performance.now();
      await window.ddlens.openFiles([file]);
      const s = window.ddlens.state.samples.at(-1);
      document.querySelector('#clean-target').value = String(s.id);
      await window.ddlens.analyzeSample();
      if (document.querySelector('#lf-results').hidden) throw new Error('no results card');
      await new Promise(requestAnimationFrame);
      out.push(performance.now() - t0);
    }
    return out;
  }, text);
  const points = await page.evaluate(() => window.ddlens.state.samples.at(-1).wavenumber.length);
  const bands = await page.evaluate(() => window.ddlens.state.lf.analysis.bands.bands.length);
  assert.equal(points, 2000);
  assert.equal(bands, 3);

  const whatIf = await page.evaluate(async () => {
    const slider = document.querySelector('#whatif-x');
    const frames = 60;
    const work = [];
    const t0 = performance.now();
    for (let i = 0; i < frames; i++) {
      slider.value = String(15 + i * 0.2);
      const w0 = performance.now();
      slider.dispatchEvent(new Event('input')); // redraws the diagram and queues the spectrum for the next frame
      const sync = performance.now() - w0;
      await new Promise(requestAnimationFrame);
      work.push(sync + window.ddlens.state.lastDrawMs);
    }
    return { fps: frames / ((performance.now() - t0) / 1000), work };
  });
  const figures = {
    pipeline_ms_median: +median(runs).toFixed(1), pipeline_ms_runs: runs.map((v) => +v.toFixed(1)), pipeline_goal_ms: 300,
    whatif_frames_per_s: +whatIf.fps.toFixed(1), whatif_update_ms_median: +median(whatIf.work).toFixed(2),
    whatif_updates_per_s_possible: +(1000 / median(whatIf.work)).toFixed(0), whatif_goal_fps: 30,
    spectrum: `${points} points, ${bands} bands`, browser: await browser.version(),
  };
  console.log(`performance: ${JSON.stringify(figures)}`);
  writeFileSync(`${OUTPUT}/perf.json`, `${JSON.stringify(figures, null, 2)}\n`);
  assert.ok(runs.every(Number.isFinite) && Number.isFinite(whatIf.fps));
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});
