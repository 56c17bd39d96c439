// Band work in the page: the automatic fit against the native CLI, band
// editing (add, drag, lock, tie, refit) with its undo history, the band-count
// comparison, the baseline preview and the residual strip. Fixtures:
// fixtures/bands/README.md (five Gaussians, known parameters) and fixtures/ui/README.md.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { execFileSync } from 'node:child_process';
import { launch, startSite, fileUrl, openPage, OUTPUT, noFreeze } from './harness.mjs';

const FIVE = 'fixtures/bands/five_gaussians_2000.txt';
const file = (path) => ({ name: path.split('/').pop(), mimeType: 'text/plain', buffer: readFileSync(path) });
// The page's band fits leave the baseline to the core, as the CLI does by default.
const cli = (...args) => JSON.parse(execFileSync('cargo', ['run', '--quiet', '--', 'deconvolve', FIVE, '--json', ...args], { encoding: 'utf8' }));
const watchLongTasks = (page) => page.evaluate(() => {
  window.longTasks = [];
  new PerformanceObserver((l) => l.getEntries().forEach((e) => window.longTasks.push(e.duration))).observe({ type: 'longtask' });
});
const longest = (page) => page.evaluate(() => Math.max(0, ...window.longTasks));
/** Centres as the band table shows them (the number field of the centre column). */
const tableCentres = (page) => page.$$eval('#band-table tbody tr', (rows) => rows.map((r) => parseFloat(r.cells[2].querySelector('input').value)));
const fitted = (page) => page.evaluate(() => { const s = window.ddlens.state.samples.at(-1); return s.fit ? s.fit.fit.bands.map((b) => b.centre.value) : null; });

async function openWithFive(url) {
  const opened = await openPage(browser, url);
  const { page } = opened;
  await watchLongTasks(page);
  await page.locator('body').drop({ files: file(FIVE) });
  await page.waitForFunction(() => window.ddlens.state.samples.length === 2);
  await page.locator('#cleaning summary').click();
  await page.locator('#clean-target').selectOption(String(await page.evaluate(() => window.ddlens.state.samples.at(-1).id)));
  await page.locator('#bands-panel summary').click();
  return opened;
}

async function fitAndWait(page, button = '#fit-bands') {
  const before = await page.evaluate(() => window.ddlens.state.samples.at(-1).fit);
  await page.locator(button).click();
  await page.waitForFunction((b) => { const f = window.ddlens.state.samples.at(-1).fit; return f && f !== b; }, before);
}

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

