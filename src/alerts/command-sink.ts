/**
 * Alert sink running a program for each alert, with the alert JSON (one line)
 * on its stdin: no shell (spawn with shell: false, argv as given), one at a
 * time in order (src/alerts/delivery-queue.ts), a timeout that kills it,
 * failures reported — never thrown, never run again (a program that ran may
 * have acted already).
 *
 * Each run gets its own process group (detached: true), and a timeout kills
 * the whole group: a program that hands its work to a child (`sh -c '…;
 * sleep 60'`) would otherwise leave that child holding our pipes, and the
 * queue would wait for it long after the timeout. At the timeout we also stop
 * reading the pipes and go on with the next alert at once; SIGKILL follows
 * SIGTERM after killGrace_ms for what ignores SIGTERM.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import type { AlertRecord } from './alert-record.js';
import { DeliveryQueue, type AttemptOutcome } from './delivery-queue.js';
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
  /** grace between SIGTERM and SIGKILL to the run's process group on timeout, ms (default 2000) */
  killGrace_ms?: number;
}

/** A command sink with its counters. */
export interface CommandSink extends AlertSink {
  stats(): CommandStats;
  /** stop taking alerts and finish the queue; gives up (killing the run under way) once grace_ms (default 5000) pass with no run finishing, or after 10 × grace_ms */
  close(grace_ms?: number): Promise<CommandStats>;
}

/** Create a command sink for the station's alerts.command. */
export function createCommandSink(cfg: CommandConfig, opts: CommandSinkOptions = {}): CommandSink {
  if (!Array.isArray(cfg.argv) || cfg.argv.length < 1 || !cfg.argv[0]) throw new RangeError('alerts.command.argv: must name the program');
  if (!(cfg.timeout_s > 0)) throw new RangeError(`alerts.command.timeout_s: must be > 0, got ${cfg.timeout_s}`);
  const report = opts.onError ?? (() => {});
  const cap = opts.queueMax ?? 1000;
  if (!(Number.isInteger(cap) && cap >= 1)) throw new RangeError(`queueMax: must be an integer ≥ 1, got ${cap}`);
  const killGrace = opts.killGrace_ms ?? 2000;
  const name = cfg.argv.join(' ').slice(0, 80);

  /** Signal the run's whole process group; a group already gone is fine. */
  const killGroup = (child: ChildProcess, sig: NodeJS.Signals) => {
    if (child.pid === undefined) return;
    // Linux never reuses a pid while its group lives and hands pids out in increasing order up to pid_max,
    // so this id naming another group within killGrace would take a wrap-around of all pids
    try { process.kill(-child.pid, sig); } catch { /* ESRCH: nothing left to kill */ }
  };

  const runOne = (a: AlertRecord, _droppedBefore: number, stop: AbortSignal) => new Promise<AttemptOutcome>((resolve) => {
    let errTail = '';
    let settled = false;
    let timer: NodeJS.Timeout | undefined;
    let drainTimer: NodeJS.Timeout | undefined;
    let child: ChildProcess | undefined;
    let status: [number | null, NodeJS.Signals | null] | null = null;
    const finish = (problem: string | null) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      clearTimeout(drainTimer);
      stop.removeEventListener('abort', onStop);
      // stop reading: a leftover descendant may hold the pipes for long
      child?.stdin?.destroy();
      child?.stderr?.destroy();
      resolve(problem ? { ok: false, permanent: true, reason: problem } : { ok: true });
    };
    const exited = (code: number | null, signal: NodeJS.Signals | null) =>
      finish(code === 0 ? null : `exited with ${code !== null ? `code ${code}` : `signal ${signal}`}${errTail ? `: ${errTail.trim().split('\n').at(-1)}` : ''}`);
    const onStop = () => {
      if (child) killGroup(child, 'SIGKILL');
      if (status) exited(...status); // it had exited already: only its pipes were still open
      else finish('stopped at close, killed');
    };
    if (stop.aborted) { finish('stopped at close, not started'); return; }
    stop.addEventListener('abort', onStop, { once: true });
    try {
      child = spawn(cfg.argv[0], cfg.argv.slice(1), { shell: false, detached: true, stdio: ['pipe', 'ignore', 'pipe'] });
    } catch (e) {
      finish(`cannot start: ${(e as Error).message}`);
      return;
    }
    const c = child;
    timer = setTimeout(() => {
      killGroup(c, 'SIGTERM');
      // a timer of its own, left running after this run is settled, for a group that ignores SIGTERM
      setTimeout(() => killGroup(c, 'SIGKILL'), killGrace);
      finish(`timed out after ${cfg.timeout_s} s, killed`);
    }, cfg.timeout_s * 1000);
    c.on('error', (e) => finish(`cannot start: ${e.message}`));
    c.stderr?.on('data', (chunk: Buffer) => { errTail = (errTail + chunk.toString('utf8')).slice(-500); });
    // the program may exit without reading its stdin: EPIPE is not our failure
    c.stdin?.on('error', () => {});
    c.stderr?.on('error', () => {});
    // 'close' waits for the pipes too; when a background descendant keeps them open, the exit status is enough
    c.on('exit', (code, signal) => {
      status = [code, signal];
      drainTimer = setTimeout(() => exited(code, signal), 200);
    });
    c.on('close', exited);
    c.stdin?.end(JSON.stringify(a) + '\n');
  });

  const queue = new DeliveryQueue<AlertRecord>({
    capacity: cap,
    retries: 0,
    // no retries, so no backoff: the delays are never used
    minDelay_s: 1,
    maxDelay_s: 1,
    attempt: runOne,
    hooks: {
      failed(a, reason) { report(`alert command ${name}: ${reason} (${a.kind} ${a.state ?? ''} at ${a.t})`); },
      dropped() { report(`alert command ${name}: queue full (${cap}), dropped the oldest alert`); },
      refused(a) { report(`alert command ${name}: closed, ${a.kind} at ${a.t} not run`); },
    },
  });
  const stats = (): CommandStats => {
    const q = queue.stats();
    return { ran: q.delivered, failed: q.failed, dropped: q.dropped, pending: q.pending };
  };

  return {
    send: (a) => queue.send(a),
    stats,
    async close(grace_ms = 5000) {
      await queue.close(grace_ms);
      const st = stats();
      if (st.pending > 0) report(`alert command ${name}: closing with ${st.pending} alert(s) not run`);
      return st;
    },
  };
}
