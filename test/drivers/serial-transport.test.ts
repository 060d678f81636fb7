// The supervisor on the real serialport stack over real socat pseudo-terminals:
// killing socat is the unplug, restarting it at the same paths the replug.
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { Incident } from '../../src/domain/events.js';
import { SerialPort } from 'serialport';
import { SerialSupervisor, type DownInfo, type UpInfo } from '../../drivers/serial-transport.js';
import { startPtyPair, waitFor, writerLine, writerProcess, type PtyPair } from '../helpers/pty.js';
import { rng } from '../helpers/blocks.js';

const clock = () => performance.timeOrigin + performance.now(); // same base as the supervisor's default


function record(sup: SerialSupervisor) {
  const r = {
    chunks: [] as Buffer[],
    /** r.chunks.length at each up event */
    chunksAtUp: [] as number[],
    /** r.chunks.length at each down event */
    chunksAtDown: [] as number[],
    bytes: 0,
    firstData_ms: [] as number[],
    data_ms: [] as number[],
    downs: [] as DownInfo[],
    ups: [] as UpInfo[],
    incidents: [] as Incident[],
    giveups: [] as Error[],
    text: () => Buffer.concat(r.chunks).toString('latin1'),
  };
  sup.on('data', (c, t) => {
    r.chunks.push(Buffer.from(c));
    r.bytes += c.length;
    r.data_ms.push(t);
    if (r.firstData_ms.length < r.ups.length) r.firstData_ms.push(t);
  });
  sup.on('down', (d) => {
    r.downs.push(d);
    r.chunksAtDown.push(r.chunks.length);
  });
  sup.on('up', (u) => {
    r.ups.push(u);
    r.chunksAtUp.push(r.chunks.length);
  });
  sup.on('incident', (i) => r.incidents.push(i));
  sup.on('giveup', (e) => r.giveups.push(e));
  return r;
}

function lines(start: number, count: number): string {
  let s = '';
  for (let i = start; i < start + count; i++) s += writerLine(i);
  return s;
}

/**
 * Check that `text` is an unbroken run of writer lines ending with a complete
 * line; the first line may be cut (the stream was joined mid-line). Returns
 * the first whole line's index and the number of whole lines.
 */
