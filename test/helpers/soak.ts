/**
 * The soak: the simulator's output played into a socat pseudo-terminal at
 * high speed (the feeding process keeps going across unplugs, skipping what
 * falls due while the device is away), replugs, `kill -9` restarts of the
 * built `record`, and a webhook on a real local HTTP server that refuses
 * every other request (status 500). Used by test/e2e/soak.test.ts (short) and
 * bench/soak.ts (long).
 *
 * What it measures:
 *  - sample accounting: lines due at the device = samples stored over all
 *    runs + samples reported lost in gap events (`data.lost_samples`: within
 *    a run from the sample times, between a crashed run and the next from
 *    the device clock);
 *  - alerts: each alert stored (an event with a state) delivered exactly once
 *    (kills wait until the queue has delivered what is stored: a queue held
 *    in memory dies with its process);
 *  - memory: resident size of each `record` process over its life.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { BIN } from './cli.js';
import { writerProcess } from './pty.js';

/** Options of runSoak (SI units). */
export interface SoakOptions {
  /** wall time of the feed, s */
  duration_s: number;
  /** simulated sample rate, Hz */
  sampleRate_Hz?: number;
  /** lines written per wall second (the speed-up is this / sampleRate_Hz) */
  linesPerSecond?: number;
  /** unplugs, spread over the run */
  replugs?: number;
  /** kill -9 restarts of record, spread over the run before the replugs */
  kills?: number;
  /** time the device stays away at a replug, s (longer than no_data_s: each raises and clears no-data) */
  away_s?: number;
  seed?: number;
  log?: (line: string) => void;
}

export interface SoakResult {
  /** lines due at the device (sent, or skipped while it was away) */
  written: number;
  /** of those, not sent because the device was away */
  skipped: number;
  /** samples stored over all runs */
  stored: number;
  /** samples reported lost in gap events */
  reportedLost: number;
  /** gap events without a count of samples lost (transport gaps not matched by the sample times) */
  gapsWithoutCount: number;
  runs: { id: number; status: string; samples: number }[];
  /** alerts stored: `run kind state t` */
  alertsStored: string[];
  /** deliveries the webhook accepted, per alert (same key) */
  deliveries: Map<string, number>;
  /** requests the webhook refused */
  refused: number;
  /** resident size samples of each record process: [t_s since its start, bytes] */
  rss: [number, number][][];
  badRecords: number;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

function rssOf(pid: number): number | undefined {
  try {
    const m = /VmRSS:\s+(\d+)\s+kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) * 1024 : undefined;
  } catch {
    return undefined;
  }
}

