// The ligand-field panel beyond the first analysis: changing a band's
// assignment (undoable, kept after a reload), the diagram read-out by pointer
// and keyboard, the diagram as PNG, several samples in a sortable table with
// the Δ/β plot. Fixtures: fixtures/demo/README.md (invented samples made by
// fixtures/demo/make_demo.py from known Dq and B).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { launch, startSite, openPage, analyseDemo, runCli, inkFraction, OUTPUT } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

const demoFile = (name) => ({ name, mimeType: 'text/csv', buffer: readFileSync(`fixtures/demo/${name}`) });
const lf = (page) => page.evaluate(() => {
  const r = window.ddlens.state.lf;
  return r && { delta: r.analysis.fit.best.derived.delta.value, states: r.analysis.fit.best.assignment.map((a) => a.state), observed: r.analysis.observed };
});

test('choosing a state or "not d–d" for a band refits as ddlens analyze does; undo, redo, a share link and a reload keep it', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await analyseDemo(page);
  const auto = await lf(page);
  const select = (i) => page.locator('#lf-assignment tbody tr').nth(i).locator('select');
  // The select lists the engine's states, spin-allowed first, and the two special choices.
  const options = await select(1).locator('option').allTextContents();
  assert.match(options[0], /^automatic/);
  assert.equal(options[1], 'charge transfer / not d–d');
  assert.ok(options.some((o) => /^⁴T₁g\(P\)/.test(o)), options.join(' | '));
  assert.ok(options.some((o) => /^²Eg.*spin-forbidden$/.test(o)), 'spin-forbidden states are offered and marked');
  const firstForbidden = options.findIndex((o) => /spin-forbidden/.test(o));
  assert.ok(options.slice(firstForbidden).every((o) => /spin-forbidden/.test(o)), 'spin-allowed states come first');

  await select(1).selectOption('4T1g(P)');
  await page.waitForFunction(() => window.ddlens.state.lf.analysis.observed[1].assign === '4T1g(P)', null, { timeout: 30000 });
  const forced = await lf(page);
  assert.equal(forced.states[1], '4T1g(P)');
  assert.ok(Math.abs(forced.delta - auto.delta) > 100, 'the forced assignment changed nothing');
  assert.match(await page.locator('#lf-assignment').innerText(), /⁴T₁g\(P\)/);
  // The same bands and forced state given to `ddlens fit` (a separate entry point) give the same Δ.
  const [b1, b2] = forced.observed;
  const fit = runCli(['fit', '--ion', 'Cr3+', '--b0-source', 'common', '--band', `${b1.energy}:${b1.sigma}`, '--band', `${b2.energy}:${b2.sigma}:4T1g(P)`, '--json']);
  assert.deepEqual(fit.best.assignment.map((a) => a.state), forced.states);
  assert.ok(Math.abs(fit.best.derived.delta.value - forced.delta) <= 1e-3 * forced.delta, `CLI ${fit.best.derived.delta.value} against page ${forced.delta}`);

  await page.keyboard.press('Control+z');
  await page.waitForFunction((d) => Math.abs(window.ddlens.state.lf.analysis.fit.best.derived.delta.value - d) < 1e-6, auto.delta);
  assert.equal(await select(1).inputValue(), '');
  await page.keyboard.press('Control+Shift+z');
  await page.waitForFunction(() => window.ddlens.state.lf.analysis.observed[1].assign === '4T1g(P)');

  await select(0).selectOption('!x');
  await page.waitForFunction(() => window.ddlens.state.lf.analysis.observed[0].not_dd, null, { timeout: 30000 });
  const one = await lf(page);
  assert.deepEqual(one.states, ['4T1g(P)']);
  // `ddlens analyze` with the same choices on the same file gives the same fit.
  const same = runCli(['analyze', 'fixtures/demo/demo-crx7.csv', '--ion', 'Cr3+', '--bands', '2', '--b0-source', 'common',
    '--band', `${one.observed[0].energy}:x`, '--band', `${one.observed[1].energy}:4T1g(P)`, '--json']);
  assert.deepEqual(same.results.fit.best.assignment.map((a) => a.state), one.states);
  assert.ok(Math.abs(same.results.fit.best.derived.delta.value - one.delta) <= 1e-3 * one.delta);
  // A share link carries the choices to a fresh browser.
  await page.locator('#share-link').click();
  await page.waitForFunction(() => document.querySelector('#share-output').value.includes('#project='));
  const fresh = await openPage(browser, await page.locator('#share-output').inputValue());
  await fresh.page.waitForFunction(() => window.ddlens.state.lf, null, { timeout: 30000 });
  assert.deepEqual(await lf(fresh.page), one);
  assert.deepEqual(fresh.log.errors, []);
  await fresh.context.close();
  await page.screenshot({ path: `${OUTPUT}/assignment-choice.png`, fullPage: true });

  await page.waitForTimeout(600); // the autosave is debounced by 300 ms
  await page.reload();
  await page.waitForFunction(() => window.ddlens.state.lf, null, { timeout: 30000 });
  assert.deepEqual(await lf(page), one);
  assert.equal(await select(0).inputValue(), '!x');
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('the diagram reads out the level under the pointer and from the keyboard; PNG export', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await analyseDemo(page);
  await page.locator('#diagram-canvas').scrollIntoViewIfNeeded();
  // Where the fitted Δ/B and the ⁴T₂g point lie, from the drawing's frame.
  const target = await page.evaluate(() => {
    const r = window.ddlens.state.lf, f = r.frame, b = r.analysis.fit.best;
    const dpr = window.devicePixelRatio, rect = document.querySelector('#diagram-canvas').getBoundingClientRect();
    const x = b.derived.delta_over_b.value, y = b.assignment[0].observed / b.parameters.b.value;
    const px = f.area[0] + (x - f.x_range[0]) / (f.x_range[1] - f.x_range[0]) * (f.area[2] - f.area[0]);
    const py = f.area[3] - (y - f.y_range[0]) / (f.y_range[1] - f.y_range[0]) * (f.area[3] - f.area[1]);
    return { cx: rect.left + px / dpr, cy: rect.top + py / dpr, delta: b.derived.delta.value };
  });
  await page.mouse.move(target.cx, target.cy);
  const hover = await page.locator('#diagram-readout').innerText();
  // For d³ octahedral ⁴A₂g → ⁴T₂g is 10Dq = Δ exactly (Lever 1984, from memory).
  assert.match(hover, /^⁴T₂g: E\/B = [\d.]+, E = (\d+) cm⁻¹/);
  assert.ok(Math.abs(Number(hover.match(/E = (\d+) cm/)[1]) - target.delta) <= 1, hover);
  assert.equal(await page.locator('#diagram-cursor').isVisible(), true);

  await page.locator('#diagram-canvas').focus();
  await page.keyboard.press('Home');
  const start = await page.locator('#diagram-readout').innerText();
  await page.keyboard.press('ArrowUp');
  const up = await page.locator('#diagram-readout').innerText();
  assert.notEqual(up, start);
  const level = (t) => Number(t.match(/level (\d+) of/)[1]);
  assert.equal(level(up), level(start) + 1);
  const at = (t) => Number(t.match(/at Δ\/B = ([\d.]+)/)[1]);
  await page.keyboard.press('ArrowRight');
  const right = await page.locator('#diagram-readout').innerText();
  assert.ok(at(right) > at(up), `${right} after ${up}`);
  await page.screenshot({ path: `${OUTPUT}/diagram-readout.png`, fullPage: true });

  const [download] = await Promise.all([page.waitForEvent('download'), page.locator('#diagram-png').click()]);
  const png = readFileSync(await download.path());
  assert.equal(png.subarray(1, 4).toString(), 'PNG');
  assert.deepEqual([png.readUInt32BE(16), png.readUInt32BE(20)], [2700, 2100]);
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('several samples: analyse all, each keeps its result, the table sorts by mouse and keyboard', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await page.locator('body').drop({ files: [demoFile('demo-crx9.csv'), demoFile('demo-crx3.csv')] });
  await page.waitForFunction(() => window.ddlens.state.samples.length === 3);
  await page.locator('#bands-panel > summary').click();
  await page.locator('#band-count').fill('2');
  await page.locator('#lf-include-demo').check(); // "Analyse all" leaves the demo out unless asked
  await page.locator('#lf-analyze-all').click();
  await page.waitForFunction(() => window.ddlens.state.samples.every((s) => s.lf && s.lf.analysis.fit), null, { timeout: 60000 });
  const names = () => page.$$eval('#series-table tbody tr', (rows) => rows.map((r) => r.cells[0].textContent));
  assert.equal((await names()).length, 3);
  // The demo script's inputs (fixtures/demo/README.md): Dq 1520 (CrX-9) < 1650 (CrX-7) < 1780 (CrX-3),
  // B 650 (CrX-3) < 690 (CrX-7) < 740 (CrX-9), so β (one B₀ for all) follows B.
  const made = { 'CrX-9': [1520, 740], 'CrX-7': [1650, 690], 'CrX-3': [1780, 650] };
  const byDq = Object.keys(made).sort((a, b) => made[a][0] - made[b][0]);
  const byB = Object.keys(made).sort((a, b) => made[a][1] - made[b][1]);
  const short = (list) => list.map((n) => n.replace(/ .*/, ''));
  await page.locator('#series-table thead button', { hasText: 'Δ / cm⁻¹' }).click();
  assert.deepEqual(short(await names()), byDq);
  await page.locator('#series-table thead button', { hasText: 'Δ / cm⁻¹' }).click();
  assert.deepEqual(short(await names()), [...byDq].reverse());
  assert.equal(await page.locator('#series-table thead th').nth(2).getAttribute('aria-sort'), 'descending');
  await page.locator('#series-table thead button', { hasText: /^β/ }).focus();
  await page.keyboard.press('Enter');
  assert.deepEqual(short(await names()), byB);
  assert.ok(await inkFraction(page, '#series-canvas') > 0.01, 'the Δ/β plot is blank');
  // Each sample keeps its own result: choosing one in the table shows its Δ.
  for (const name of await names()) {
    await page.locator('#series-table tbody button', { hasText: name }).click();
    const delta = await page.evaluate(() => window.ddlens.state.lf.analysis.fit.best.derived.delta.value);
    assert.match(await page.locator('#lf-card').innerText(), new RegExp(`10Dq \\(Δ\\)\\s+${Math.floor(delta / 1000)}\u2009`));
    const dq = made[name.replace(/ .*/, '')][0];
    assert.ok(Math.abs(delta - 10 * dq) < 150, `${name}: Δ = ${delta}`);
  }
  await page.locator('#lf-panel').scrollIntoViewIfNeeded();
  await page.screenshot({ path: `${OUTPUT}/series.png`, fullPage: true });
  // The report of a series adds the table and the Δ/β plot (looked at as PDF pages).
  await page.locator('#report-open').click();
  assert.equal(await page.locator('#report svg').count(), 3);
  assert.equal(await page.locator('#report table').last().locator('tbody tr').count(), 3);
  await page.pdf({ path: `${OUTPUT}/report-series.pdf`, format: 'A4', printBackground: true, margin: { top: '15mm', bottom: '15mm', left: '12mm', right: '12mm' } });
  execFileSync('pdftoppm', ['-png', '-r', '70', '-f', '3', `${OUTPUT}/report-series.pdf`, `${OUTPUT}/report-series-page`]);
  await page.locator('#report-close').click();
  await page.waitForTimeout(600);
  await page.reload();
  await page.waitForFunction(() => window.ddlens.state.samples.filter((s) => s.lf).length === 3, null, { timeout: 60000 });
  assert.deepEqual(short(await names()), byB);
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});