function contiguousRun(text: string): { first: number; count: number } {
  let body = text;
  const firstIdx = Number(body.slice(0, body.indexOf(',')));
  if (!(Number.isInteger(firstIdx) && body.startsWith(writerLine(firstIdx)))) body = body.slice(body.indexOf('\n') + 1);
  const first = Number(body.slice(0, body.indexOf(',')));
  const count = body.split('\n').length - 1;
  expect(Number.isInteger(first)).toBe(true);
  expect(body.endsWith('\n')).toBe(true);
  expect(body === lines(first, count)).toBe(true); // no hole, no duplicate, no corruption
  return { first, count };
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
  const sup = new SerialSupervisor({ path: join(dir, 'dev'), baud: 115200, random: rng(7), ...opts });
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

    // one instrument streaming throughout; while unplugged its output is lost, as with a real one
    const RATE = 2000;
    const w = writerProcess(p.feedPath, { rate_per_s: RATE, reopen: true, waitPath_s: 30 });
    cleanups.push(() => w.stop());
    await waitFor(() => r.bytes > 20_000, 'data before the unplug');
    const tKill = clock();
    await p.stop();
    await waitFor(() => r.downs.length === 1, 'down event');
    // a pty hang-up arrives as close(err.disconnected), or — when serialport misses it — through the probe
    expect(r.downs[0].reason).toMatch(/disconnected|vanished|hung up/);
    expect(sup.isUp).toBe(false);
    expect(sup.write(Buffer.from('ping\n'))).toBe(false); // never handed to a closed port
    const bytesAtDown = r.bytes;

    // away for ~3 s, then replug at the same paths
    await new Promise((res) => setTimeout(res, 3000));
    expect(r.ups).toHaveLength(1); // no connection while the path is gone
    expect(r.bytes).toBe(bytesAtDown);
    p = await pair();
    const tBack = clock();
    await waitFor(() => r.ups.length === 2, 'up after replug', 15_000);
    await waitFor(() => r.bytes - bytesAtDown > 30_000, 'data after the return', 15_000);
    const res = await w.finish();
    expect(res.code).toBe(0);
    expect(res.reopens).toBe(1);
    await waitFor(() => r.text().endsWith(writerLine(res.written - 1)), "the writer's last line", 15_000);

    const outage_s = (tBack - tKill) / 1000;
    const up = r.ups[1];
    expect(up.first).toBe(false);
    // no open is tried while the path is gone: one attempt, when it is back
    expect(up.attempts).toBe(1);
    // (detection can lag the unplug by up to probe_s when serialport misses the hang-up, never lead it)
    expect(up.downFor_s).toBeLessThan(outage_s + 0.5);

    const kinds = r.incidents.map((i) => i.kind);
    expect(kinds).toEqual(['device-lost', 'reconnect', 'gap']);
    const rec = r.incidents[1];
    expect(rec.severity).toBe('warning');
    expect(rec.message).toContain(join(dir, 'dev'));
    expect(rec.message).toContain('(1 attempt)');
    const gap = r.incidents[2];
    const dur = gap.data!.duration_s as number;
    console.log(`outage ${outage_s.toFixed(3)} s, gap ${dur.toFixed(3)} s, reconnect after ${up.downFor_s.toFixed(3)} s in ${up.attempts} attempts`);
    expect(Math.abs(dur - outage_s)).toBeLessThan(0.5);
    expect(dur).toBeCloseTo(((gap.data!.end_ms as number) - (gap.data!.start_ms as number)) / 1000, 9);
    expect(gap.data!.open).toBe(false);

    // before: a prefix of the stream (the unplug may cut a line); after: an unbroken run to the writer's last line
    const before = Buffer.concat(r.chunks.slice(0, r.chunksAtUp[1])).toString('latin1');
    const after = Buffer.concat(r.chunks.slice(r.chunksAtUp[1])).toString('latin1');
    expect(before.length).toBe(bytesAtDown);
    expect(lines(0, 20_000).startsWith(before)).toBe(true);
    const run = contiguousRun(after);
    expect(run.first + run.count).toBe(res.written);
    // lines due while away (≈ outage × rate) are the only ones missing
    const lastBefore = before.slice(0, before.lastIndexOf('\n')).split('\n').length - 1;
    const missing = run.first - lastBefore - 1;
    expect(Math.abs(missing / RATE - dur)).toBeLessThan(0.5);
  });

  it('reopens within 0.2 s of the device path coming back, however long the backoff', async () => {
    let p = await pair();
    // a backoff this long would leave the port closed for seconds after the replug
    const sup = supervisor({ minDelay_s: 5, maxDelay_s: 10 });
    const r = record(sup);
    await sup.start();
    const latencies: number[] = [];
    for (let k = 0; k < 3; k++) {
      await p.stop();
      await waitFor(() => r.downs.length === k + 1, `down ${k + 1}`);
      await new Promise((res) => setTimeout(res, 700 + 300 * k));
      p = await pair(); // resolves once the links exist and socat is transferring
      const back = clock();
      await waitFor(() => r.ups.length === k + 2, `up ${k + 2}`, 5000, 5);
      latencies.push(r.ups[k + 1].at_ms - back);
    }
    console.log(`reopen after the path returned: ${latencies.map((l) => l.toFixed(0)).join(', ')} ms`);
    for (const l of latencies) expect(l).toBeLessThan(200);
    const w = writerProcess(p.feedPath, { count: 200 });
    cleanups.push(() => w.stop());
    expect((await w.done).code).toBe(0);
    await waitFor(() => r.text().endsWith(writerLine(199)), 'lines on the last connection');
  });

  it('keeps the backoff for opens that fail on a path that exists', async () => {
    const path = join(dir, 'dev');
    writeFileSync(path, ''); // a plain file: present, but no tty to open
    const sup = supervisor({ waitForDevice: true, minDelay_s: 0.3, maxDelay_s: 0.3, giveUp_s: 1.3 });
    const r = record(sup);
    await sup.start();
    await waitFor(() => r.giveups.length === 1, 'giveup', 10_000);
    const attempts = Number(/\((\d+) attempts/.exec(r.giveups[0].message)?.[1]);
    // one at once, then one every 0.3 s, and a last one at the deadline: about 6, not one per 50 ms poll (26)
    expect(attempts).toBeGreaterThanOrEqual(3);
    expect(attempts).toBeLessThanOrEqual(8);
  });

  it('the no-data watchdog reopens a silent port and reports one outage', async () => {
    const p = await pair();
    const sup = supervisor({ minDelay_s: 0.05, maxDelay_s: 0.2, noDataTimeout_s: 0.8 });
    const r = record(sup);
    // writers are started ahead and wait for "go", so their start-up time cannot trip the watchdog
    const w1 = writerProcess(p.feedPath, { count: 50, waitGo: true });
    const w2 = writerProcess(p.feedPath, { start: 50, rate_per_s: 1000, waitGo: true });
    cleanups.push(() => w1.stop(), () => w2.stop());
    await Promise.all([w1.ready, w2.ready]);
    await sup.start();
    w1.go();
    await w1.done;
    await waitFor(() => r.bytes >= lines(0, 50).length, 'first lines');
    expect(r.incidents).toEqual([]);
    // silent: the watchdog fires, reopens, fires again…
    await waitFor(() => r.downs.length >= 2, 'two watchdog cycles', 10_000);
    expect(r.downs[0].reason).toMatch(/no data for 0.8 s/);
    expect(r.downs[0].at_ms - (r.data_ms.at(-1) ?? 0)).toBeGreaterThanOrEqual(800);
    // the instrument speaks again, continuously, right after a reopen
    const ups = r.ups.length;
    await waitFor(() => r.ups.length > ups, 'a reopen', 10_000);
    w2.go();
    await waitFor(() => r.incidents.some((i) => i.kind === 'gap'), 'gap incident', 10_000);
    const gapAt = r.chunks.length;
    await waitFor(() => r.chunks.length > gapAt + 5, 'more data');
    // one outage however many reopen cycles: one device-lost, one reconnect, one gap
    if (r.incidents.length !== 3) console.log(JSON.stringify({ downs: r.downs, ups: r.ups, inc: r.incidents.map((i) => [i.kind, i.host_ms, i.data]), dataT: r.data_ms.slice(-50) }));
    expect(r.incidents.map((i) => i.kind)).toEqual(['device-lost', 'reconnect', 'gap']);
    const gap = r.incidents[2].data!;
    expect(gap.reopens as number).toBeGreaterThanOrEqual(2);
    expect(gap.start_ms).toBe(r.data_ms[r.chunksAtDown[0] - 1]); // the gap runs from the last data before the loss
    expect(gap.end_ms).toBe(r.data_ms[r.chunksAtDown[0]]); // … to the first data after it
    await sup.stop();
    await w2.stop();
    const text = r.text();
    const first = lines(0, 50);
    expect(text.startsWith(first)).toBe(true);
    expect(contiguousRun(text.slice(first.length, text.lastIndexOf('\n') + 1)).first).toBeGreaterThanOrEqual(50);
  });

  it('catches a hang-up serialport misses (0-byte reads on a hung-up tty) and reopens the new pty', async () => {
    // Reproduce the race deterministically: nobody reads while the pty is
    // unplugged and quickly replugged at the same path, so the hang-up never
    // reaches the binding's poller; reading then starts on the dead fd.
    let p = await pair();
    let release: (() => void) | undefined;
    let connection = 0;
    const sup = supervisor({
      minDelay_s: 0.05,
      maxDelay_s: 0.2,
      probe_s: 0.3,
      openPort: (path, baudRate) => {
        const port = new SerialPort({ path, baudRate, autoOpen: false });
        if (++connection === 1) {
          const on = port.on.bind(port) as (ev: string, fn: (...a: never[]) => void) => SerialPort;
          (port as unknown as { on: typeof on }).on = (ev, fn) => {
            if (ev === 'data') release = () => void on(ev, fn);
            else on(ev, fn);
            return port;
          };
        }
        return port;
      },
    });
    const r = record(sup);
    await sup.start();
    await p.stop();
    p = await pair(); // back at the same path before anyone looked
    release!();
    await waitFor(() => r.downs.length === 1, 'down from the probe', 10_000);
    expect(r.downs[0].reason).toMatch(/hung up/);
    await waitFor(() => r.ups.length === 2, 'reopened', 10_000);
    const w = writerProcess(p.feedPath, { count: 300 });
    cleanups.push(() => w.stop());
    expect((await w.done).code).toBe(0);
    await waitFor(() => r.bytes >= lines(0, 300).length, 'lines on the new connection');
    expect(r.text()).toBe(lines(0, 300));
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
    const tDown = r.downs[0].at_ms;
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
});
