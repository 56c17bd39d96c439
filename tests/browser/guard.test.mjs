// Issue 20, the page side: nothing the user has is lost by a link, a reload,
// Start fresh, a damaged autosave or a trap, and no link makes unbounded work.
// Every wait is bounded; after each step the main thread must still answer.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { deflateRawSync } from 'node:zlib';
import { launch, startSite, openPage, noFreeze } from './harness.mjs';

let browser, site;
before(async () => { browser = await launch(); site = await startSite(); });
after(async () => { await browser?.close(); site?.server.close(); });

const WAIT = { timeout: 30000 };
const names = (page) => page.evaluate(() => window.ddlens.state.samples.map((s) => s.name));
const autosaved = (page) => page.evaluate(() => localStorage.getItem('ddlens-workspace'));
const savedNames = (text) => JSON.parse(text).samples.map((d) => d.sample.name);
const messages = (page) => page.locator('#messages').innerText();
const b64url = (buf) => buf.toString('base64').replace(/\+/g, '-').replace(/\//g, '_').replace(/=+$/, '');
/** A user edit through the undo history: the first sample gets a new name. */
const rename = (page, name) => page.evaluate((n) => {
  const s = window.ddlens.state.samples[0];
  window.ddlens.edit(() => { s.doc = { ...s.doc, sample: { ...s.doc.sample, name: n } }; });
}, name);
/** A `#project=` link whose payload is `bytes` deflated (what the page's share link holds). */
const linkOf = (bytes) => `${site.url}#project=${b64url(deflateRawSync(bytes))}`;

/** Loads `url` as a new document (a fragment-only change would be a hashchange
 *  in the open one); returns the longest main-thread task of the load, ms. */
async function openFresh(page, url) {
  await page.goto('about:blank');
  await page.addInitScript(() => {
    window.__longest = 0;
    new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__longest = Math.max(window.__longest, e.duration); })
      .observe({ type: 'longtask', buffered: true });
  });
  await page.goto(url);
  await page.waitForFunction(() => document.body.dataset.ready === 'true', null, WAIT);
  await page.waitForFunction(() => true, null, { timeout: 10000 }); // the main thread still answers
  return page.evaluate(() => Math.round(window.__longest || 0));
}

/** The longest main-thread task (ms) while `step` runs, measured in the page. */
async function longestTaskDuring(page, step) {
  await page.evaluate(() => {
    window.__longest = 0;
    window.__observer = new PerformanceObserver((l) => { for (const e of l.getEntries()) window.__longest = Math.max(window.__longest, e.duration); });
    window.__observer.observe({ type: 'longtask' });
  });
  await step();
  // The main thread answers a round trip within the bound, or the step froze it.
  await page.waitForFunction(() => true, null, { timeout: 10000 });
  return page.evaluate(() => { window.__observer.disconnect(); return Math.round(window.__longest); });
}

/** A page with the demo edited (renamed), autosaved; returns the page and its autosave text. */
async function editedWorkspace(context) {
  const page = await context.newPage();
  await page.goto(site.url);
  await page.waitForFunction(() => document.body.dataset.ready === 'true', null, WAIT);
  await rename(page, 'my edited sample');
  await page.waitForFunction(() => (localStorage.getItem('ddlens-workspace') || '').includes('my edited sample'), null, WAIT);
  return { page, saved: await autosaved(page) };
}

test('a damaged share link leaves the autosave untouched', async () => {
  const { context } = await openPage(browser, site.url);
  const { page, saved } = await editedWorkspace(context);
  const damaged = [
    `${site.url}#project=`, `${site.url}#project=AAAA`, `${site.url}#project=%%%`,
    linkOf(Buffer.from('{"ddlens_project": 2, "samples": [')), linkOf(Buffer.from('not json at all')),
  ];
  for (const link of damaged) {
    const longest = await openFresh(page, link);
    noFreeze(longest, `opening ${link.slice(site.url.length, site.url.length + 30)}`);
    assert.match(await messages(page), /share link is damaged or incomplete.*nothing was loaded/);
    await page.waitForTimeout(500); // longer than the autosave's 300 ms debounce
    assert.equal(await autosaved(page), saved, 'the autosave is byte for byte the one before the link');
    assert.deepEqual(await names(page), ['my edited sample'], 'the autosaved workspace is on screen');
  }
  await context.close();
});

