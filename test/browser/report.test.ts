/**
 * The one-file report in a real browser, offline: every request that is not
 * the file itself is aborted, and still the charts draw (bundle and data are
 * inlined), zoom works, and printing hides the controls but keeps the charts,
 * the summary, the events and the cautions. The report of a run with two
 * configurations draws the period and Q against the swing amplitude and
 * tables its configurations and their difference.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser } from 'playwright-core';
import { runCliAsync } from '../helpers/cli.js';
import { buildStore } from '../cli/store-fixture.js';
import { importConfigurationsRun } from '../server/dashboard-store.js';
import { chartInk, launchChromium, pageReady, watchConsole } from './chromium.js';

let dir: string;
let report: string;
let configReport: string;
let browser: Browser;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-browser-report-'));
  const [{ db }, b] = await Promise.all([buildStore(dir), launchChromium()]);
  browser = b;
  const configRun = await importConfigurationsRun(dir, db);
  report = join(dir, 'run-1.html');
  configReport = join(dir, `run-${configRun}.html`);
  const rs = await Promise.all([runCliAsync(['report', '1', '--db', db, '--out', report]), runCliAsync(['report', String(configRun), '--db', db, '--out', configReport])]);
  for (const r of rs) expect(r.status, r.stderr).toBe(0);
}, 120_000);

/** Open a report file with every other request aborted; resolves with the page, what it tried to fetch and its problems. */
async function openOffline(file: string) {
  const ctx = await browser.newContext({ viewport: { width: 1200, height: 900 } });
  const fetched: string[] = [];
  await ctx.route('**/*', (route) => {
    const url = route.request().url();
    if (url.startsWith('file:')) return route.continue();
    fetched.push(url);
    return route.abort();
  });
  const page = await ctx.newPage();
  const problems = watchConsole(page);
  await page.goto(`file://${file}`);
  await pageReady(page);
  return { ctx, page, fetched, problems };
}
afterAll(async () => {
  await browser?.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('the report file', () => {
  it('holds everything it needs: no address to fetch, one inline script allowed by its hash', () => {
    const html = readFileSync(report, 'utf8');
    expect(html).not.toMatch(/https?:\/\//);
    // the markup outside the inlined script and data loads nothing
    const markup = html.replace(/<script[^>]*>[\s\S]*?<\/script>/g, '<script></script>');
    expect(markup).not.toMatch(/<[^>]+\s(src|href)\s*=/i);
    expect(markup.match(/<script/g)?.length).toBe(2);
    expect(html).not.toMatch(/@import|url\(/i);
    expect(html).toMatch(/<meta http-equiv="Content-Security-Policy" content="default-src &#39;none&#39;; script-src &#39;sha256-[A-Za-z0-9+/=]+&#39;/);
    expect(statSync(report).size).toBeLessThan(3e6);
  });

  it('opens offline and draws its charts, zooms, and prints without the controls', async () => {
    const { ctx, page, fetched, problems } = await openOffline(report);
    const ink = await chartInk(page);
    for (const n of ['angle', 'period', 'equilibrium', 'amplitude', 'temperature', 'swing-period', 'swing-q', 'torque-asd', 'angle-asd', 'allan-equilibrium', 'allan-period']) {
      expect(ink[n]?.points, n).toBeGreaterThan(0);
      expect(ink[n]?.ink, `${n}: pixels in its colour`).toBeGreaterThan(30);
    }
    expect(await page.textContent('main')).toMatch(/torsion constant κ/);
    // one configuration: the file says so in its own markup, and has no table of them
    expect(await page.textContent('main')).toMatch(/one configuration, nothing to compare/);
    expect(await page.$$eval('#configurations table', (t) => t.length)).toBe(0);
    expect(await page.$$eval('section.block table.data tbody tr', (r) => r.length)).toBe(3);
    // the last 10 minutes come from the fine layer inlined for them
    const coarse = await page.textContent('figure[data-chart=angle] .u-title');
    await page.click('button:has-text("last 10 min")');
    await page.waitForFunction((t) => document.querySelector('figure[data-chart=angle] .u-title')?.textContent !== t, coarse, { timeout: 5_000 });
    expect(await page.textContent('figure[data-chart=angle] .u-title')).toMatch(/every sample|per 0\.\d+ s/);
    await page.emulateMedia({ media: 'print' });
    expect(await page.$eval('.controls', (e) => getComputedStyle(e).display)).toBe('none');
    expect(await page.$eval('figure[data-chart=period]', (e) => getComputedStyle(e).display)).not.toBe('none');
    expect(await page.textContent('.cautions')).toMatch(/laser.*IEC 60825-1/s);
    expect(fetched).toEqual([]);
    expect(problems).toEqual([]);
    await ctx.close();
  });

  it('a run with two configurations: period and Q against the swing amplitude, the configurations and their difference', async () => {
    expect(statSync(configReport).size).toBeLessThan(3e6);
    const { ctx, page, fetched, problems } = await openOffline(configReport);
    const ink = await chartInk(page);
    for (const n of ['swing-period', 'swing-q']) {
      expect(ink[n]?.points, n).toBeGreaterThan(20);
      expect(ink[n]?.ink, `${n}: pixels in its colour`).toBeGreaterThan(30);
    }
    expect(await page.textContent('.amplitude-fit')).toMatch(/period–amplitude slope [12]\.\d+ ± 0\.\d+ s\/rad/);
    expect(await page.$$eval('#configurations table.configurations tbody tr td:first-child', (d) => d.map((x) => x.textContent))).toEqual(['1', '2']);
    const diff = await page.$$eval('#configurations table.differences tbody tr td', (d) => d.map((x) => x.textContent));
    expect(diff[0]).toBe('2 − 1');
    expect(diff[1]).toMatch(/^5\.\d+ ± 0\.\d+$/);
    expect(fetched).toEqual([]);
    expect(problems).toEqual([]);
    await ctx.close();
  });
});