/** Run the soak in a fresh temporary folder; see the file comment. */
export async function runSoak(opts: SoakOptions): Promise<SoakResult> {
  const log = opts.log ?? (() => {});
  const rate = opts.sampleRate_Hz ?? 100;
  const lps = opts.linesPerSecond ?? 2000;
  const replugs = opts.replugs ?? 3;
  const kills = opts.kills ?? 2;
  const away_s = opts.away_s ?? 1.5;
  const seed = opts.seed ?? 1;
  const dir = mkdtempSync(join(tmpdir(), 'fw-soak-'));
  const db = join(dir, 'store.db');
  const procs: { child: ChildProcess; err: string; rss: [number, number][]; timer: NodeJS.Timeout }[] = [];
  let pty: PtyPair | undefined;
  let server: Server | undefined;
  try {
    // the simulator's own bytes: an invented fast balance, T = 2 s, at `rate` Hz, as long as the feed needs
    const scenario = join(dir, 'scenario.json');
    writeFileSync(scenario, JSON.stringify({
      name: 'soak-balance', duration_s: Math.ceil((opts.duration_s * lps) / rate) + 10, sample_rate_Hz: rate,
      inertia_kg_m2: 1e-4, kappa_Nm_per_rad: 1e-4 * (Math.PI ** 2), q: 2000, thermal_noise: false, angle_noise_rad: 1e-7,
      initial: { amplitude_rad: 1e-2, phase_rad: 0, equilibrium_rad: 0 }, sensor: { kind: 'angle' },
      output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
    }));
    const data = join(dir, 'feed.csv');
    const sim = spawnSync(process.execPath, [BIN, 'simulate', '--scenario', scenario, '--device', data, '--speed', '0', '--seed', String(seed)], { encoding: 'utf8' });
    if (sim.status !== 0) throw new Error(`simulate failed: ${sim.stderr}`);

    // a webhook that refuses every other request
    const deliveries = new Map<string, number>();
    let refused = 0;
    let requests = 0;
    server = createServer((req, res) => {
      let body = '';
      req.setEncoding('utf8').on('data', (d) => (body += d)).on('end', () => {
        if (requests++ % 2 === 0) {
          refused++;
          res.statusCode = 500;
          res.end('not now');
          return;
        }
        const a = JSON.parse(body) as { run: number; kind: string; state: string; t_s: number };
        const key = `${a.run} ${a.kind} ${a.state} ${a.t_s.toFixed(3)}`;
        deliveries.set(key, (deliveries.get(key) ?? 0) + 1);
        res.end('ok');
      });
    });
    await new Promise<void>((res) => server!.listen(0, '127.0.0.1', () => res()));
    const url = `http://127.0.0.1:${(server.address() as AddressInfo).port}/hook`;

    pty = await startPtyPair(dir);
    const station = join(dir, 'station.json');
    writeFileSync(station, JSON.stringify({
      station: 'soak', fibre: { name: 'soak-fibre' }, pendulum: { inertia_kg_m2: 1e-4 },
      input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] }, sensor: { kind: 'angle' },
      analysis: { window_periods: 4, step_periods: 1, period_guess_s: 2 },
      alerts: { no_data_s: 1, stderr: false, webhook: { url, timeout_s: 2, max_delay_s: 1 } },
    }));

    const startRecord = async (): Promise<void> => {
      const child = spawn(process.execPath, [BIN, 'record', '--station', station, '--db', db], { stdio: ['ignore', 'ignore', 'pipe'] });
      const p = { child, err: '', rss: [] as [number, number][], timer: undefined as unknown as NodeJS.Timeout };
      const t0 = performance.now();
      p.timer = setInterval(() => {
        const v = rssOf(child.pid!);
        if (v !== undefined) p.rss.push([(performance.now() - t0) / 1000, v]);
      }, 200);
      child.stderr!.setEncoding('utf8').on('data', (d: string) => (p.err = (p.err + d).slice(-20_000)));
      procs.push(p);
      await waitFor(() => p.err.includes('recording run') || child.exitCode !== null, 'record to start', 20_000, 10);
      if (child.exitCode !== null) throw new Error(`record exited: ${p.err}`);
    };
    const current = () => procs[procs.length - 1];
    /** Alerts stored so far: `run kind state t_s`. */
    const alertsStored = (): string[] => {
      const d = new Database(db, { readonly: true });
      try {
        return (d.prepare('SELECT run_id, kind, state, t_s FROM events WHERE state IS NOT NULL ORDER BY run_id, t_s').all() as { run_id: number; kind: string; state: string; t_s: number }[])
          .map((e) => `${e.run_id} ${e.kind} ${e.state} ${e.t_s.toFixed(3)}`);
      } finally {
        d.close();
      }
    };

    await startRecord();
    // record drops the first line after opening the port as torn: an empty one
    await writerProcess(pty.feedPath, { bytes: Buffer.from('\n') }).done;
    const feeder = writerProcess(pty.feedPath, { file: data, rate_per_s: lps, reopen: true, waitPath_s: 60 });
    await feeder.ready;

    // the kills first, then the replugs, evenly spread: the last recorder lives through every replug
    const order = [...Array(kills).fill('kill'), ...Array(replugs).fill('replug')] as ('replug' | 'kill')[];
    const every_ms = (opts.duration_s * 1000) / (order.length + 1);
    const t0 = performance.now();
    for (let k = 0; k < order.length; k++) {
      await sleep(Math.max(0, t0 + (k + 1) * every_ms - performance.now()));
      if (order[k] === 'replug') {
        log(`soak: replug ${k + 1}/${order.length}`);
        await pty.stop();
        await sleep(away_s * 1000);
        pty = await startPtyPair(dir);
      } else {
        // let the queue deliver what is stored first: an alert still queued dies with the process
        await waitFor(() => alertsStored().every((a) => (deliveries.get(a) ?? 0) > 0), 'alerts delivered before the kill', 30_000, 100).catch(() => {});
        log(`soak: kill -9 ${k + 1}/${order.length}`);
        const p = current();
        p.child.kill('SIGKILL');
        await new Promise((res) => p.child.once('exit', res));
        clearInterval(p.timer);
        await startRecord();
      }
    }
    const fin = await feeder.done;
    if (fin.code !== 0) throw new Error(`feeder ended with ${fin.code}: ${fin.error}`);
    // let the last lines cross and commit, and the alerts go out
    await sleep(2000);
    await waitFor(() => alertsStored().every((a) => (deliveries.get(a) ?? 0) > 0), 'the last alerts delivered', 30_000, 100).catch(() => {});
    const last = current();
    last.child.kill('SIGTERM');
    await new Promise((res) => last.child.once('exit', res));
    clearInterval(last.timer);

    const d = new Database(db, { readonly: true });
    const runs = d.prepare('SELECT id, status, samples FROM runs ORDER BY id').all() as { id: number; status: string; samples: number }[];
    const gaps = d.prepare("SELECT data_json FROM events WHERE kind = 'gap'").all() as { data_json: string | null }[];
    const bad = (d.prepare("SELECT COALESCE(SUM(value), 0) AS n FROM events WHERE kind IN ('bad-input', 'clock-fault')").get() as { n: number }).n;
    d.close();
    let reportedLost = 0;
    let gapsWithoutCount = 0;
    for (const g of gaps) {
      const lost = (g.data_json ? JSON.parse(g.data_json) : {}).lost_samples;
      if (typeof lost === 'number') reportedLost += lost;
      else gapsWithoutCount++;
    }
    return {
      written: fin.written, skipped: fin.skipped, stored: runs.reduce((s, x) => s + x.samples, 0), reportedLost, gapsWithoutCount, runs,
      alertsStored: alertsStored(), deliveries, refused, rss: procs.map((p) => p.rss), badRecords: bad,
    };
  } finally {
    for (const p of procs) {
      clearInterval(p.timer);
      if (p.child.exitCode === null && p.child.signalCode === null) p.child.kill('SIGKILL');
    }
    await pty?.stop();
    server?.close();
    rmSync(dir, { recursive: true, force: true });
  }
}