test('a reload after loading a link keeps the later edits', async () => {
  const { context, page } = await openPage(browser, site.url);
  await page.locator('#share-link').click();
  await page.waitForFunction(() => document.querySelector('#share-output').value.includes('#project='), null, WAIT);
  const link = await page.locator('#share-output').inputValue();
  assert.match(await page.locator('#share-box').innerText(), /anyone who has it can read/);
  await openFresh(page, link);
  assert.match(await messages(page), /Opened a shared analysis of 1 sample\./);
  assert.equal(new URL(page.url()).hash, '', 'the fragment is cleared once loaded');
  await rename(page, 'edited after the link');
  await page.waitForFunction(() => (localStorage.getItem('ddlens-workspace') || '').includes('edited after the link'), null, WAIT);
  await page.reload();
  await page.waitForFunction(() => document.body.dataset.ready === 'true', null, WAIT);
  assert.deepEqual(await names(page), ['edited after the link']);
  // The workspace the link replaced is one Undo away.
  await page.evaluate(() => window.ddlens.undo());
  await context.close();
});

test('a fragment change in an open tab loads the new analysis after asking', async () => {
  const { context, page } = await openPage(browser, site.url);
  await page.locator('#share-link').click();
  await page.waitForFunction(() => document.querySelector('#share-output').value.includes('#project='), null, WAIT);
  const hash = new URL(await page.locator('#share-output').inputValue()).hash;
  const { page: other, saved } = await editedWorkspace(context);
  // Declined: nothing changes, the fragment is cleared.
  const asked = [];
  other.once('dialog', (d) => { asked.push(d.message()); d.dismiss(); });
  await other.evaluate((h) => { location.hash = h; }, hash);
  await other.waitForFunction(() => location.hash === '', null, WAIT);
  assert.match(asked[0], /replaces the 1 sample on screen/);
  assert.deepEqual(await names(other), ['my edited sample']);
  // Accepted: the link's analysis is on screen, the edited one one Undo away.
  other.once('dialog', (d) => d.accept());
  const longest = await longestTaskDuring(other, async () => {
    await other.evaluate((h) => { location.hash = h; }, hash);
    await other.waitForFunction(() => /Opened a shared analysis/.test(document.querySelector('#messages').innerText), null, WAIT);
  });
  noFreeze(longest, 'loading a link from a fragment change');
  assert.notDeepEqual(await names(other), ['my edited sample']);
  await other.evaluate(() => window.ddlens.undo());
  assert.deepEqual(await names(other), ['my edited sample']);
  assert.ok(await other.evaluate(() => localStorage.getItem('ddlens-workspace-backup')), 'a backup is kept');
  assert.ok(saved);
  await context.close();
});

test('start fresh asks first; cancelling keeps everything', async () => {
  const { context } = await openPage(browser, site.url);
  const { page, saved } = await editedWorkspace(context);
  page.once('dialog', (d) => d.dismiss());
  await page.locator('#start-fresh').click();
  await page.waitForTimeout(500);
  assert.deepEqual(await names(page), ['my edited sample']);
  assert.equal(await autosaved(page), saved);
  page.once('dialog', (d) => d.accept());
  await page.locator('#start-fresh').click();
  await page.waitForFunction(() => window.ddlens.state.samples.length === 0, null, WAIT);
  await page.evaluate(() => window.ddlens.undo());
  assert.deepEqual(await names(page), ['my edited sample'], 'Start fresh is one undoable step');
  await context.close();
});

