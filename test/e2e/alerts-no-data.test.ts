/**
 * no-data during a real `record`: a socat pseudo-terminal, the built CLI
 * reading it through the serialport stack, and an instrument process that
 * falls silent while keeping the port open (no hang-up, so no reconnect), then
 * resumes. The alert must be raised within no_data_s + 1 s of the last line
 * written and cleared once data flows again; the stored event times (ISO UTC)
 * are host wall times, compared with the writer's own clock (same host).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { spawn } from 'node:child_process';
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { fileURLToPath } from 'node:url';
import { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';
import { runCliAsync, startCli } from '../helpers/cli.js';
import type { EventJson } from './alerts-helpers.js';

let dir: string;
let pty: PtyPair | undefined;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-alerts-nodata-'));
});
afterEach(async () => {
  await pty?.stop();
  pty = undefined;
  rmSync(dir, { recursive: true, force: true });
});

const NO_DATA_S = 3;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('no-data during record over a pseudo-terminal', () => {
  it(`is raised within no_data_s + 1 s of the device falling silent and cleared when data returns`, async () => {
    pty = await startPtyPair(dir);
    // the alerts also go to a webhook on a live local server: the record path is wired to delivery too
    const posted: { kind: string; state: string; t: string; t_s: number }[] = [];
    const srv = createServer((req, res) => {
      let body = '';
      req.setEncoding('utf8').on('data', (d) => (body += d)).on('end', () => { posted.push(JSON.parse(body)); res.end('ok'); });
    });
    await new Promise<void>((r) => srv.listen(0, '127.0.0.1', () => r()));
    const url = `http://127.0.0.1:${(srv.address() as AddressInfo).port}/hook`;
    const station = join(dir, 'station.json');
    writeFileSync(station, JSON.stringify({
      station: 'pty-quiet', fibre: { name: 'test-fibre' },
      input: { device: pty.devicePath, format: 'lines', columns: ['t_s', 'angle_rad'] },
      sensor: { kind: 'angle' },
      alerts: { no_data_s: NO_DATA_S, webhook: { url, timeout_s: 2 } },
    }));
    const db = join(dir, 'store.db');
    const rec = startCli(['record', '--station', station, '--db', db]);
    await rec.waitForStderr('recording run');
    const script = fileURLToPath(new URL('./alerts-pausing-writer.mjs', import.meta.url));
    const w = spawn(process.execPath, [script, pty.feedPath, '50'], { stdio: ['pipe', 'pipe', 'pipe'] });
    let out = '';
    w.stdout!.setEncoding('utf8').on('data', (d: string) => (out += d));
    try {
      await waitFor(() => out.includes('ready'), 'writer ready', 10_000);
      await sleep(2500); // data flowing, well under no_data_s between blocks
      w.stdin!.write('pause\n');
      await waitFor(() => /paused \d+/.test(out), 'writer paused', 5_000);
      const silentAt = Number(/paused (\d+)/.exec(out)![1]);
      await rec.waitForStderr(/no-data raised/, 15_000);
      const silentFor = Date.now() - silentAt;
      w.stdin!.write('resume\n');
      await waitFor(() => /resumed \d+/.test(out), 'writer resumed', 5_000);
      const backAt = Number(/resumed (\d+)/.exec(out)![1]);
      await rec.waitForStderr(/no-data cleared/, 10_000);
      await sleep(500);
      rec.child.kill('SIGINT');
      expect((await rec.exited).code).toBe(0);
      expect(silentFor).toBeGreaterThanOrEqual(NO_DATA_S * 1000);

      const ev = await runCliAsync(['events', '1', '--db', db, '--json']);
      expect(ev.status).toBe(0);
      const nd = (JSON.parse(ev.stdout) as EventJson[]).filter((e) => e.kind === 'no-data');
      const raised = nd.filter((e) => e.state === 'raised');
      const cleared = nd.filter((e) => e.state === 'cleared');
      expect(raised).toHaveLength(1);
      expect(cleared).toHaveLength(1);
      const tRaised = Date.parse(raised[0].t);
      const tCleared = Date.parse(cleared[0].t);
      // the last block left the pty at most a few ms after the writer's last write, so the alert may not
      // come before silentAt + no_data_s (minus a little clock jitter), and must come by + 1 s
      expect(tRaised - silentAt).toBeGreaterThanOrEqual(NO_DATA_S * 1000 - 50);
      expect(tRaised - silentAt).toBeLessThanOrEqual((NO_DATA_S + 1) * 1000);
      // cleared by the first block after the silence: after the writer resumed, within a second
      expect(tCleared).toBeGreaterThanOrEqual(backAt - 50);
      expect(tCleared - backAt).toBeLessThan(1000);
      if (process.env.FW_SHOW) console.log(`no-data raised ${tRaised - silentAt} ms after the last write, cleared ${tCleared - backAt} ms after the resume`);
      expect(raised[0].severity).toBe('alarm');
      expect(raised[0].threshold).toBe(NO_DATA_S);
      // the cleared message gives the whole silence, which the writer's clock measured
      expect(Number(cleared[0].value)).toBeGreaterThan((backAt - silentAt) / 1000 - 0.5);
      expect(Number(cleared[0].value)).toBeLessThan((backAt - silentAt) / 1000 + 0.5);
      // the port stayed open: a silence is not an unplug
      expect(JSON.parse(ev.stdout).some((e: EventJson) => e.kind === 'reconnect')).toBe(false);
      // the webhook got both, with the stored times
      const hooked = posted.filter((p) => p.kind === 'no-data');
      expect(hooked.map((p) => p.state)).toEqual(['raised', 'cleared']);
      expect(hooked.map((p) => p.t)).toEqual([raised[0].t, cleared[0].t]);
    } finally {
      srv.close();
      w.kill('SIGTERM');
      if (rec.child.exitCode === null) rec.child.kill('SIGKILL');
    }
  });
});
