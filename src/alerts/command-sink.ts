/**
 * Alert sink running a program for each alert, with the alert JSON (one line)
 * on its stdin: no shell (spawn with shell: false, argv as given), one at a
 * time in order, a timeout that kills it, failures reported — never thrown.
 */
import { spawn } from 'node:child_process';
import type { AlertRecord } from './alert-record.js';
import type { AlertSink } from './stderr-sink.js';

/** The station's alerts.command block. */
export interface CommandConfig {
  /** program and arguments */
  argv: string[];
  /** per-run timeout, s */
  timeout_s: number;
}

/** Counters of a command sink. */
export interface CommandStats {
  ran: number;
  failed: number;
  dropped: number;
  pending: number;
}

/** Options of createCommandSink. */
export interface CommandSinkOptions {
  /** problems, one line each (default: nothing) */
  onError?: (message: string) => void;
  /** queue capacity; when full the oldest is dropped (default 1000) */
  queueMax?: number;
  /** grace between SIGTERM and SIGKILL on timeout, ms (default 2000) */
  killGrace_ms?: number;
}

/** A command sink with its counters. */
export interface CommandSink extends AlertSink {
  stats(): CommandStats;
  /** stop taking alerts and finish the queue; gives up once grace_ms (default 5000) pass with no run finishing, or after 10 × grace_ms */
  close(grace_ms?: number): Promise<CommandStats>;
}

/** Create a command sink for the station's alerts.command. */
export function createCommandSink(cfg: CommandConfig, opts: CommandSinkOptions = {}): CommandSink {
  if (!Array.isArray(cfg.argv) || cfg.argv.length < 1 || !cfg.argv[0]) throw new RangeError('alerts.command.argv: must name the program');
  if (!(cfg.timeout_s > 0)) throw new RangeError(`alerts.command.timeout_s: must be > 0, got ${cfg.timeout_s}`);
  const report = opts.onError ?? (() => {});
  const cap = opts.queueMax ?? 1000;
  const killGrace = opts.killGrace_ms ?? 2000;
  const q: AlertRecord[] = [];
  const st = { ran: 0, failed: 0, dropped: 0 };
  let running = false;
  let closing = false;
  let stopped = false;
  let loop: Promise<void> = Promise.resolve();
  let current: ReturnType<typeof spawn> | null = null;
  const name = cfg.argv.join(' ').slice(0, 80);

  const runOne = (a: AlertRecord) => new Promise<void>((resolve) => {
    let timedOut = false;
    let errTail = '';
    let settled = false;
    const finish = (problem: string | null) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      clearTimeout(killTimer);
      current = null;
      if (problem) { st.failed++; report(`alert command ${name}: ${problem} (${a.kind} ${a.state ?? ''} at ${a.t})`); }
      else st.ran++;
      resolve();
    };
    let killTimer: NodeJS.Timeout | undefined;
    let child: ReturnType<typeof spawn>;
    try {
      child = spawn(cfg.argv[0], cfg.argv.slice(1), { shell: false, stdio: ['pipe', 'ignore', 'pipe'] });
    } catch (e) {
      finish(`cannot start: ${(e as Error).message}`);
      return;
    }
    current = child;
    const timer = setTimeout(() => {
      timedOut = true;
      child.kill('SIGTERM');
      killTimer = setTimeout(() => child.kill('SIGKILL'), killGrace);
    }, cfg.timeout_s * 1000);
    child.on('error', (e) => finish(`cannot start: ${e.message}`));
    child.stderr?.on('data', (c: Buffer) => { errTail = (errTail + c.toString('utf8')).slice(-500); });
    // the program may exit without reading its stdin: EPIPE is not our failure
    child.stdin?.on('error', () => {});
    child.on('close', (code, signal) => {
      if (timedOut) finish(`timed out after ${cfg.timeout_s} s, killed`);
      else if (code !== 0) finish(`exited with ${code !== null ? `code ${code}` : `signal ${signal}`}${errTail ? `: ${errTail.trim().split('\n').at(-1)}` : ''}`);
      else finish(null);
    });
    child.stdin?.end(JSON.stringify(a) + '\n');
  });

  const run = async () => {
    running = true;
    try {
      while (q.length > 0 && !stopped) await runOne(q.shift()!);
    } finally {
      running = false;
    }
  };

  return {
    send(a) {
      if (closing) { report(`alert command ${name}: closed, ${a.kind} at ${a.t} not run`); return; }
      if (q.length >= cap) { q.shift(); st.dropped++; report(`alert command ${name}: queue full (${cap}), dropped the oldest alert`); }
      q.push(a);
      if (!running) loop = run();
    },
    stats: () => ({ ...st, pending: q.length }),
    async close(grace_ms = 5000) {
      closing = true;
      // the grace bounds a stuck queue, not a busy one: it restarts whenever a run finishes (an import
      // hands over its alerts all at once), up to 10 × grace_ms in all
      const stop = () => { stopped = true; current?.kill('SIGKILL'); };
      const hard = setTimeout(stop, 10 * grace_ms);
      let timer = setTimeout(stop, grace_ms);
      let done = st.ran + st.failed;
      const watch = setInterval(() => {
        if (st.ran + st.failed === done) return;
        done = st.ran + st.failed;
        clearTimeout(timer);
        timer = setTimeout(stop, grace_ms);
      }, Math.max(10, Math.min(100, grace_ms / 10)));
      await loop;
      clearTimeout(timer);
      clearTimeout(hard);
      clearInterval(watch);
      stopped = true;
      if (q.length > 0) report(`alert command ${name}: closing with ${q.length} alert(s) not run`);
      return { ...st, pending: q.length };
    },
  };
}