test('a link that inflates beyond the cap is refused with a sentence', async () => {
  const { context } = await openPage(browser, site.url);
  const { page, saved } = await editedWorkspace(context);
  const bomb = linkOf(Buffer.alloc(80 << 20, 0x20)); // 80 MiB of spaces, about 80 KB deflated
  const longest = await openFresh(page, bomb);
  noFreeze(longest, 'refusing an 80 MiB link');
  assert.match(await messages(page), /unpacks to more than 64 MiB.*nothing was loaded/);
  assert.equal(await autosaved(page), saved);
  await context.close();
});

test('a __proto__ series_sort key does not break the next start', async () => {
  const { context } = await openPage(browser, site.url);
  const { page, saved } = await editedWorkspace(context);
  const poisoned = saved.replace(/"series_sort":\s*\{[^}]*\}/, '"series_sort": {"key": "__proto__", "dir": 1}');
  assert.notEqual(poisoned, saved);
  await page.evaluate((t) => localStorage.setItem('ddlens-workspace', t), poisoned);
  for (const visit of [1, 2]) {
    await page.reload();
    await page.waitForFunction(() => document.body.dataset.ready === 'true', null, WAIT);
    assert.equal(await page.evaluate(() => ({}).constructor === Object && Object.prototype.key === undefined), true);
    if (visit === 1) assert.match(await messages(page), /could not be restored.*kept aside/);
  }
  assert.equal(await page.evaluate(() => localStorage.getItem('ddlens-workspace-damaged')), poisoned, 'the damaged autosave is kept aside');
  await context.close();
});

test('the page keeps answering after the worker traps', async () => {
  const { context, page } = await openPage(browser, site.url);
  const [w] = page.workers();
  // A real trap: an engine export reading far outside the wasm memory.
  await w.evaluate(async () => {
    const raw = await wasm_bindgen();
    jobs.trap = () => raw.csv_cell(-16, -16, 1000);
  });
  const error = await page.evaluate(() => window.ddlens.worker.run('trap').then(() => 'no error', (e) => e.message));
  assert.match(error, /engine stopped on an internal error .* was restarted/);
  const longest = await longestTaskDuring(page, async () => {
    const version = await page.evaluate(() => window.ddlens.worker.run('version'));
    assert.match(version, /^\d+\.\d+/);
    const imported = await page.evaluate(() => window.ddlens.worker.run('import', { bytes: new TextEncoder().encode(wasm_bindgen.demo_file()), name: 'demo.csv' }));
    assert.ok(imported.spectra.length >= 1, 'the restarted engine imports the demo');
  });
  noFreeze(longest, 'analysing after a worker trap');
  await context.close();
});

test('a second tab never overwrites the first tab\'s later autosave silently', async () => {
  const { context } = await openPage(browser, site.url);
  const { page: first } = await editedWorkspace(context);
  const second = await context.newPage();
  await second.goto(site.url);
  await second.waitForFunction(() => document.body.dataset.ready === 'true', null, WAIT);
  // The first tab saves again: the second sees it and stops autosaving, and says so.
  await rename(first, 'first tab, later');
  await second.waitForFunction(() => /Another ddlens tab saved its workspace/.test(document.querySelector('#messages').innerText), null, WAIT);
  await rename(second, 'second tab');
  await second.waitForTimeout(600);
  assert.deepEqual(savedNames(await autosaved(first)), ['first tab, later']);
  await context.close();
});

test('CSV exports neutralise formula prefixes', async () => {
  const { context, page } = await openPage(browser, site.url);
  await rename(page, '=1+1');
  const [download] = await Promise.all([page.waitForEvent('download', WAIT), page.locator('#export-csv').click()]);
  const text = await (await download.createReadStream()).toArray().then((parts) => Buffer.concat(parts).toString());
  const header = text.split('\n')[0];
  assert.ok(header.startsWith("'=1+1 wavenumber_cm-1,"), header);
  assert.ok(!/(^|,)=/.test(header), 'no header cell starts with =');
  await context.close();
});
