// The ligand-field panel: the page's analysis of the demo gives the same Δ,
// B and β as `ddlens analyze` on the same file, draws the diagram and the
// predicted transitions, and the what-if control moves them.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { launch, fileUrl, openPage, analyseDemo, inkFraction, runCli, OUTPUT } from './harness.mjs';

let browser;
before(async () => { browser = await launch(); });
after(async () => { await browser?.close(); });

const cliAnalysis = () => runCli(['analyze', 'fixtures/demo/demo-crx7.csv', '--ion', 'Cr3+', '--bands', '2', '--b0-source', 'common', '--json']);

test('the demo analysed in the page matches ddlens analyze; diagram and what-if work', async () => {
  const { context, page, log } = await openPage(browser, fileUrl());
  await analyseDemo(page);
  await page.locator('#lf-results').waitFor({ state: 'visible' });
  const best = await page.evaluate(() => window.ddlens.state.lf.analysis.fit.best);
  const cli = cliAnalysis().results.fit.best;
  for (const [name, a, b] of [['Δ', best.derived.delta.value, cli.derived.delta.value], ['B', best.parameters.b.value, cli.parameters.b.value], ['β', best.derived.beta.value, cli.derived.beta.value]]) {
    assert.ok(Math.abs(a - b) <= 1e-3 * Math.abs(b), `${name}: page ${a} against CLI ${b}`);
  }
  // The demo was made with Dq = 1650, B = 690 (fixtures/demo/make_demo.py).
  assert.ok(Math.abs(best.derived.delta.value - 16500) < 100, `Δ = ${best.derived.delta.value}`);
  const card = await page.locator('#lf-card').innerText();
  assert.match(card, /10Dq \(Δ\)\s+16\u2009?\d{3}/);
  assert.match(card, /⁴A₂g/);
  assert.ok(await inkFraction(page, '#diagram-canvas') > 0.01, 'the diagram is blank');
  const svg = await page.evaluate(() => wasm_bindgen.level_diagram_svg(window.ddlens.state.lf.diagram));
  assert.match(svg, /^<svg/);
  assert.match(svg, /d3 octahedral — C\/B = 4\.19/);
  const before = await page.evaluate(() => window.ddlens.state.lf && JSON.stringify(window.ddlens.state.lf.analysis.fit.best.predicted.map((p) => p.energy)));
  assert.ok(before && before.length > 2, 'no predictions');
  // What-if: move Δ/B and the predicted ⁴T₂g (= 10Dq = Δ/B · B) follows.
  await page.locator('#whatif-b').fill('700');
  await page.locator('#whatif-x').fill('30');
  await page.locator('#whatif-x').dispatchEvent('input');
  const moved = await page.evaluate(() => {
    const lf = window.ddlens.state.lf;
    const levels = wasm_bindgen.levels(3, 'octahedral', lf.whatIf.x * lf.whatIf.b / 10, lf.whatIf.b, 4.19 * lf.whatIf.b);
    return levels.find((l) => l.label === '4T2g').energy;
  });
  assert.ok(Math.abs(moved - 21000) < 1e-6, `⁴T₂g at ${moved}`);
  await page.screenshot({ path: `${OUTPUT}/ligand-field.png`, fullPage: true });
  assert.deepEqual(log.errors, []);
  assert.deepEqual(log.outside, []);
  await context.close();
});
