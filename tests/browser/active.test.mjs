// The active sample and what each result rests on (issue 16): a file opened
// after the demo becomes the active sample and is the one analysed; a
// cleaning change marks the card out of date; the layout at 800 and 600 px;
// a zoom that cuts a peak draws no points along the plot edge; a
// 200 000-point spectrum's redraw time (logged, not asserted).
// Fixtures: fixtures/demo/README.md (invented Cr³⁺ spectra made by our own model).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync, writeFileSync } from 'node:fs';
import { launch, startSite, openPage, OUTPUT, noFreeze } from './harness.mjs';

const demoFile = (name) => ({ name, mimeType: 'text/csv', buffer: readFileSync(`fixtures/demo/${name}`) });
const activeName = (page) => page.evaluate(() => { const s = window.ddlens.state.samples.find((v) => v.id === Number(document.querySelector('#clean-target').value)); return s && s.name; });

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

test('a file opened after the demo becomes active, is the one analysed, and the card names it', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await page.locator('#file-input').setInputFiles(demoFile('demo-crx9.csv'));
  await page.waitForFunction(() => window.ddlens.state.samples.length === 2);
  const opened = await page.evaluate(() => window.ddlens.state.samples[1].name);
  assert.equal(await activeName(page), opened);
  assert.equal(await page.locator('#sample-list li.active').count(), 1);
  assert.match(await page.locator('#sample-list li.active').getAttribute('aria-label'), new RegExp(opened.replace(/[()+]/g, '\\$&')));
  assert.match(await page.locator('#sample-list li').first().innerText(), /invented demo data/);
  await page.locator('#bands-panel > summary').click();
  await page.locator('#band-count').fill('2');
  await page.locator('#lf-ion').selectOption('Cr3+');
  await page.locator('#lf-analyze').click();
  await page.waitForFunction(() => window.ddlens.state.samples[1].lf, null, { timeout: 30000 });
  assert.equal(await page.evaluate(() => window.ddlens.state.samples[0].lf), null, 'the demo was not analysed');
  assert.equal(await page.locator('#lf-results-title').innerText(), `Results for ${opened}`);
  assert.equal(await page.locator('#lf-status').isHidden(), true);
  // A cleaning step changed: the card is marked out of date, with a one-click re-analysis.
  await page.locator('#cleaning summary').click();
  await page.locator('#smooth-on').check();
  await page.locator('#clean-apply').click();
  await page.waitForSelector('#lf-status:not([hidden])');
  assert.match(await page.locator('#lf-status').innerText(), /Out of date: the cleaning changed/);
  await page.locator('#lf-reanalyse').click();
  await page.waitForSelector('#lf-status', { state: 'hidden', timeout: 30000 });
  // Arrow keys on the list make the demo active again; the panels follow.
  await page.locator('#sample-list li.active').focus();
  await page.keyboard.press('ArrowUp');
  assert.match(await activeName(page), /CrX-7/);
  assert.match(await page.locator('#lf-for').innerText(), /CrX-7/);
  assert.equal(await page.locator('#lf-results').isHidden(), true, 'the demo has no result to show');
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('the smoothing preview is drawn until Apply; the add-band mode shows itself and ends with Escape', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await page.locator('#cleaning summary').click();
  await page.locator('#smooth-on').check();
  assert.ok(await page.evaluate(() => window.ddlens.state.smoothPreview), 'a smoothing preview while not applied');
  await page.locator('#clean-apply').click();
  assert.equal(await page.evaluate(() => window.ddlens.state.smoothPreview), null, 'no preview left after Apply');
  assert.equal(await page.evaluate(() => window.ddlens.figure().lines.some((l) => l.layer === 'preview')), false);
  await page.locator('#bands-panel > summary').click();
  await page.locator('#add-band-mode').click();
  assert.match(await page.locator('#add-band-mode').innerText(), /Esc ends/);
  assert.equal(await page.locator('#spectrum-canvas.adding').count(), 1);
  await page.keyboard.press('Escape');
  assert.equal(await page.locator('#add-band-mode').getAttribute('aria-pressed'), 'false');
  assert.equal(await page.locator('#spectrum-canvas.adding').count(), 0);
  // Layer toggles leave out the lines of that role only.
  await page.locator('input[data-layer=raw]').uncheck();
  assert.equal(await page.evaluate(() => window.ddlens.figure().lines.some((l) => l.layer === 'raw')), false);
  assert.equal(await page.evaluate(() => window.ddlens.figure().lines.some((l) => l.layer === 'data')), true);
  assert.deepEqual(log.errors, []);
  await context.close();
});

