// The supervisor on the real serialport stack over real socat pseudo-terminals:
// killing socat is the unplug, restarting it at the same paths the replug.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { Incident } from '../../src/config/events.js';
import { SerialSupervisor, type DownInfo, type UpInfo } from '../../drivers/serial-transport.js';
import { startPtyPair, waitFor, writerLine, writerProcess, type PtyPair } from '../helpers/pty.js';

const clock = () => performance.timeOrigin + performance.now(); // same base as the supervisor's default

/** Deterministic jitter for the backoff (mulberry32). */
function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = Math.imul(a ^ (a >>> 15), a | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function record(sup: SerialSupervisor) {
  const r = {
    chunks: [] as Buffer[],
    bytes: 0,
    firstDataMs: [] as number[],
    downs: [] as DownInfo[],
    ups: [] as UpInfo[],
    incidents: [] as Incident[],
    giveups: [] as Error[],
    text: () => Buffer.concat(r.chunks).toString('latin1'),
  };
  sup.on('data', (c, t) => {
    r.chunks.push(Buffer.from(c));
    r.bytes += c.length;
    if (r.firstDataMs.length < r.ups.length) r.firstDataMs.push(t);
  });
  sup.on('down', (d) => r.downs.push(d));
  sup.on('up', (u) => r.ups.push(u));
  sup.on('incident', (i) => r.incidents.push(i));
  sup.on('giveup', (e) => r.giveups.push(e));
  return r;
}

function lines(start: number, count: number): string {
  let s = '';
  for (let i = start; i < start + count; i++) s += writerLine(i);
  return s;
}

let dir: string;
const cleanups: (() => Promise<void>)[] = [];

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-serial-'));
});

afterEach(async () => {
  for (const c of cleanups.splice(0).reverse()) await c().catch(() => {});
  rmSync(dir, { recursive: true, force: true });
});

async function pair(): Promise<PtyPair> {
  const p = await startPtyPair(dir);
  cleanups.push(() => p.stop());
  return p;
}

function supervisor(opts: Partial<ConstructorParameters<typeof SerialSupervisor>[0]> = {}): SerialSupervisor {
  const sup = new SerialSupervisor({ path: join(dir, 'dev'), baud: 115200, random: seeded(7), ...opts });
  cleanups.push(() => sup.stop());
  return sup;
}

