// Share link, corrupted link, autosave after a reload, and project files.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { launch, startSite, openPage, analyseDemo, OUTPUT } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

const summary = (page) => page.evaluate(() => {
  const lf = window.ddlens.state.lf;
  return {
    samples: window.ddlens.state.samples.map((s) => `${s.name}:${s.wavenumber.length}`),
    delta: lf && lf.analysis.fit.best.derived.delta.value,
    bands: lf && lf.analysis.bands.bands.map((b) => b.centre.value),
  };
});

test('a share link restores the same analysis in a fresh browser; a damaged one loads nothing', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await analyseDemo(page);
  const original = await summary(page);
  await page.locator('#share-link').click();
  await page.waitForFunction(() => document.querySelector('#share-output').value.includes('#project='));
  const link = await page.locator('#share-output').inputValue();
  assert.ok(link.startsWith(site.url), 'the link points at the same page');
  assert.ok(!link.split('#')[0].includes('project'), 'data travel only in the fragment');

  const fresh = await openPage(browser, link);
  await fresh.page.waitForFunction(() => window.ddlens.state.lf, null, { timeout: 30000 });
  assert.deepEqual(await summary(fresh.page), original);
  assert.deepEqual(fresh.log.errors, []);
  assert.deepEqual(fresh.log.outside, []);
  await fresh.context.close();

  const broken = link.slice(0, link.indexOf('#project=') + 9) + 'AAAA' + link.slice(link.indexOf('#project=') + 40, -10);
  const bad = await openPage(browser, broken);
  await bad.page.waitForFunction(() => document.body.dataset.ready === 'true');
  assert.match(await bad.page.locator('#messages').innerText(), /share link is damaged or incomplete: nothing was loaded/);
  assert.equal(await bad.page.evaluate(() => window.ddlens.state.samples.length), 0);
  assert.equal(bad.log.errors.filter((e) => !/Content Security Policy/.test(e)).length, 0, bad.log.errors.join('\n'));
  await bad.context.close();
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('a reload restores the workspace; Start fresh clears it', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await analyseDemo(page);
  const original = await summary(page);
  await page.waitForTimeout(600); // the autosave is debounced by 300 ms
  await page.reload();
  await page.waitForFunction(() => window.ddlens.state.lf, null, { timeout: 30000 });
  assert.deepEqual(await summary(page), original);
  await page.screenshot({ path: `${OUTPUT}/restored.png` });
  page.once('dialog', (d) => d.accept()); // Start fresh asks first
  await page.locator('#start-fresh').click();
  await page.waitForFunction(() => !window.ddlens.state.lf && window.ddlens.state.samples.length === 0);
  assert.deepEqual(log.errors, []);
  await context.close();
});

test('a cleaned sample keeps its steps through a reload and can still go back to the file data', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await page.locator('#cleaning summary').click();
  await page.locator('#crop-lo').fill('14000');
  await page.locator('#crop-hi').fill('26000');
  await page.locator('#clean-apply').click();
  const cropped = await page.evaluate(() => window.ddlens.state.samples[0].wavenumber.length);
  assert.ok(cropped < 601, `${cropped} points after the crop`);
  await page.waitForTimeout(600); // the autosave is debounced by 300 ms
  await page.reload();
  await page.waitForFunction(() => window.ddlens.state.samples.length === 1 && window.ddlens.state.samples[0].steps.length);
  const restored = await page.evaluate(() => { const s = window.ddlens.state.samples[0]; return { n: s.wavenumber.length, raw: s.raw.wavenumber.length, steps: s.steps }; });
  assert.deepEqual(restored, { n: cropped, raw: 601, steps: [{ crop: { low: 14000, high: 26000 } }] });
  await page.locator('#cleaning summary').click();
  await page.locator('#clean-clear').click();
  assert.equal(await page.evaluate(() => window.ddlens.state.samples[0].wavenumber.length), 601);
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});

test('a project file saved by a newer version is refused with a plain message', async () => {
  const { context, page } = await openPage(browser, site.url);
  const newer = JSON.stringify({ ddlens_project: 99, samples: [] });
  await page.locator('#file-input').setInputFiles({ name: 'future.ddlens.json', mimeType: 'application/json', buffer: Buffer.from(newer) });
  await page.waitForFunction(() => /newer ddlens/.test(document.querySelector('#messages').innerText));
  assert.equal(await page.evaluate(() => window.ddlens.state.samples.length), 1, 'the demo stays loaded');
  await context.close();
});
