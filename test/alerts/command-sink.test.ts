import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, existsSync } from 'node:fs';
import { setTimeout as sleep } from 'node:timers/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createCommandSink } from '../../src/alerts/command-sink.js';
import type { AlertRecord } from '../../src/alerts/alert-record.js';

const alert = (i: number): AlertRecord => ({
  run: 3, station: 'bench-b', t: `2026-01-01T00:0${i}:00.000Z`, t_s: 60 * i, kind: 'period-drift', severity: 'warning',
  state: i % 2 ? 'cleared' : 'raised', message: `period up: +${500 + i} ppm; it's "quoted" & $HOME stays literal`, value: 500 + i, threshold: 300, data: null,
});
// a receiver that appends its stdin to the file named by its first argument (process.argv[1] under node -e)
const APPEND = "const fs=require('fs');let d='';process.stdin.setEncoding('utf8');process.stdin.on('data',c=>d+=c).on('end',()=>fs.appendFileSync(process.argv[1],d))";

describe('command sink', () => {
  it('runs argv without a shell, one at a time, in order, with the alert JSON on stdin', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fw-cmd-'));
    const out = join(dir, 'alerts.jsonl');
    const sink = createCommandSink({ argv: [process.execPath, '-e', APPEND, out], timeout_s: 10 });
    for (let i = 0; i < 4; i++) sink.send(alert(i));
    const st = await sink.close(20_000);
    expect(st).toEqual({ ran: 4, failed: 0, dropped: 0, pending: 0 });
    const lines = readFileSync(out, 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(lines).toEqual([alert(0), alert(1), alert(2), alert(3)]);
  });

  it('reports a failing program, a missing program and a timeout instead of throwing', async () => {
    const errors: string[] = [];
    const fail = createCommandSink({ argv: [process.execPath, '-e', "console.error('hook broke');process.exit(3)"], timeout_s: 10 }, { onError: (e) => errors.push(e) });
    fail.send(alert(0));
    expect(await fail.close(10_000)).toMatchObject({ ran: 0, failed: 1 });
    expect(errors[0]).toMatch(/exited with code 3: hook broke \(period-drift raised at 2026-01-01T00:00:00\.000Z\)/);

    const missing = createCommandSink({ argv: ['/nonexistent/fibrewatch-hook'], timeout_s: 1 }, { onError: (e) => errors.push(e) });
    missing.send(alert(1));
    expect(await missing.close(5000)).toMatchObject({ failed: 1 });
    expect(errors[1]).toMatch(/cannot start: .*ENOENT/);

    const dir = mkdtempSync(join(tmpdir(), 'fw-cmd-'));
    const marker = join(dir, 'late');
    const slow = createCommandSink({ argv: [process.execPath, '-e', `setTimeout(()=>require('fs').writeFileSync(${JSON.stringify(marker)},'x'),5000)`], timeout_s: 0.3 }, { onError: (e) => errors.push(e), killGrace_ms: 200 });
    const t0 = Date.now();
    slow.send(alert(2));
    expect(await slow.close(10_000)).toMatchObject({ failed: 1 });
    expect(Date.now() - t0).toBeLessThan(3000);
    expect(errors[2]).toMatch(/timed out after 0\.3 s, killed/);
    expect(existsSync(marker)).toBe(false);
    expect(() => createCommandSink({ argv: [], timeout_s: 1 })).toThrow(/alerts\.command\.argv: must name the program/);
  });
  it('close(grace) drains a busy queue that keeps finishing runs, but gives up on a stuck one after the grace', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fw-cmd-'));
    const out = join(dir, 'alerts.jsonl');
    // each run takes ≥ 150 ms (plus a node start-up): 12 of them outlast a 1.5 s grace, yet each finishes within it
    const slowAppend = `setTimeout(()=>{${APPEND}},150)`;
    const busy = createCommandSink({ argv: [process.execPath, '-e', slowAppend, out], timeout_s: 10 });
    for (let i = 0; i < 12; i++) busy.send(alert(i));
    const t0 = Date.now();
    expect(await busy.close(1500)).toEqual({ ran: 12, failed: 0, dropped: 0, pending: 0 });
    expect(Date.now() - t0).toBeGreaterThan(12 * 150);
    expect(readFileSync(out, 'utf8').trim().split('\n')).toHaveLength(12);
    const errors: string[] = [];
    const stuck = createCommandSink({ argv: [process.execPath, '-e', 'setTimeout(()=>{},20000)'], timeout_s: 30 }, { onError: (e) => errors.push(e) });
    stuck.send(alert(0));
    stuck.send(alert(1));
    const t1 = Date.now();
    expect(await stuck.close(300)).toMatchObject({ ran: 0, failed: 1, pending: 1 });
    expect(Date.now() - t1).toBeLessThan(3000);
    expect(errors.some((e) => /not run/.test(e))).toBe(true);
  });

  it('a timed-out command whose grandchild holds the pipes: its whole process group is killed and the next alert runs at once', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fw-cmd-'));
    const pids = join(dir, 'pids');
    // the program (sh) starts a grandchild that prints its pid, then becomes `sleep 60` (exec keeps the pid)
    // and holds the inherited stdin/stderr pipes long after the timeout
    const script = 'cat >/dev/null; echo started >&2; sh -c \'echo $$ >> "$1"; exec sleep 60\' inner "$1"';
    const errors: string[] = [];
    const sink = createCommandSink({ argv: ['/bin/sh', '-c', script, 'hook', pids], timeout_s: 0.15 }, { onError: (e) => errors.push(e), killGrace_ms: 300 });
    for (let i = 0; i < 15; i++) sink.send(alert(i % 10));
    const t0 = Date.now();
    const st = await sink.close(2000);
    const took_ms = Date.now() - t0;
    expect(st).toEqual({ ran: 0, failed: 15, dropped: 0, pending: 0 });
    expect(errors.filter((e) => /timed out after 0\.15 s, killed/.test(e))).toHaveLength(15);
    // 15 runs of ≥ 0.15 s each, with no wait for the pipes; the old behaviour waited for the sleep (60 s)
    expect(took_ms).toBeLessThan(15_000);
    const started = readFileSync(pids, 'utf8').trim().split('\n').map(Number);
    expect(started).toHaveLength(15);
    await sleep(600); // past the kill grace
    // gone, or a zombie waiting for init to reap it: no sleep left running
    const alive = started.filter((pid) => {
      try { process.kill(pid, 0); } catch { return false; }
      try { return readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.[0] !== 'Z'; } catch { return false; }
    });
    expect(alive).toEqual([]);
  });

  it('a program that exits leaving a background child on its pipes is done at its exit', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fw-cmd-'));
    const pids = join(dir, 'pids');
    const script = 'cat >/dev/null; sleep 30 & echo $! >> "$1"; exit 0';
    const errors: string[] = [];
    const sink = createCommandSink({ argv: ['/bin/sh', '-c', script, 'hook', pids], timeout_s: 20 }, { onError: (e) => errors.push(e) });
    for (let i = 0; i < 3; i++) sink.send(alert(i));
    const t0 = Date.now();
    try {
      // waiting for the pipes to close would take the sleep's 30 s for each
      expect(await sink.close(5000)).toEqual({ ran: 3, failed: 0, dropped: 0, pending: 0 });
      expect(Date.now() - t0).toBeLessThan(15_000);
      expect(errors).toEqual([]);
    } finally {
      // the sink leaves what a program started in the background alone; this test cleans up its own
      for (const pid of readFileSync(pids, 'utf8').trim().split('\n').map(Number)) { try { process.kill(pid, 'SIGTERM'); } catch { /* gone */ } }
    }
  });
});
