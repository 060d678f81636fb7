/**
 * The dashboard in a real browser (Debian's chromium through playwright-core)
 * against the built `fibrewatch serve` on a real store: the front page, a run
 * page, a fibre page and the noise page load without console errors and draw
 * their charts with data; zooming fetches the angle again for the span in
 * view; a run with two configurations shows its swing-amplitude charts and its
 * configurations; a fibre named with markup shows as text; bound beyond
 * loopback the pages need the token.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser, Page } from 'playwright-core';
import { buildDashboardStore, MARKUP_FIBRE } from '../server/dashboard-store.js';
import { startServe, type ServeProcess } from '../server/serve-process.js';
import { chartInk, launchChromium, pageReady, watchConsole } from './chromium.js';

let dir: string;
let db: string;
let srv: ServeProcess;
let browser: Browser;
let configRun: number;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-browser-'));
  ({ db, configRun } = await buildDashboardStore(dir));
  [srv, browser] = await Promise.all([startServe(db), launchChromium()]);
}, 120_000);
afterAll(async () => {
  await browser?.close();
  await srv?.stop();
  rmSync(dir, { recursive: true, force: true });
});

/** Open a page, wait until it is drawn; returns it with the problems seen. */
async function open(path: string, base = srv.base): Promise<{ page: Page; problems: string[] }> {
  const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
  const problems = watchConsole(page);
  const r = await page.goto(base + path);
  expect(r?.status(), path).toBe(200);
  await pageReady(page);
  return { page, problems };
}

/** Every named chart has data points and draws pixels in its series' colour. */
function expectDrawn(ink: Record<string, { points: number; ink: number }>, names: string[]): void {
  for (const n of names) {
    expect(ink[n], `chart ${n}`).toBeDefined();
    expect(ink[n].points, `chart ${n} points`).toBeGreaterThan(0);
    expect(ink[n].ink, `chart ${n} pixels in its colour`).toBeGreaterThan(30);
  }
}