test('a name line "Sample,QZ-2 in methanol" names the sample; an outcome other than an assignment replaces the card', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  const rows = ['Sample,QZ-2 in methanol', 'Wavelength (nm),Abs'];
  const gauss = (x, c, w) => Math.exp(-(((x - c) / w) ** 2));
  for (let nm = 350; nm <= 800; nm += 1) rows.push(`${nm},${(0.3 * gauss(1e7 / nm, 17000, 1500) + 0.2 * gauss(1e7 / nm, 24000, 1800)).toFixed(5)}`);
  await page.locator('#file-input').setInputFiles({ name: 'run 3.csv', mimeType: 'text/csv', buffer: Buffer.from(rows.join('\n')) });
  await page.waitForFunction(() => window.ddlens.state.samples.length === 2);
  assert.equal(await activeName(page), 'QZ-2 in methanol');
  assert.match(await page.locator('#props-title').innerText(), /QZ-2 in methanol/);
  await page.locator('#lf-ion').selectOption('Cr3+');
  await page.locator('#lf-analyze').click();
  await page.waitForFunction(() => window.ddlens.state.samples[1].lf, null, { timeout: 30000 });
  // The outcome sentence is the core's; here the page is handed one to show.
  await page.evaluate(() => {
    const lf = window.ddlens.state.samples[1].lf;
    lf.analysis = { ...lf.analysis, outcome: 'no_dd_bands', outcome_text: 'No band here looks like a d–d band.', noise: { sigma: 0.0012, method: 'residual of a smooth' } };
    window.ddlens.undo(); window.ddlens.redo();
  });
  assert.equal(await page.locator('#lf-results').isHidden(), true);
  assert.equal(await page.locator('#lf-outcome').innerText(), 'No band here looks like a d–d band.');
  assert.deepEqual(log.errors, []);
  await context.close();
});

/** Boxes of the tick labels the core draws for the figure on screen at the canvas's size (its SVG twin). */
const labelOverlaps = (page) => page.evaluate(() => {
  const c = document.querySelector('#spectrum-canvas');
  const r = c.getBoundingClientRect();
  const host = document.createElement('div');
  host.innerHTML = wasm_bindgen.spectrum_svg(window.ddlens.figure(), Math.round(r.width), Math.round(r.height));
  document.body.append(host);
  const boxes = [...host.querySelectorAll('text')].filter((t) => /^[−\-\d.]+$/.test(t.textContent.trim())).map((t) => t.getBoundingClientRect());
  host.remove();
  let overlaps = 0;
  for (let i = 0; i < boxes.length; i++) for (let j = i + 1; j < boxes.length; j++) {
    const [a, b] = [boxes[i], boxes[j]];
    if (a.left < b.right - 0.5 && b.left < a.right - 0.5 && a.top < b.bottom - 0.5 && b.top < a.bottom - 0.5) overlaps++;
  }
  return { labels: boxes.length, overlaps };
});

for (const width of [800, 600]) {
  test(`at ${width} px wide: no horizontal page scroll and no overlapping tick labels`, async () => {
    const { context, page, log } = await openPage(browser, site.url);
    await page.setViewportSize({ width, height: 900 });
    await page.evaluate(() => window.ddlens.draw());
    const scroll = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    assert.ok(scroll <= 0, `the page scrolls sideways by ${scroll} px`);
    const { labels, overlaps } = await labelOverlaps(page);
    assert.ok(labels >= 4, `${labels} tick labels found`);
    assert.equal(overlaps, 0, `${overlaps} overlapping tick labels`);
    await page.screenshot({ path: `${OUTPUT}/layout-${width}.png`, fullPage: true });
    assert.deepEqual(log.errors, []);
    await context.close();
  });
}

