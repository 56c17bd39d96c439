// The printable report: rendered from the analysis of the demo, printed to
// PDF by Chromium (page.pdf uses the print stylesheet), read back with
// poppler's pdftotext, and turned into PNG pages with pdftoppm under
// tests/browser/output/ to be looked at; the JSON download holds the same data.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { readFileSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { launch, startSite, openPage, analyseDemo, OUTPUT } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

const flat = (t) => t.replace(/\s+/g, '');

test('the report prints to a PDF with the results, figures, method and caution; JSON has the same data', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  await analyseDemo(page);
  const card = await page.locator('#lf-card').innerText();
  const delta = card.match(/10Dq \(Δ\)\s+(.+ cm⁻¹)/)[1];

  await page.locator('#report-open').click();
  await page.locator('#report').waitFor({ state: 'visible' });
  assert.equal(await page.locator('main').isVisible(), false, 'the workspace is hidden in the report view');
  const text = await page.locator('#report').innerText();
  for (const part of ['Ligand-field analysis of CrX-7', 'ddlens 0.', 'Results are model estimates', 'Method and model', 'Energy-level diagram', 'B₀ for β', 'Gaussian'.toLowerCase()]) {
    assert.ok(text.includes(part), `the report lacks '${part}'`);
  }
  assert.ok(text.includes(delta), `the report lacks Δ = ${delta}`);
  assert.equal(await page.locator('#report svg').count(), 2, 'spectrum and diagram figures');

  const pdfPath = `${OUTPUT}/report.pdf`;
  await page.pdf({ path: pdfPath, format: 'A4', printBackground: true, margin: { top: '15mm', bottom: '15mm', left: '12mm', right: '12mm' } });
  assert.ok(statSync(pdfPath).size > 20000, 'the PDF is nearly empty');
  const pdfText = execFileSync('pdftotext', ['-layout', pdfPath, '-']).toString();
  assert.ok(flat(pdfText).includes(flat(delta)), `the PDF lacks Δ = ${delta}`);
  assert.match(pdfText, /Results are model estimates/);
  assert.doesNotMatch(pdfText, /Report as JSON|Back to the workspace|Open spectra/, 'controls are printed');
  for (const f of readdirSync(OUTPUT).filter((f) => /^report-page-\d+\.png$/.test(f))) rmSync(`${OUTPUT}/${f}`);
  execFileSync('pdftoppm', ['-png', '-r', '70', pdfPath, `${OUTPUT}/report-page`]);
  const pages = readdirSync(OUTPUT).filter((f) => /^report-page-\d+\.png$/.test(f));
  assert.ok(pages.length >= 1 && pages.length <= 4, `${pages.length} pages`);

  const [download] = await Promise.all([page.waitForEvent('download'), page.locator('#report-json').click()]);
  const json = JSON.parse(readFileSync(await download.path(), 'utf8'));
  writeFileSync(`${OUTPUT}/report.json`, JSON.stringify(json, null, 2));
  const best = await page.evaluate(() => window.ddlens.state.lf.analysis.fit.best);
  assert.equal(json.analysis.fit.best.derived.delta.value, best.derived.delta.value);
  assert.equal(json.results.find((r) => r.label === '10Dq (Δ)').value, delta);
  assert.deepEqual(json.assignment.map((a) => a.state), best.assignment.map((a) => a.typeset));
  assert.match(json.caution, /model estimates/);

  await page.locator('#report-close').click();
  assert.equal(await page.locator('main').isVisible(), true);
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});
