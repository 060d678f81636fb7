/**
 * Alert delivery wired up: an import that raises and clears drift alerts,
 * with the station's alerts.webhook pointing at a real HTTP server on
 * 127.0.0.1 that is down when the first alerts go out and comes back a while
 * later, and alerts.command running a real program (argv, no shell) with the
 * alert JSON on stdin. Every alert stored as an event must reach both, once
 * each, in order.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createServer, type Server } from 'node:http';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCliAsync, startCli } from '../helpers/cli.js';
import { quietWeek, simulateToFile, writeStation, REALISTIC_ALERTS, type EventJson } from './alerts-helpers.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-alerts-delivery-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const listen = (srv: Server, port = 0) => new Promise<number>((resolve, reject) => {
  srv.once('error', reject);
  srv.listen(port, '127.0.0.1', () => resolve((srv.address() as AddressInfo).port));
});
const closeServer = (srv: Server) => new Promise<void>((r) => srv.close(() => r()));

interface Delivered { run: number; station: string; t: string; t_s: number; kind: string; state: string; severity: string; message: string; value: number | null; threshold: number | null }

describe('alert delivery end to end (import → webhook and command)', () => {
  it('a webhook that is down for a while gets every alert once it is back; the command sink gets each as JSON on stdin, argv untouched', async () => {
    const THR = REALISTIC_ALERTS.equilibrium_rate_rad_per_hour / 3600;
    const tc = 2 * 3600;
    // a period step that later goes away, and a creep at 2× threshold that dies down: both raise and clear
    const sc = {
      ...quietWeek(), name: 'deliver', duration_s: 3 * 86400, dropouts: [],
      period_steps: [{ t_s: 5 * 3600 + 50, ppm: 500 }, { t_s: 7 * 3600 + 50, ppm: -500 }],
      creep: { a_rad: 2 * THR * tc, tc_s: tc, start_s: 10 * 3600 },
    };
    const file = await simulateToFile(dir, sc, 21);

    // find a free port, then leave it closed: the receiver is down at first
    const received: Delivered[] = [];
    let refusedBeforeUp = 0;
    const srv = createServer((req, res) => {
      let body = '';
      req.setEncoding('utf8').on('data', (d) => (body += d)).on('end', () => {
        received.push(JSON.parse(body) as Delivered);
        res.writeHead(200, { 'content-type': 'text/plain' }).end('ok');
      });
    });
    const port = await listen(srv);
    await closeServer(srv);

    const out = join(dir, 'command-out.jsonl');
    const sinkScript = fileURLToPath(new URL('./alerts-command-sink.mjs', import.meta.url));
    const trap = `$(touch ${join(dir, 'pwned')}); * "quoted" 'single'`;
    const station = writeStation(dir, {
      webhook: { url: `http://127.0.0.1:${port}/fibrewatch/alerts`, timeout_s: 2, max_delay_s: 0.25 },
      command: { argv: [process.execPath, sinkScript, out, trap], timeout_s: 10 },
    });
    const db = join(dir, 'deliver.db');
    const imp = startCli(['import', file, '--station', station, '--db', db, '--started-at', '2026-03-02T00:00:00Z', '--json']);
    try {
      // the first POST was refused: the receiver is down while alerts queue up
      await imp.waitForStderr(/alert delivery: webhook .*ECONNREFUSED.*retrying/, 30_000);
      refusedBeforeUp = received.length;
      await sleep(800);
      await listen(srv, port);
      const { code } = await imp.exited;
      expect(code).toBe(0);
    } finally {
      if (imp.child.exitCode === null) imp.child.kill('SIGKILL');
      await closeServer(srv);
    }
    expect(refusedBeforeUp).toBe(0);
    const stderr = imp.stderr();
    expect(stderr).toMatch(/webhook .*: delivering again/);
    expect(stderr).not.toMatch(/undelivered|not run|gave up|dropped|alert command/);

    const run = (JSON.parse(imp.stdout()) as { run: number }).run;
    const ev = await runCliAsync(['events', String(run), '--db', db, '--json']);
    expect(ev.status).toBe(0);
    const alerts = (JSON.parse(ev.stdout) as EventJson[]).filter((e) => e.state !== null);
    // the run raised and cleared both drift alerts
    for (const kind of ['period-drift', 'equilibrium-drift']) {
      expect(alerts.filter((a) => a.kind === kind && a.state === 'raised')).toHaveLength(1);
      expect(alerts.filter((a) => a.kind === kind && a.state === 'cleared')).toHaveLength(1);
    }
    const key = (a: { kind: string; state: string | null; t_s: number }) => `${a.kind}/${a.state}/${a.t_s.toFixed(3)}`;
    // webhook: every alert, once, in the order the watchers raised them (events list them by time: compare as sets of keys, then order per kind)
    expect(received.map(key).sort()).toEqual(alerts.map(key).sort());
    expect(new Set(received.map(key)).size).toBe(received.length);
    for (const kind of ['period-drift', 'equilibrium-drift']) {
      expect(received.filter((a) => a.kind === kind).map(key)).toEqual(alerts.filter((a) => a.kind === kind).map(key));
    }
    // the delivered document: docs/commands.md event fields plus run and station; t is ISO UTC = started_at + t_s
    for (const a of received) {
      expect(a.run).toBe(run);
      expect(a.station).toBe('alerts-bench');
      expect(Math.abs(Date.parse(a.t) - (Date.parse('2026-03-02T00:00:00Z') + a.t_s * 1000))).toBeLessThan(2);
    }
    const stored = new Map(alerts.map((a) => [key(a), a]));
    for (const a of received) {
      const s = stored.get(key(a))!;
      expect(a.message).toBe(s.message);
      expect(a.severity).toBe(s.severity);
      expect(a.value).toBeCloseTo(s.value!, 12);
    }

    // command: one run per alert, in dispatch order (same as the webhook's), argv exactly as configured
    if (process.env.FW_SHOW) console.log(stderr);
    const lines = readFileSync(out, 'utf8').trim().split('\n').map((l) => JSON.parse(l) as { args: string[]; alert: Delivered });
    expect(lines.map((l) => key(l.alert))).toEqual(received.map(key));
    for (const l of lines) expect(l.args).toEqual([trap]);
    expect(existsSync(join(dir, 'pwned'))).toBe(false);
  });
});