describe('pages', () => {
  it('front page: the runs, newest first, a timeline, filters', async () => {
    const { page, problems } = await open('/');
    const runs = await page.$$eval('table.data tbody tr td:first-child a', (as) => as.map((a) => a.textContent));
    expect(runs.slice(0, 4)).toEqual(['4', '3', '2', '1']);
    expectDrawn(await chartInk(page), ['timeline']);
    expect(problems).toEqual([]);
    // the station filter, as the form sends it
    await page.selectOption('select[name=station]', 'bench-b');
    await Promise.all([page.waitForURL(/station=bench-b/), page.click('form.filters button[type=submit]')]);
    await pageReady(page);
    expect(await page.$$eval('section table.data tbody tr td:first-child a', (as) => as.map((a) => a.textContent)).then((r) => r.filter((x) => /^\d+$/.test(x ?? '')))).toEqual(['2']);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('run page: angle, period, equilibrium, amplitude, temperature charts with data; the summary with σ; zoom reads the angle again', async () => {
    const { page, problems } = await open('/runs/1');
    expectDrawn(await chartInk(page), ['angle', 'period', 'equilibrium', 'amplitude', 'temperature']);
    const summary = await page.textContent('.tables');
    expect(summary).toMatch(/period\s*20\.\d+ ± 0\.\d+ s/);
    expect(summary).toMatch(/torsion constant κ/);
    expect(await page.$$eval('.tables table.data tbody tr', (r) => r.length)).toBe(3);
    expect(await page.textContent('.alerts')).toMatch(/period-drift/);
    // one configuration: a line saying so, no tables
    expect(await page.textContent('section.configurations')).toMatch(/one configuration, nothing to compare/);
    expect(await page.$$eval('section.configurations table', (t) => t.length)).toBe(0);
    const before = await page.textContent('figure[data-chart=angle] .u-title');
    expect(before).toMatch(/min and max per/);
    // the last 10 minutes: read again from the samples, in buckets well under a second (5 Hz)
    await page.click('button:has-text("last 10 min")');
    await page.waitForFunction(() => /per 0\.\d+ s/.test(document.querySelector('figure[data-chart=angle] .u-title')?.textContent ?? ''), null, { timeout: 10_000 });
    expectDrawn(await chartInk(page), ['angle']);
    // a zoom by dragging across the period chart moves the angle chart too, and reads it again
    const box = (await page.locator('figure[data-chart=period] .u-over').boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.42, box.y + box.height / 2, { steps: 5 });
    await page.mouse.up();
    await page.waitForFunction(() => /every sample/.test(document.querySelector('figure[data-chart=angle] .u-title')?.textContent ?? ''), null, { timeout: 10_000 });
    expectDrawn(await chartInk(page), ['angle']);
    expect(problems).toEqual([]);
    await page.close();
  });

  it('run page of a run with two configurations: period and Q against the swing amplitude, the configurations and their difference', async () => {
    const { page, problems } = await open(`/runs/${configRun}`);
    expectDrawn(await chartInk(page), ['swing-period', 'swing-q']);
    // the x axis is the amplitude, not time
    expect(await page.textContent('figure[data-chart=swing-period] .u-legend')).toMatch(/swing amplitude \(mrad\)/);
    expect(await page.textContent('.amplitude-fit')).toMatch(/period–amplitude slope [12]\.\d+ ± 0\.\d+ s\/rad .*temperature term not removed/);
    const cfg = await page.$$eval('section.configurations table.configurations tbody tr', (rows) => rows.map((r) => [...r.querySelectorAll('td')].map((d) => d.textContent)));
    expect(cfg.map((r) => r[0])).toEqual(['1', '2']);
    expect(cfg[1][3]).toMatch(/^5\.\d+ ± 0\.\d+$/);
    const diff = await page.$$eval('section.configurations table.differences tbody tr td', (d) => d.map((x) => x.textContent));
    expect(diff[0]).toBe('2 − 1');
    expect(diff[1]).toMatch(/^5\.\d+ ± 0\.\d+$/);
    expect(diff[3]).toMatch(/^1[12]\d\.\d+ ± \d\.\d+$/);
    expect(await page.textContent('section.configurations')).toMatch(/equilibrium drift.*polynomial/s);
    expect(problems).toEqual([]);
    await page.close();
    // the page's address may narrow the comparison, as compare --from-s does; the JSON link follows it
    const narrowed = await open(`/runs/${configRun}?compare_from_s=1800`);
    const text = await narrowed.page.textContent('section.configurations');
    expect(text).toMatch(/from 00:30:00 to the end/);
    expect(await narrowed.page.getAttribute('a:has-text("configurations")', 'href')).toBe(`/api/runs/${configRun}/compare?from_s=1800`);
    expect(narrowed.problems).toEqual([]);
    await narrowed.page.close();
  });

  it('fibre page: κ, G, Q and creep per run with their σ; the moved flag', async () => {
    const { page, problems } = await open('/fibres/W25-a');
    expectDrawn(await chartInk(page), ['kappa_Nm_per_rad', 'shear_modulus_Pa', 'q', 'equilibrium_rate_rad_per_s']);
    expect(await page.textContent('h1')).toBe('Fibre W25-a');
    expect(await page.textContent('td.flagged')).toBe('kappa moved');
    expect(problems).toEqual([]);
    await page.close();
  });

  it('noise page: torque against the thermal floor, angle against the readout, Allan deviations', async () => {
    const { page, problems } = await open('/runs/1/noise');
    expectDrawn(await chartInk(page), ['torque-asd', 'angle-asd', 'allan-equilibrium', 'allan-period']);
    expect(await page.textContent('main')).toMatch(/excess over thermal/);
    expect(problems).toEqual([]);
    await page.close();
  });
});

describe('names from the store are text', () => {
  it('a fibre named <img src=x onerror=alert(1)> shows as those characters, on its page, the front page and its run', async () => {
    for (const path of [`/fibres/${encodeURIComponent(MARKUP_FIBRE)}`, '/', '/runs/4']) {
      const { page, problems } = await open(path);
      expect(await page.$$eval('img', (i) => i.length), path).toBe(0);
      expect(await page.textContent('main'), path).toContain(MARKUP_FIBRE);
      expect(problems, path).toEqual([]);
      await page.close();
    }
    const { page } = await open(`/fibres/${encodeURIComponent(MARKUP_FIBRE)}`);
    expect(await page.textContent('h1')).toBe(`Fibre ${MARKUP_FIBRE}`);
    expect(await page.title()).toBe(`fibrewatch · fibre ${MARKUP_FIBRE}`);
    await page.close();
  });
});

describe('exposed with a token', () => {
  it('401 without it; ?token= once and the pages work, the token kept where scripts cannot read it', async () => {
    const token = 'office-tunnel-token-0123456789';
    const exposed = await startServe(db, ['--host', '0.0.0.0', '--token', token]);
    try {
      const ctx = await browser.newContext();
      // the refusal on a page of its own: its late favicon request (refused too) must not land on the watched page
      const refused = await ctx.newPage();
      const denied = await refused.goto(`${exposed.base}/runs/1`);
      expect(denied?.status()).toBe(401);
      expect(await refused.textContent('main')).toMatch(/a token is needed/);
      await refused.close();
      const page = await ctx.newPage();
      const problems = watchConsole(page);
      const ok = await page.goto(`${exposed.base}/runs/1?token=${token}`);
      expect(ok?.status()).toBe(200);
      expect(new URL(page.url()).search).toBe('');
      await pageReady(page);
      expectDrawn(await chartInk(page), ['angle', 'period']);
      expect(await page.evaluate(() => document.cookie)).toBe('');
      expect((await ctx.cookies())[0]).toMatchObject({ name: 'fibrewatch_token', httpOnly: true, sameSite: 'Strict' });
      expect(problems).toEqual([]);
      await ctx.close();
    } finally {
      await exposed.stop();
    }
  });
});