// Skipped on this branch: the core's figure still clamps points to the plot
// area (220 of 815 top-edge columns carry the spectrum); the clipping in
// src/figures (issue 21) makes it pass. Remove the skip after that merge.
test('a zoom that cuts through a peak draws no points along the top edge of the plot (skipped until the figures clip instead of clamping)', { skip: 'src/figures still clamps to the plot area (issue 21)' }, async () => {
  const { context, page, log } = await openPage(browser, site.url, { scale: 1 });
  const edge = await page.evaluate(() => {
    const { state, draw } = window.ddlens;
    const s = state.samples[0];
    const top = Math.max(...s.values);
    state.view.x = [s.wavenumber[0], s.wavenumber.at(-1)];
    state.view.y = [0, top / 2]; // the peak rises far above the view
    draw();
    const [l, t, r] = state.frame.area.map(Math.round);
    const c = document.querySelector('#spectrum-canvas');
    // The rows of the top edge and the line's half-width either side of it.
    const w = r - l - 4;
    const band = c.getContext('2d').getImageData(l + 2, t - 2, w, 5).data;
    // The demo's colour is a blue (#0072b2); the frame and grid are grey, so a
    // pixel whose blue clearly leads its red carries the spectrum, even blended.
    if (s.colour !== '#0072b2') throw new Error(`the demo's colour changed to ${s.colour}`);
    const near = (i) => band[i + 2] - band[i] > 40 && band[i + 2] > band[i + 1];
    let hits = 0;
    for (let x = 0; x < w; x++) if ([0, 1, 2, 3, 4].some((y) => near(4 * (y * w + x)))) hits++;
    return { hits, width: w };
  });
  await page.locator('#spectrum-canvas').screenshot({ path: `${OUTPUT}/zoom-cut-peak.png` });
  // A clipped line crosses the edge in a few columns; a clamped one runs along it.
  assert.ok(edge.hits < 0.05 * edge.width, `${edge.hits} of ${edge.width} columns of the top edge carry the spectrum`);
  assert.deepEqual(log.errors, []);
  await context.close();
});

test('a 200 000-point spectrum: every point goes to the core; redraw times are logged', async () => {
  const { context, page, log } = await openPage(browser, site.url, { scale: 1 });
  const rows = ['wavenumber (cm-1),Abs'];
  for (let i = 0; i < 200_000; i++) { const x = 10000 + i * 0.1; const g = Math.exp(-(((x - 17000) / 1500) ** 2)); rows.push(`${x.toFixed(1)},${(0.5 * g + 0.001 * Math.sin(i)).toFixed(6)}`); }
  await page.locator('#file-input').setInputFiles({ name: 'big-200k.csv', mimeType: 'text/csv', buffer: Buffer.from(rows.join('\n')) });
  await page.waitForFunction(() => window.ddlens.state.samples.length === 2, null, { timeout: 60000 });
  const times = await page.evaluate(() => {
    const { state, draw, figure } = window.ddlens;
    const handed = figure().lines.filter((l) => l.layer === 'data').reduce((n, l) => n + l.x.length, 0);
    const ms = [];
    for (let k = 0; k < 12; k++) { state.view.x = [12000 + 100 * k, 24000 - 100 * k]; state.view.y = null; draw(); ms.push(state.lastDrawMs); }
    return { handed, ms };
  });
  assert.ok(times.handed >= 200_000 + 601, `${times.handed} points handed to the core`);
  const sorted = [...times.ms].sort((a, b) => a - b);
  const median = sorted[sorted.length >> 1];
  console.log(`# 200 000-point redraw: median ${median.toFixed(1)} ms, max ${sorted.at(-1).toFixed(1)} ms (12 redraws)`);
  writeFileSync(`${OUTPUT}/redraw-200k.json`, JSON.stringify({ points: times.handed, ms: times.ms, median }, null, 1));
  noFreeze(sorted.at(-1), 'redrawing 200 000 points');
  assert.deepEqual(log.errors, []);
  await context.close();
});
