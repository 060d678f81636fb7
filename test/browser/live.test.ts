/**
 * The run page live, in a real browser: `fibrewatch simulate` writes into a
 * socat pseudo-terminal, `fibrewatch record` reads it through serialport into
 * a real store, `fibrewatch serve` reads that store. The open page shows new
 * windows as they are stored (within 2 s, no reload), reads the swing-amplitude
 * section again as they come, and when the server is
 * stopped and started again it reconnects by itself and goes on.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import type { Browser } from 'playwright-core';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { startCli, type LongRunning } from '../helpers/cli.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { startServe, type ServeProcess } from '../server/serve-process.js';
import { chartInk, launchChromium, pageReady, watchConsole } from './chromium.js';

// invented: a 2 s swing at 20 Hz, played 4× faster than real time, so a window closes every half second
const SCENARIO = {
  name: 'live-page', duration_s: 4 * 3600, sample_rate_Hz: 20, inertia_kg_m2: 1e-4, kappa_Nm_per_rad: 1e-4 * (2 * Math.PI / 2) ** 2,
  q: 500, thermal_noise: false, angle_noise_rad: 1e-6, initial: { amplitude_rad: 3e-3, phase_rad: 0, equilibrium_rad: 0 },
  output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
};

let dir: string;
let db: string;
let pty: PtyPair;
let rec: LongRunning;
let sim: LongRunning;
let browser: Browser;

/** Windows stored so far (a short read-only look). */
function windowsIn(path: string): number {
  try {
    const d = new Database(path, { readonly: true, fileMustExist: true });
    try {
      return (d.prepare('SELECT COUNT(*) AS n FROM windows').get() as { n: number }).n;
    } finally {
      d.close();
    }
  } catch {
    return 0; // not made yet
  }
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-browser-live-'));
  db = join(dir, 'live.db');
  const sc = parseScenario(SCENARIO);
  writeFileSync(join(dir, 'scenario.json'), JSON.stringify(SCENARIO));
  [pty, browser] = await Promise.all([startPtyPair(dir), launchChromium()]);
  writeFileSync(join(dir, 'station.json'), JSON.stringify(stationForScenario(sc, { name: 'live-bench', device: pty.devicePath })));
  rec = startCli(['record', '--station', join(dir, 'station.json'), '--db', db]);
  await rec.waitForStderr('recording run');
  sim = startCli(['simulate', '--scenario', join(dir, 'scenario.json'), '--device', pty.feedPath, '--speed', '4', '--seed', '3']);
  await waitFor(() => windowsIn(db) >= 2, 'the first windows stored', 30_000, 100);
}, 90_000);
afterAll(async () => {
  await browser?.close();
  sim?.child.kill('SIGTERM');
  rec?.child.kill('SIGINT');
  await Promise.all([sim?.exited, rec?.exited]);
  await pty?.stop();
  rmSync(dir, { recursive: true, force: true });
});

describe('a run page while record writes the store', () => {
  it('shows new windows without a reload, within 2 s of their storing, and reconnects after the server restarts', async () => {
    let srv: ServeProcess = await startServe(db);
    const port = srv.port;
    try {
      const page = await browser.newPage({ viewport: { width: 1100, height: 900 } });
      const problems = watchConsole(page);
      let loads = 0;
      page.on('load', () => loads++);
      await page.goto(`${srv.base}/runs/1`);
      await pageReady(page);
      await page.waitForFunction(() => document.getElementById('live')?.dataset.state === 'live', null, { timeout: 10_000 });
      const shown = () => page.evaluate(() => Number(document.getElementById('main')!.dataset.windows ?? 0));

      // each new window in the store shows on the page within 2 s
      const lags: number[] = [];
      for (let k = 0; k < 4; k++) {
        const have = windowsIn(db);
        await waitFor(() => windowsIn(db) > have, 'a new window stored', 10_000, 20);
        const stored = windowsIn(db), t0 = Date.now();
        await page.waitForFunction((n) => Number(document.getElementById('main')!.dataset.windows ?? 0) >= n, stored, { timeout: 5_000, polling: 50 });
        lags.push(Date.now() - t0);
      }
      expect(Math.max(...lags), `lags ${lags.join(', ')} ms`).toBeLessThan(2000);
      const before = (await chartInk(page)).period.points;
      await page.waitForFunction((n) => Number(document.querySelector<HTMLElement>('figure[data-chart=period]')?.dataset.points ?? 0) > n, before, { timeout: 5_000 });
      // the swing-amplitude section is read again with the summary after new windows (at most every 5 s)
      const swing = () => page.evaluate(() => Number(document.querySelector<HTMLElement>('figure[data-chart=swing-period]')?.dataset.points ?? 0));
      const swingBefore = await swing();
      await page.waitForFunction((n) => Number(document.querySelector<HTMLElement>('figure[data-chart=swing-period]')?.dataset.points ?? 0) > n, swingBefore, { timeout: 12_000 });

      // the server goes away: the page says so, then reconnects by itself when it is back on the same port
      expect(await srv.stop()).toBe(0);
      await page.waitForFunction(() => document.getElementById('live')?.dataset.state === 'lost', null, { timeout: 10_000 });
      const during = await shown();
      srv = await startServe(db, ['--port', String(port)]);
      await page.waitForFunction(() => document.getElementById('live')?.dataset.state === 'live', null, { timeout: 15_000 });
      // what was stored while it was away is read again, and new windows keep coming
      const now = windowsIn(db);
      expect(now).toBeGreaterThan(during);
      await page.waitForFunction((n) => Number(document.getElementById('main')!.dataset.windows ?? 0) >= n + 2, now, { timeout: 10_000 });
      expect(loads).toBe(1);
      expectNoProblemsBut(problems, port);
      await page.close();
    } finally {
      await srv.stop();
    }
  }, 90_000);
});

/** While the server was down the browser logs the failed stream requests: those, and nothing else. */
function expectNoProblemsBut(problems: string[], port: number): void {
  const other = problems.filter((p) => !(p.includes(`127.0.0.1:${port}/api/runs/1/stream`) || /ERR_CONNECTION_REFUSED|net::ERR_/.test(p)));
  expect(other).toEqual([]);
}
