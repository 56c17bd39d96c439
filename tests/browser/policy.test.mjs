// The pages' Content-Security-Policy: scripts allowed by hash only (no
// 'self', no 'unsafe-inline'), blob: only where the single file's worker
// needs it, and both builds start, run their worker and export figures
// under it with no console error (a refused script or worker would log one).
// Over http the test server sends the headers README.md asks of a host.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { launch, startSite, fileUrl, openPage } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

/** The page's policy as directive → list of sources. */
const directives = (csp) => Object.fromEntries(csp.split(';').map((d) => d.trim().split(/\s+/)).map(([k, ...v]) => [k, v]));

/** Adds a script or a worker the page does not carry; resolves with what the policy did. */
function probe(page, kind) {
  return page.evaluate((what) => new Promise((resolve) => {
    const done = (result) => { clearTimeout(timer); resolve(result); };
    const timer = setTimeout(() => done('nothing happened'), 5000);
    document.addEventListener('securitypolicyviolation', (e) => done(`refused by ${e.effectiveDirective}`), { once: true });
    if (what === 'script') {
      // A same-origin file that exists: 'self' would let it run.
      const s = document.createElement('script');
      s.src = location.protocol === 'file:' ? location.href : 'worker.js';
      s.onload = () => done('ran');
      document.head.append(s);
    } else {
      try { new Worker(URL.createObjectURL(new Blob(['postMessage(1)'], { type: 'text/javascript' }))).onmessage = () => done('ran'); } catch { /* reported by the violation event */ }
    }
  }), kind);
}

for (const [name, url, single] of [['file://', () => fileUrl(), true], ['http', () => site.url, false]]) {
  test(`from ${name} the policy allows scripts by hash only and the page starts, works and exports under it`, async () => {
    const { context, page, log } = await openPage(browser, url());
    assert.equal(await page.evaluate(() => document.body.dataset.ready), 'true', 'the page did not finish starting');
    const csp = await page.evaluate(() => document.querySelector('meta[http-equiv="Content-Security-Policy"]').content);
    const d = directives(csp);
    assert.ok(d['script-src'].length >= 2 && d['script-src'].every((s) => /^'sha256-[A-Za-z0-9+/]+=*'$/.test(s) || s === "'wasm-unsafe-eval'"), `script-src: ${d['script-src']}`);
    assert.deepEqual(Object.keys(d).filter((k) => d[k].includes('blob:')), single ? ['worker-src'] : []);
    assert.equal(await page.evaluate(() => window.ddlens.worker.run('version')), await page.evaluate(() => wasm_bindgen.version()));
    for (const id of ['export-svg', 'export-png']) {
      const [download] = await Promise.all([page.waitForEvent('download', { timeout: 10000 }), page.locator(`#${id}`).click()]);
      assert.match(download.suggestedFilename(), /\.(svg|png)$/);
    }
    assert.deepEqual(log.errors, []);
    assert.equal(await probe(page, 'script'), 'refused by script-src-elem');
    if (!single) assert.equal(await probe(page, 'worker'), 'refused by worker-src');
    await context.close();
  });
}

test('the test server sends the headers a host should send, its policy the same as the page meta', async () => {
  const page = await fetch(site.url);
  const html = await page.text();
  const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html)[1];
  for (const path of ['', 'worker.js', 'ddlens_bg.wasm']) {
    const h = (await fetch(site.url + path)).headers;
    assert.equal(h.get('content-security-policy'), meta, path);
    assert.equal(h.get('x-frame-options'), 'DENY', path);
    assert.equal(h.get('x-content-type-options'), 'nosniff', path);
    assert.equal(h.get('referrer-policy'), 'no-referrer', path);
  }
});