test('the automatic fit gives the centres of `ddlens deconvolve` on the same file (to 0.1 %)', async () => {
  const { context, page, log } = await openWithFive(fileUrl());
  for (const [count, args] of [['5', ['--bands', '5']], ['', []]]) {
    await page.locator('#band-count').fill(count);
    await fitAndWait(page);
    const shown = await tableCentres(page);
    const native = cli(...args).bands.map((b) => b.centre.value);
    assert.equal(shown.length, native.length, `band count ${count || 'automatic'}`);
    shown.forEach((c, i) => assert.ok(Math.abs(c - native[i]) <= 1e-3 * native[i], `band ${i + 1}: page ${c}, CLI ${native[i]}`));
  }
  noFreeze(await longest(page), 'during import and fit');
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('bands are added, dragged, locked and tied, refitted, and every edit undoes', async () => {
  const { context, page, log } = await openWithFive(site.url);
  await page.locator('#band-count').fill('4');
  await fitAndWait(page);
  const four = await fitted(page);
  assert.equal(four.length, 4);
  // The residual strip is drawn under the plot (the figure says so in its SVG twin).
  assert.match(await page.evaluate(() => wasm_bindgen.spectrum_svg(window.ddlens.figure(), 900, 500)), /residual/);

  // Add a fifth band from the keyboard row and one by clicking on the plot.
  await page.locator('#add-centre').fill('20000');
  await page.locator('#add-height').fill('0.2');
  await page.locator('#add-band').click();
  assert.equal(await page.locator('#band-table tbody tr').count(), 5);
  const canvas = page.locator('#spectrum-canvas');
  await page.locator('#add-band-mode').click();
  assert.equal(await page.locator('#add-band-mode').getAttribute('aria-pressed'), 'true');
  const at = await page.evaluate(() => { const [l, t, r, b] = window.ddlens.state.frame.area; const d = window.devicePixelRatio; return [(l + 0.3 * (r - l)) / d, (t + 0.5 * (b - t)) / d]; });
  await canvas.click({ position: { x: at[0], y: at[1] } });
  const added = await page.evaluate(() => window.ddlens.state.samples.at(-1).model.bands.at(-1));
  assert.equal(await page.locator('#band-table tbody tr').count(), 6);
  const x = await page.evaluate(() => window.ddlens.state.frame.x_range);
  assert.ok(Math.abs(added.centre - (x[0] + 0.3 * (x[1] - x[0]))) < 0.01 * (x[1] - x[0]), `clicked band at ${added.centre}`);
  await page.locator('#band-5-remove').click();
  await page.locator('#band-4-remove').click();
  assert.equal(await page.locator('#band-table tbody tr').count(), 4);

  // Drag band 1's dot to the right and its ring outwards.
  const handle = (band, kind) => page.evaluate(([b, k]) => {
    const s = window.ddlens.state.samples.at(-1), m = s.model.bands[b], f = window.ddlens.state.frame, dpr = window.devicePixelRatio;
    const [cx, cy] = k === 'peak' ? [m.centre, m.height] : [m.centre + m.fwhm / 2, m.height / 2];
    const [l, t, r, bt] = f.area;
    return [(l + (cx - f.x_range[0]) / (f.x_range[1] - f.x_range[0]) * (r - l)) / dpr, (t + (f.y_range[1] - cy) / (f.y_range[1] - f.y_range[0]) * (bt - t)) / dpr];
  }, [band, kind]);
  const drag = async (band, kind, dx) => {
    // Mouse positions are in the viewport: bring the plot into view first.
    await canvas.scrollIntoViewIfNeeded();
    const box = await canvas.boundingBox();
    const [hx, hy] = await handle(band, kind);
    await page.mouse.move(box.x + hx, box.y + hy);
    await page.mouse.down();
    await page.mouse.move(box.x + hx + dx, box.y + hy, { steps: 20 });
    await page.mouse.up();
  };
  const band0 = () => page.evaluate(() => window.ddlens.state.samples.at(-1).model.bands[0]);
  const start = await band0();
  await page.evaluate(() => { window.ddlens.state.dragMs.length = 0; });
  await drag(0, 'peak', 40);
  const moved = await band0();
  assert.ok(moved.centre > start.centre + 200, `centre ${start.centre} → ${moved.centre}`);
  await drag(0, 'width', 30);
  const widened = await band0();
  assert.ok(widened.fwhm > moved.fwhm + 200, `FWHM ${moved.fwhm} → ${widened.fwhm}`);
  const ms = await page.evaluate(() => [...window.ddlens.state.dragMs].sort((a, b) => a - b));
  console.log(`# drag redraw (evaluate bands + draw 2000 points, DPR 2): median ${ms[ms.length >> 1].toFixed(1)} ms over ${ms.length} moves`);
  await page.locator('.plot-area').screenshot({ path: `${OUTPUT}/bands-edited.png` });
  await page.locator('#undo-button').click();
  assert.equal((await band0()).fwhm, moved.fwhm, 'undo takes back the width drag');
  // The keyboard's way: type a width into the table; undo takes it back too.
  await page.locator('#band-0-fwhm').fill('2345');
  await page.locator('#band-0-fwhm').press('Enter');
  assert.equal((await band0()).fwhm, 2345);
  await page.locator('#undo-button').click();
  assert.equal((await band0()).fwhm, moved.fwhm);

  // Lock band 1's centre, tie band 3's width to band 2, refit.
  await page.locator('#band-0-lock-centre').check();
  await page.locator('#band-2-tie').focus(); // selectOption sets the value without focusing
  await page.locator('#band-2-tie').selectOption({ value: '1' });
  assert.ok(await page.locator('#band-2-tie').evaluate((e) => e === document.activeElement), 'focus stays on the edited control');
  await fitAndWait(page, '#refit-bands');
  const refit = await page.evaluate(() => window.ddlens.state.samples.at(-1).fit.fit.bands);
  assert.equal(refit[0].centre.value, moved.centre, 'a locked centre stays where it was dragged');
  assert.equal(refit[0].centre.sigma, null);
  assert.equal(refit[2].fwhm.value, refit[1].fwhm.value, 'a tied width equals its target');
  assert.ok(await page.locator('#band-0-lock-centre').isChecked(), 'locks survive the refit');
  await page.locator('#undo-button').click();
  assert.equal(await page.evaluate(() => window.ddlens.state.samples.at(-1).model.ties.length), 1, 'undo returns to before the refit');
  noFreeze(await longest(page), 'while editing and refitting');
  assert.deepEqual(log.errors, []);
  await context.close();
});

test('the band-count comparison lists BIC and χ²ᵥ from no band up, and a row fits that count', async () => {
  const { context, page, log } = await openWithFive(site.url);
  await page.locator('#bic-helper').click();
  await page.waitForSelector('#bic-table:not([hidden])');
  const rows = await page.$$eval('#bic-table tbody tr', (trs) => trs.map((r) => [...r.cells].slice(0, 4).map((c) => c.textContent)));
  const native = cli().bic_per_band_count;
  assert.deepEqual(rows.map((r) => parseInt(r[0], 10)), native.map(([n]) => n));
  rows.forEach((r, i) => assert.ok(Math.abs(parseFloat(r[1]) - native[i][1]) < 0.1, `BIC for ${r[0]}: ${r[1]} vs ${native[i][1]}`));
  assert.ok(rows.every((r) => Number.isFinite(parseFloat(r[3]))), 'every count has a χ²ᵥ');
  assert.match(rows.find((r) => /suggested/.test(r[0]))[0], /^5/, 'five synthetic bands are suggested');
  await page.locator('#bic-table').screenshot({ path: `${OUTPUT}/bic-helper.png` });
  await page.locator('#bic-table tbody tr').filter({ hasText: /^3/ }).getByRole('button').click();
  await page.waitForFunction(() => { const f = window.ddlens.state.samples.at(-1).fit; return f && f.fit.bands.length === 3; });
  assert.equal(await page.locator('#band-count').inputValue(), '3');
  noFreeze(await longest(page), 'while comparing counts');
  assert.deepEqual(log.errors, []);
  await context.close();
});

test('the baseline preview follows the settings; Apply subtracts it and undo restores the data', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await watchLongTasks(page);
  await page.locator('#cleaning summary').click();
  const preview = () => page.evaluate(() => window.ddlens.state.baselinePreview && window.ddlens.state.baselinePreview.y);
  await page.locator('#baseline-method').selectOption('rubber_band');
  const hull = await preview();
  const data = await page.evaluate(() => window.ddlens.state.samples[0].values);
  assert.equal(hull.length, data.length);
  assert.ok(hull.every((b, i) => b <= data[i] + 1e-12), 'a rubber band lies under the data');
  assert.ok(!(await page.locator('#baseline-order').isVisible()), 'only the chosen method\'s inputs are shown');
  await page.locator('#baseline-method').selectOption('asls');
  await page.locator('#baseline-lambda').fill('1000000');
  const stiff = await preview();
  await page.locator('#baseline-lambda').fill('100');
  const soft = await preview();
  assert.notDeepEqual(stiff, soft, 'changing λ changes the preview');
  await page.locator('#baseline-method').selectOption('polynomial');
  await page.locator('#baseline-regions').fill('9000-x');
  assert.match(await page.locator('#baseline-status').innerText(), /9000-x/);
  await page.locator('#baseline-regions').fill('11000-13500, 27500 – 33000');
  await page.locator('#baseline-order').fill('1');
  const line = await preview();
  await page.locator('.plot-area').screenshot({ path: `${OUTPUT}/baseline-preview.png` });
  await page.locator('#clean-apply').click();
  const after = await page.evaluate(() => window.ddlens.state.samples[0]);
  assert.deepEqual(after.doc.steps, [{ subtract_baseline: { method: { polynomial: { order: 1, regions: [[11000, 13500], [27500, 33000]] } } } }], 'the subtraction is a step of the document');
  after.values.forEach((v, i) => assert.ok(Math.abs(v - (data[i] - line[i])) < 1e-12, `point ${i}`));
  await page.locator('#undo-button').click();
  assert.deepEqual(await page.evaluate(() => window.ddlens.state.samples[0].values), data);
  assert.equal(await page.locator('#baseline-method').inputValue(), '', 'the panel shows the restored steps');
  noFreeze(await longest(page), 'during the preview');
  assert.deepEqual(log.errors, []);
  await context.close();
});