describe('SerialSupervisor on a socat pseudo-terminal', () => {
  it('delivers every byte written at the far end (100 000 lines, in order)', async () => {
    const p = await pair();
    const sup = supervisor();
    const r = record(sup);
    await sup.start();
    expect(sup.isUp).toBe(true);
    const N = 100_000;
    const expected = lines(0, N);
    const t0 = performance.now();
    const w = writerProcess(p.feedPath, { count: N });
    cleanups.push(() => w.stop());
    const res = await w.done;
    expect(res).toMatchObject({ code: 0, written: N });
    await waitFor(() => r.bytes >= expected.length, `${expected.length} bytes`, 30_000);
    const s = (performance.now() - t0) / 1000;
    console.log(`pty throughput: ${(expected.length / s / 1e6).toFixed(2)} MB/s (${expected.length} bytes, ${r.chunks.length} chunks, ${s.toFixed(2)} s incl. writer start)`);
    expect(r.bytes).toBe(expected.length);
    expect(r.text() === expected).toBe(true); // toBe on 2.6 MB strings would print them on failure
    expect(r.downs).toEqual([]);
    expect(r.ups).toHaveLength(1);
    expect(r.ups[0]).toMatchObject({ attempts: 1, first: true, downFor_s: 0 });
    expect(r.incidents).toEqual([]);
  });

  it('survives an unplug: down, up, reconnect and gap incidents, then every byte after the return', async () => {
    let p = await pair();
    const sup = supervisor({ minDelay_s: 0.05, maxDelay_s: 0.25 });
    const r = record(sup);
    await sup.start();

    // stream until the unplug
    const w1 = writerProcess(p.feedPath, { rate_per_s: 2000 });
    cleanups.push(() => w1.stop());
    await waitFor(() => r.bytes > 20_000, 'data before the unplug');
    const tKill = clock();
    await p.stop();
    await waitFor(() => r.downs.length === 1, 'down event');
    expect(r.downs[0].reason).toMatch(/disconnected|error|closed/);
    expect(sup.isUp).toBe(false);
    expect(sup.write(Buffer.from('ping\n'))).toBe(false); // never handed to a closed port
    const w1res = await w1.done;
    expect(w1res.code).toBe(3); // the writer saw its pty vanish too
    const beforeText = r.text();

    // away for ~3 s, then replug at the same paths
    await new Promise((res) => setTimeout(res, 3000));
    expect(r.ups).toHaveLength(1); // no connection while the path is gone
    // writer 2 is started first and waits for the feed path, so its start-up time is not part of the gap
    const w2 = writerProcess(p.feedPath, { start: 1_000_000, count: 2000, rate_per_s: 4000, waitGo: true });
    cleanups.push(() => w2.stop());
    p = await pair();
    const tBack = clock();
    await w2.ready;
    await waitFor(() => r.ups.length === 2, 'up after replug', 15_000);
    w2.go();
    expect((await w2.done).code).toBe(0);
    const after = lines(1_000_000, 2000);
    await waitFor(() => r.bytes >= beforeText.length + after.length, 'all lines after the return', 15_000);

    const outage_s = (tBack - tKill) / 1000;
    const up = r.ups[1];
    expect(up.first).toBe(false);
    expect(up.attempts).toBeGreaterThanOrEqual(2);
    expect(up.downFor_s).toBeGreaterThan(outage_s - 0.5);
    expect(up.downFor_s).toBeLessThan(outage_s + 0.5);

    const kinds = r.incidents.map((i) => i.kind);
    expect(kinds).toEqual(['device-lost', 'reconnect', 'gap']);
    const rec = r.incidents[1];
    expect(rec.severity).toBe('warning');
    expect(rec.message).toContain(join(dir, 'dev'));
    expect(rec.message).toContain(`${up.attempts} attempts`);
    const gap = r.incidents[2];
    const dur = gap.data!.duration_s as number;
    console.log(`outage ${outage_s.toFixed(3)} s, gap ${dur.toFixed(3)} s, reconnect after ${up.downFor_s.toFixed(3)} s in ${up.attempts} attempts`);
    expect(Math.abs(dur - outage_s)).toBeLessThan(0.5);
    expect(dur).toBeCloseTo(((gap.data!.end_ms as number) - (gap.data!.start_ms as number)) / 1000, 9);
    expect(gap.data!.open).toBe(false);

    // before: a prefix of writer 1's stream (possibly cut mid-line by the unplug); after: all of writer 2's lines
    const text = r.text();
    expect(text.length).toBe(beforeText.length + after.length);
    expect(text.endsWith(after)).toBe(true);
    expect(lines(0, w1res.written + 1000).startsWith(beforeText)).toBe(true); // + a partly written last batch
    expect(beforeText.length).toBeGreaterThan(20_000);
  });

  it('refuses a missing device path at start with a clear ENOENT error', async () => {
    const sup = supervisor();
    const path = join(dir, 'dev');
    await expect(sup.start()).rejects.toMatchObject({ code: 'ENOENT', message: expect.stringContaining(path) });
    await sup.stop();
  });

  it('with waitForDevice, connects once the pseudo-terminal appears', async () => {
    const sup = supervisor({ waitForDevice: true, minDelay_s: 0.05, maxDelay_s: 0.2 });
    const r = record(sup);
    await sup.start(); // resolves while waiting
    await new Promise((res) => setTimeout(res, 600));
    expect(r.ups).toHaveLength(0);
    const p = await pair();
    await waitFor(() => r.ups.length === 1, 'first connection', 15_000);
    expect(r.ups[0].first).toBe(true);
    expect(r.ups[0].attempts).toBeGreaterThanOrEqual(2);
    const w = writerProcess(p.feedPath, { count: 500 });
    cleanups.push(() => w.stop());
    expect((await w.done).code).toBe(0);
    const expected = lines(0, 500);
    await waitFor(() => r.bytes >= expected.length, 'the 500 lines');
    expect(r.text()).toBe(expected);
    expect(r.incidents).toEqual([]); // waiting at start interrupted nothing
  });

  it('gives up after giveUp_s without the device, reporting an alarm and the open gap', async () => {
    const p = await pair();
    const sup = supervisor({ minDelay_s: 0.05, maxDelay_s: 0.3, giveUp_s: 1 });
    const r = record(sup);
    await sup.start();
    const w = writerProcess(p.feedPath, { count: 100 });
    await w.done;
    await waitFor(() => r.bytes >= lines(0, 100).length, 'data before the unplug');
    await p.stop();
    await waitFor(() => r.downs.length === 1, 'down');
    const tDown = r.downs[0].atMs;
    await waitFor(() => r.giveups.length === 1, 'giveup', 10_000);
    const tGiveUp = clock();
    expect((tGiveUp - tDown) / 1000).toBeGreaterThan(0.95);
    expect((tGiveUp - tDown) / 1000).toBeLessThan(3);
    expect(r.giveups[0]).toMatchObject({ code: 'EGIVEUP' });
    expect(r.giveups[0].message).toContain(join(dir, 'dev'));
    expect(r.incidents.map((i) => `${i.kind}/${i.severity}`)).toEqual(['device-lost/warning', 'device-lost/alarm', 'gap/warning']);
    expect(r.incidents[2].data!.open).toBe(true);
    expect(r.ups).toHaveLength(1);
    // no more attempts after giving up, even if the device returns
    await pair();
    await new Promise((res) => setTimeout(res, 500));
    expect(r.ups).toHaveLength(1);
    await sup.stop();
  });

  it('the no-data watchdog reopens a silent port and reports one outage', async () => {
    const p = await pair();
    const sup = supervisor({ minDelay_s: 0.05, maxDelay_s: 0.2, noDataTimeout_s: 0.4 });
    const r = record(sup);
    await sup.start();
    const w1 = writerProcess(p.feedPath, { count: 50 });
    await w1.done;
    await waitFor(() => r.bytes >= lines(0, 50).length, 'first lines');
    // silent: the watchdog fires, reopens, fires again…
    await waitFor(() => r.downs.length >= 2, 'two watchdog cycles', 10_000);
    expect(r.downs[0].reason).toMatch(/no data for 0.4 s/);
    const w2 = writerProcess(p.feedPath, { start: 50, count: 50, waitGo: true });
    cleanups.push(() => w2.stop());
    await w2.ready;
    const ups = r.ups.length;
    await waitFor(() => r.ups.length > ups, 'port open again', 10_000); // go right after a reopen, well inside the watchdog's limit
    w2.go();
    await w2.done;
    await waitFor(() => r.incidents.some((i) => i.kind === 'gap'), 'gap incident', 10_000);
    // one outage however many reopen cycles: one device-lost, one reconnect, one gap
    expect(r.incidents.map((i) => i.kind)).toEqual(['device-lost', 'reconnect', 'gap']);
    expect(r.incidents[2].data!.reopens as number).toBeGreaterThanOrEqual(2);
    await waitFor(() => r.bytes >= lines(0, 100).length, 'second lines');
    expect(r.text()).toBe(lines(0, 100));
  });
});
