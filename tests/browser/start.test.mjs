// The page starts from file:// and from http, draws the demo spectrum,
// starts its worker, logs no error and sends no request off the machine.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { launch, startSite, fileUrl, openPage, inkFraction, OUTPUT } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

for (const [name, url] of [['file://', () => fileUrl()], ['http', () => site.url]]) {
  test(`demo spectrum is drawn from ${name}, the worker runs, nothing leaves the machine`, async () => {
    const { context, page, log } = await openPage(browser, url());
    assert.equal(await page.evaluate(() => document.body.dataset.ready), 'true', 'the page did not finish starting');
    assert.equal(await page.locator('#sample-list li input[type=text]').inputValue(), 'CrX-7 (demo: invented Cr3+-doped host)');
    assert.match(await page.locator('#sample-list').innerText(), /601 points/);
    // Sharp on high-DPI: the canvas backing store is CSS size × devicePixelRatio.
    const dims = await page.evaluate(() => { const c = document.querySelector('#spectrum-canvas'); return [c.width, c.getBoundingClientRect().width]; });
    assert.ok(Math.abs(dims[0] - 2 * dims[1]) <= 1, `backing store ${dims[0]} for CSS width ${dims[1]}`);
    const ink = await inkFraction(page);
    assert.ok(ink > 0.01 && ink < 0.6, `canvas ink fraction ${ink}`);
    assert.equal(await page.evaluate(() => window.ddlens.worker.run('version')), await page.evaluate(() => wasm_bindgen.version()));
    await page.screenshot({ path: `${OUTPUT}/start-${name.replace(/\W/g, '')}.png` });
    assert.deepEqual(log.errors, []);
    assert.deepEqual(log.outside, []);
    assert.ok(log.requests.length > 0, 'no request was recorded at all: the recorder is broken');
    await context.close();
  });
}

test('the recorder sees an outside request, and the page policy blocks one (both checks can fail)', async () => {
  const { context, page, log } = await openPage(browser, site.url);
  // The page's own Content-Security-Policy refuses the fetch before it is sent, and logs it.
  await page.evaluate(() => fetch('http://192.0.2.1/x').catch(() => null));
  assert.ok(log.errors.some((e) => /Content Security Policy/i.test(e)), 'the page policy did not refuse an outside fetch');
  // Without the policy (a blank page in the same context), the request reaches the recorder.
  const blank = await context.newPage();
  await blank.evaluate(() => fetch('http://192.0.2.1/y').catch(() => null));
  assert.ok(log.outside.some((u) => u.startsWith('http://192.0.2.1/')), 'the outside request was not seen');
  await context.close();
});
