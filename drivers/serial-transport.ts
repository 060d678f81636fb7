/**
 * A serial connection that survives the device going away and coming back.
 *
 * serialport has no reconnect of its own (docs/dependencies.md), so `SerialSupervisor`
 * owns one `SerialPort` per connection and replaces it after every loss:
 *
 *   opening ──ok──▶ up ──close / error / no-data watchdog──▶ closing
 *      ▲                                                        │ (close finished)
 *      └───────────── waiting ◀─────────────────────────────────┘
 *
 * While waiting: if the device path is gone (unplugged), the supervisor
 * watches its folder (fs.watch, plus a stat every 50 ms as a fallback) and
 * opens again as soon as the path is back — a device path is not a network
 * service, and backing off from it only loses data. The capped backoff with
 * jitter is for opens that fail on a path that exists (busy, permissions, a
 * device that is there but not answering).
 *
 * It is an EventEmitter (typed, see `SerialSupervisorEvents`): `data`, `down`,
 * `up`, `incident`, `giveup`. It never emits `error`, so an unhandled event can
 * never crash the process; failures arrive as `down` / `giveup` / incidents.
 *
 * Incidents, once per outage (an outage runs from the loss of a connection that
 * was working until data flows again, however many reopen cycles it takes):
 *  - `device-lost` (warning) at the moment of loss;
 *  - `reconnect` (warning) when the port is open again;
 *  - `gap` (warning) at the first data after the return. Its `data.duration_s`
 *    is the time without data: from the last chunk received before the loss
 *    (or the loss itself if that connection never delivered any) to the first
 *    chunk after the return — the hole a user sees in the recording. It is
 *    longer than the device's absence by the reopen latency (tens of ms after
 *    the path returns; one backoff delay per open that fails on a path that
 *    exists) and whatever the device takes to speak again. `host_ms` is the
 *    gap's start; `data.start_ms`/`end_ms` give both ends.
 *  - on `giveup`, a `device-lost` alarm.
 *
 * Hang-ups serialport misses: on Linux a read from a hung-up tty (pty master
 * gone, USB adapter pulled) returns 0 bytes, and @serialport/bindings-cpp 13
 * retries such reads forever — a busy loop with the port still "open" and no
 * close or error event. It is only reported as a disconnect when the hang-up
 * lands while the binding is polling. So, while the port is quiet, a probe
 * checks that the path still exists and that an ioctl still works (EIO once
 * hung up); either failure is a loss like any other.
 *
 * The watchdog and the probe skip a tick that follows an event-loop stall
 * (a long synchronous query, say): data may be waiting unprocessed, and
 * judging then would report a loss that never happened.
 *
 * Times are host milliseconds from `now()`; the default clock is monotonic
 * (`performance.timeOrigin + performance.now()`), so a wall-clock step during
 * an outage cannot distort a gap.
 */
import { EventEmitter } from 'node:events';
import { watch, type FSWatcher } from 'node:fs';
import { stat } from 'node:fs/promises';
import { dirname } from 'node:path';
import { SerialPort } from 'serialport';
import type { Incident } from '../src/domain/events.js';
import { nextDelay } from '../src/domain/backoff.js';

/** The part of serialport's `SerialPort` the supervisor uses (so tests or other bindings can stand in). */
export interface SerialPortLike {
  readonly isOpen: boolean;
  open(cb: (err: Error | null) => void): void;
  /** modem-status ioctl (TIOCMGET); used only as a liveness probe */
  get?(cb: (err: Error | null, status?: unknown) => void): void;
  close(cb?: (err: Error | null) => void): void;
  write(data: Buffer, cb?: (err: Error | null | undefined) => void): boolean;
  on(event: 'data', fn: (chunk: Buffer) => void): unknown;
  on(event: 'close', fn: (err?: Error | null) => void): unknown;
  on(event: 'error', fn: (err: Error) => void): unknown;
  removeAllListeners(event?: string): unknown;
}

export interface SerialSupervisorOptions {
  /** device path; prefer a /dev/serial/by-id/… link, it survives replugs (see drivers/ports.ts) */
  path: string;
  /** baud rate, symbols per second (ignored by pseudo-terminals) */
  baud: number;
  /** shortest reconnect delay, seconds; default 0.25 */
  minDelay_s?: number;
  /** longest reconnect delay, seconds; default 10 */
  maxDelay_s?: number;
  /** give up after this long without the device, seconds (from the loss, or from start() while waiting); default never */
  giveUp_s?: number;
  /** watchdog: no data for this long while open counts as a loss and the port is reopened, seconds; default off */
  noDataTimeout_s?: number;
  /**
   * hang-up probe: when the port has been quiet this long, check that the path
   * still exists and the tty still answers an ioctl (a hung-up tty gives EIO),
   * and treat a failure as a loss; seconds; default 1; 0 = off. Needed because
   * serialport can miss a hang-up entirely (see the file comment).
   */
  probe_s?: number;
  /** device path missing at start(): false (default) rejects with code ENOENT; true keeps retrying with backoff */
  waitForDevice?: boolean;
  /** take serialport's exclusive lock (TIOCEXCL + flock) so a second reader cannot split the stream; default true */
  lock?: boolean;
  /** creates a fresh, unopened port per connection; default serialport's SerialPort with autoOpen false */
  openPort?: (path: string, baud: number) => SerialPortLike;
  /** host clock, ms; default monotonic, epoch-based */
  now?: () => number;
  /** uniform random numbers in [0, 1) for backoff jitter; default Math.random */
  random?: () => number;
  /** while the device path is absent, look for it this often besides watching its folder, ms; default 50 */
  pathPoll_ms?: number;
}

export interface DownInfo {
  /** host ms of the loss (for the watchdog: when it fired) */
  at_ms: number;
  /** what happened, e.g. "disconnected: bad file descriptor", "error: …", "no data for 5 s", "open failed: …" */
  reason: string;
}

export interface UpInfo {
  /** host ms the port opened */
  at_ms: number;
  /** seconds since the outage began (since start() for the first connection) */
  downFor_s: number;
  /** open attempts this took */
  attempts: number;
  /** true for the first connection of this supervisor */
  first: boolean;
}

/** Typed events of `SerialSupervisor`. */
export interface SerialSupervisorEvents {
  /** bytes as they arrive, split anywhere; `chunk` is a view into serialport's read pool: copy it to keep it long */
  data: [chunk: Buffer, host_ms: number];
  down: [info: DownInfo];
  up: [info: UpInfo];
  incident: [incident: Incident];
  giveup: [err: Error];
}

type State = 'idle' | 'opening' | 'up' | 'closing' | 'waiting' | 'stopped' | 'gave-up';

/** From the loss of a working connection (or start() with waitForDevice) until data flows again. */
interface Outage {
  start_ms: number;
  /** last data before the loss, else the loss itself */
  gapStart_ms: number;
  reason: string;
  /** open attempts so far */
  attempts: number;
  /** successful reopens so far (the watchdog may close a silent port again) */
  reopens: number;
  /** reconnect incident already sent */
  reported: boolean;
  /** waiting for the device at start(): nothing was interrupted, so no incidents */
  initial: boolean;
}

/** An Error with a Node-style `code` (ENOENT, EGIVEUP, …). */
export class SerialTransportError extends Error {
  constructor(message: string, readonly code: string, readonly path: string) {
    super(message);
    this.name = 'SerialTransportError';
  }
}

const defaultNow = () => performance.timeOrigin + performance.now();

/** Does the path resolve to something (a dangling by-id link does not)? */
async function pathExists(path: string): Promise<boolean> {
  try {
    await stat(path);
    return true;
  } catch {
    return false;
  }
}

/**
 * Keeps one serial device open across unplug/replug; see the file comment.
 *
 * @example
 * const sup = new SerialSupervisor({ path: '/dev/serial/by-id/usb-…-if00', baud: 115200, waitForDevice: true });
 * sup.on('data', (chunk, host_ms) => decoder.push(chunk, host_ms));
 * sup.on('incident', (inc) => store.event(inc));
 * sup.on('giveup', (err) => shutdown(err));
 * await sup.start();
 * // … on SIGTERM:
 * await sup.stop();
 */
export class SerialSupervisor extends EventEmitter<SerialSupervisorEvents> {
  readonly path: string;
  readonly baud: number;
  private readonly minDelay_s: number;
  private readonly maxDelay_s: number;
  private readonly giveUp_s: number | undefined;
  private readonly noDataTimeout_s: number | undefined;
  private readonly probe_s: number;
  private readonly waitForDevice: boolean;
  private readonly openPort: (path: string, baud: number) => SerialPortLike;
  private readonly now: () => number;
  private readonly random: () => number;
  private readonly pathPoll_ms: number;

  private state: State = 'idle';
  private port: SerialPortLike | undefined;
  /** resolves when the current port's close has finished */
  private closed: Promise<void> | undefined;
  private timer: NodeJS.Timeout | undefined;
  private watchdog: NodeJS.Timeout | undefined;
  private wake: (() => void) | undefined;
  private loop: Promise<void> | undefined;

  private started_ms = 0;
  private connections = 0;
  private upAt_ms = 0;
  private lastData_ms: number | undefined;
  /** current outage, while one is open (from loss until data flows again) */
  private outage: Outage | undefined;
  private lastError = '';

  constructor(opts: SerialSupervisorOptions) {
    super();
    if (typeof opts.path !== 'string' || opts.path === '') throw new TypeError('path: must be a non-empty string');
    if (!Number.isInteger(opts.baud) || opts.baud <= 0) throw new TypeError(`baud: must be a positive integer, got ${opts.baud}`);
    this.path = opts.path;
    this.baud = opts.baud;
    this.minDelay_s = opts.minDelay_s ?? 0.25;
    this.maxDelay_s = opts.maxDelay_s ?? 10;
    if (!(this.minDelay_s > 0)) throw new TypeError(`minDelay_s: must be > 0, got ${this.minDelay_s}`);
    if (!(this.maxDelay_s >= this.minDelay_s)) throw new TypeError(`maxDelay_s: must be ≥ minDelay_s (${this.minDelay_s}), got ${this.maxDelay_s}`);
    if (opts.giveUp_s !== undefined && !(opts.giveUp_s > 0)) throw new TypeError(`giveUp_s: must be > 0, got ${opts.giveUp_s}`);
    if (opts.noDataTimeout_s !== undefined && !(opts.noDataTimeout_s > 0)) throw new TypeError(`noDataTimeout_s: must be > 0, got ${opts.noDataTimeout_s}`);
    this.giveUp_s = opts.giveUp_s;
    this.noDataTimeout_s = opts.noDataTimeout_s;
    this.probe_s = opts.probe_s ?? 1;
    if (!(this.probe_s >= 0)) throw new TypeError(`probe_s: must be ≥ 0 (0 = off), got ${opts.probe_s}`);
    this.waitForDevice = opts.waitForDevice ?? false;
    const lock = opts.lock ?? true;
    this.openPort = opts.openPort ?? ((path, baudRate) => new SerialPort({ path, baudRate, autoOpen: false, lock }));
    this.now = opts.now ?? defaultNow;
    this.random = opts.random ?? Math.random;
    this.pathPoll_ms = opts.pathPoll_ms ?? 50;
    if (!(this.pathPoll_ms > 0)) throw new TypeError(`pathPoll_ms: must be > 0, got ${opts.pathPoll_ms}`);
  }

  /** True while a port is open and delivering. */
  get isUp(): boolean {
    return this.state === 'up';
  }

  /**
   * Open the device. Without `waitForDevice` the first open must succeed: a
   * missing path rejects with code ENOENT, any other failure with the
   * binding's message. With `waitForDevice` it resolves at once and keeps
   * trying in the background; `up` marks the connection.
   */
  async start(): Promise<void> {
    if (this.state !== 'idle') throw new Error(`SerialSupervisor(${this.path}): start() called twice`);
    this.started_ms = this.now();
    this.state = 'opening';
    if (!this.waitForDevice) {
      const first = this.attempt();
      this.loop = first.then(() => {}); // stop() during this open waits for it
      const r = await first;
      if (r !== 'ok') {
        this.state = 'stopped';
        throw r;
      }
      if (this.isOver()) await this.closePort();
      return;
    }
    this.outage = { start_ms: this.started_ms, gapStart_ms: this.started_ms, reason: 'waiting for device', attempts: 0, reopens: 0, reported: false, initial: true };
    this.loop = this.reconnectLoop(false);
  }

  /** Write to the device if it is connected; returns false (and drops the bytes) while it is not. */
  write(data: Buffer): boolean {
    // serialport holds writes to a closed port forever (docs/dependencies.md): never hand it one.
    if (this.state !== 'up' || !this.port?.isOpen) return false;
    this.port.write(data, () => {});
    return true;
  }

  /** Close the port and stop reconnecting; resolves once the port is closed. Idempotent. */
  async stop(): Promise<void> {
    if (this.state === 'stopped' || this.state === 'gave-up') {
      await this.loop;
      return;
    }
    const wasIdle = this.state === 'idle';
    this.state = 'stopped';
    this.clearWatchdog();
    if (this.timer) clearTimeout(this.timer);
    this.timer = undefined;
    this.wake?.();
    if (wasIdle) return;
    await this.loop;
    await this.closePort();
    this.flushOpenGap();
  }

  // ── connection handling ─────────────────────────────────────────────

  /** One open attempt; on success the supervisor is up. */
  private async attempt(): Promise<'ok' | SerialTransportError> {
    if (this.outage) this.outage.attempts++;
    try {
      await stat(this.path); // serialport's own message for a missing path carries no code
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code ?? 'ENOENT';
      this.lastError = code === 'ENOENT' ? `${this.path} does not exist` : `${this.path}: ${code}`;
      return new SerialTransportError(
        code === 'ENOENT'
          ? `serial device ${this.path} not found (ENOENT): is it plugged in and the path right? (ls /dev/serial/by-id)`
          : `serial device ${this.path}: ${code}`,
        code,
        this.path,
      );
    }
    const port = this.openPort(this.path, this.baud);
    // An 'error' with no listener would throw; keep one for the port's whole life.
    port.on('error', (err: Error) => this.onPortTrouble(port, `error: ${err.message}`));
    const err = await new Promise<Error | null>((resolve) => port.open(resolve));
    if (err) {
      this.lastError = err.message;
      port.removeAllListeners();
      port.on('error', () => {});
      // bindings-cpp errors carry no code, only a message: name the usual causes
      const locked = /cannot lock/i.test(err.message);
      const denied = /permission denied/i.test(err.message);
      const hint = locked ? ' (another program has it open)' : denied ? ' (is this user in the dialout group?)' : '';
      return new SerialTransportError(
        `cannot open serial device ${this.path}: ${err.message}${hint}`,
        locked ? 'EBUSY' : denied ? 'EACCES' : ((err as NodeJS.ErrnoException).code ?? 'EOPEN'),
        this.path,
      );
    }
    if (this.isOver()) {
      // stop() arrived while opening
      this.port = port;
      this.watchClose(port);
      return 'ok';
    }
    this.port = port;
    this.watchClose(port);
    port.on('data', (chunk: Buffer) => this.onData(port, chunk));
    this.state = 'up';
    this.connections++;
    this.upAt_ms = this.now();
    this.lastData_ms = undefined;
    this.armWatchdog();
    const first = this.connections === 1;
    const o = this.outage;
    const info: UpInfo = {
      at_ms: this.upAt_ms,
      downFor_s: o ? (this.upAt_ms - o.start_ms) / 1000 : 0,
      attempts: o ? o.attempts : 1,
      first,
    };
    if (o) o.reopens++;
    if (o && !o.initial && !o.reported) {
      o.reported = true;
      this.emit('incident', {
        kind: 'reconnect',
        severity: 'warning',
        host_ms: this.upAt_ms,
        message: `serial device ${this.path} reconnected after ${info.downFor_s.toFixed(1)} s (${info.attempts} attempt${info.attempts === 1 ? '' : 's'})`,
        value: info.downFor_s,
        data: { path: this.path, attempts: info.attempts, down_s: info.downFor_s, reason: o.reason },
      });
    }
    this.emit('up', info);
    return 'ok';
  }

  private watchClose(port: SerialPortLike): void {
    let done!: () => void;
    this.closed = new Promise<void>((r) => (done = r));
    port.on('close', (err?: Error | null) => {
      done();
      if (port !== this.port) return;
      const d = err as (Error & { disconnected?: boolean }) | null | undefined;
      this.onPortTrouble(port, d ? `${d.disconnected ? 'disconnected' : 'closed'}: ${d.message}` : 'closed');
    });
  }

  private onData(port: SerialPortLike, chunk: Buffer): void {
    if (port !== this.port || this.state !== 'up') return;
    const t = this.now();
    this.lastData_ms = t;
    const o = this.outage;
    if (o) {
      this.outage = undefined;
      if (!o.initial) this.emitGap(o, t, false);
    }
    this.emit('data', chunk, t);
  }

  /** close, error or watchdog on the current port: all the same "down". */
  private onPortTrouble(port: SerialPortLike, reason: string): void {
    if (port !== this.port || this.state !== 'up') return;
    this.state = 'closing';
    this.clearWatchdog();
    const t = this.now();
    if (!this.outage) {
      this.outage = { start_ms: t, gapStart_ms: this.lastData_ms ?? t, reason, attempts: 0, reopens: 0, reported: false, initial: false };
      this.emit('incident', {
        kind: 'device-lost',
        severity: 'warning',
        host_ms: t,
        message: `serial device ${this.path} lost (${reason}); reconnecting`,
        data: { path: this.path, reason },
      });
    }
    this.lastError = reason;
    this.emit('down', { at_ms: t, reason });
    this.loop = this.reconnectLoop(true);
  }

  /** Wait for the lost port to finish closing, then reopen with backoff until up, stopped or given up. */
  private async reconnectLoop(closeFirst: boolean): Promise<void> {
    if (closeFirst) await this.closePort();
    // The backoff counter runs across the outage (not per reopen), so a
    // present-but-silent device tripping the watchdog is retried ever slower.
    let retry = Math.max(0, (this.outage?.attempts ?? 1) - 1);
    if (!closeFirst) {
      // waitForDevice at start: try at once
      const r = await this.attempt();
      if (r === 'ok' || this.isOver()) return;
    }
    for (;;) {
      if (this.isOver()) return;
      this.state = 'waiting';
      const deadline = this.giveUpAt_ms();
      // checked here too, so a silent device cycling through the watchdog also gives up
      if (deadline !== undefined && this.now() >= deadline) return this.giveUp();
      const present = await pathExists(this.path);
      if (this.isOver()) return; // stop() while we looked
      if (!present) {
        // A device path is not a network service: there is nothing to back off from while it
        // is absent. Watch for it and open as soon as it is back; the backoff is only for
        // opens that fail on a path that exists.
        this.lastError = `${this.path} does not exist`;
        const back = await this.waitForPath(deadline);
        if (this.isOver()) return;
        if (!back) continue; // the deadline passed: give up at the top
        this.state = 'opening';
        const r = await this.attempt();
        if (r === 'ok') {
          if (this.isOver()) await this.closePort();
          return;
        }
        continue;
      }
      let delay_ms = nextDelay(retry++, this.minDelay_s, this.maxDelay_s, this.random()) * 1000;
      // last attempt exactly at the deadline
      if (deadline !== undefined) delay_ms = Math.min(delay_ms, Math.max(0, deadline - this.now()));
      await this.sleep(delay_ms);
      if (this.isOver()) return;
      this.state = 'opening';
      const r = await this.attempt();
      if (r === 'ok') {
        if (this.isOver()) await this.closePort();
        return;
      }
    }
  }

  private isOver(): boolean {
    return this.state === 'stopped' || this.state === 'gave-up';
  }

  private giveUpAt_ms(): number | undefined {
    if (this.giveUp_s === undefined || !this.outage) return undefined;
    return this.outage.start_ms + this.giveUp_s * 1000;
  }

  private giveUp(): void {
    const o = this.outage!;
    this.state = 'gave-up';
    const err = new SerialTransportError(
      `serial device ${this.path} ${o.initial ? 'did not appear' : 'did not come back'} within ${this.giveUp_s} s (${o.attempts} attempts; last: ${this.lastError})`,
      'EGIVEUP',
      this.path,
    );
    this.emit('incident', {
      kind: 'device-lost',
      severity: 'alarm',
      host_ms: this.now(),
      message: err.message,
      value: (this.now() - o.start_ms) / 1000,
      threshold: this.giveUp_s,
      data: { path: this.path, gave_up: true, attempts: o.attempts, last_error: this.lastError },
    });
    this.flushOpenGap();
    this.emit('giveup', err);
  }

  /** Close the current port (if any) and wait until serialport has finished closing it. */
  private async closePort(): Promise<void> {
    const port = this.port;
    if (!port) return;
    const closed = this.closed ?? Promise.resolve();
    if (port.isOpen) port.close(() => {});
    // A disconnect closes the port by itself; wait for that close to finish
    // (reopening earlier can fail with "Cannot lock port"), with a safety limit.
    let limit: NodeJS.Timeout | undefined;
    await Promise.race([closed, new Promise<void>((r) => (limit = setTimeout(r, 2000)))]);
    clearTimeout(limit);
    port.removeAllListeners();
    port.on('error', () => {}); // late errors from a discarded port must not throw
    if (this.port === port) this.port = undefined;
  }

  /**
   * Wait until the device path exists again (true), or the deadline passes or
   * stop() is called (false). fs.watch on its folder wakes us at once where
   * inotify reports the change; a stat every `pathPoll_ms` covers the rest (a
   * folder that is itself gone, such as /dev/serial/by-id with no device).
   */
  private waitForPath(deadline_ms: number | undefined): Promise<boolean> {
    if (this.isOver()) return Promise.resolve(false);
    return new Promise((resolve) => {
      let done = false;
      let watcher: FSWatcher | undefined;
      let limit: NodeJS.Timeout | undefined;
      const finish = (back: boolean): void => {
        if (done) return;
        done = true;
        clearInterval(poll);
        clearTimeout(limit);
        watcher?.close();
        if (this.wake === stopWait) this.wake = undefined;
        resolve(back);
      };
      const check = (): void => {
        if (done) return;
        void pathExists(this.path).then((ok) => ok && finish(true));
      };
      const stopWait = () => finish(false);
      this.wake = stopWait;
      const poll = setInterval(check, this.pathPoll_ms);
      if (deadline_ms !== undefined) limit = setTimeout(() => finish(false), Math.max(0, deadline_ms - this.now()));
      try {
        watcher = watch(dirname(this.path), { persistent: false }, check);
        watcher.on('error', () => {
          watcher?.close();
          watcher = undefined;
        });
      } catch {
        // no such folder (yet): the poll alone
      }
      check(); // it may have come back while we looked away
    });
  }

  private sleep(ms: number): Promise<void> {
    return new Promise((resolve) => {
      this.wake = () => {
        if (this.timer) clearTimeout(this.timer);
        this.timer = undefined;
        this.wake = undefined;
        resolve();
      };
      this.timer = setTimeout(this.wake, ms);
    });
  }

  /** One timer per connection for both the no-data watchdog and the hang-up probe. */
  private armWatchdog(): void {
    const limit_ms = this.noDataTimeout_s === undefined ? undefined : this.noDataTimeout_s * 1000;
    const probe_ms = this.probe_s > 0 ? this.probe_s * 1000 : undefined;
    if (limit_ms === undefined && probe_ms === undefined) return;
    const port = this.port!;
    const every = Math.max(20, Math.min(1000, (limit_ms ?? Infinity) / 4, (probe_ms ?? Infinity) / 2));
    let lastTick = this.now();
    let lastProbe = 0;
    this.watchdog = setInterval(() => {
      const t = this.now();
      const stalled = t - lastTick > every + Math.max(100, every);
      lastTick = t;
      if (stalled || port !== this.port || this.state !== 'up') return; // let pending reads land first
      const quiet = t - (this.lastData_ms ?? this.upAt_ms);
      if (limit_ms !== undefined && quiet >= limit_ms) return this.onPortTrouble(port, `no data for ${this.noDataTimeout_s} s`);
      if (probe_ms !== undefined && quiet >= probe_ms && t - lastProbe >= probe_ms) {
        lastProbe = t;
        void this.probe(port);
      }
    }, every);
  }

  /** Is the quiet port still there? Path present and the tty answering an ioctl. */
  private async probe(port: SerialPortLike): Promise<void> {
    try {
      await stat(this.path);
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (code === 'ENOENT' || code === 'ENXIO' || code === 'ENODEV') this.onPortTrouble(port, `device path vanished (${code})`);
      return;
    }
    if (!port.get || !port.isOpen) return;
    const err = await new Promise<Error | null>((resolve) => port.get!((e) => resolve(e)));
    // ENOTTY ("Inappropriate ioctl") is normal for a pty; EIO/ENXIO mean hung up.
    if (err && /input\/output error|no such device|\bEIO\b|\bENXIO\b/i.test(err.message)) this.onPortTrouble(port, `hung up (${err.message})`);
  }

  private clearWatchdog(): void {
    if (this.watchdog) clearInterval(this.watchdog);
    this.watchdog = undefined;
  }

  private emitGap(o: Outage, end_ms: number, open: boolean): void {
    const duration_s = (end_ms - o.gapStart_ms) / 1000;
    this.emit('incident', {
      kind: 'gap',
      severity: 'warning',
      host_ms: o.gapStart_ms,
      message: open
        ? `no data from ${this.path} for the last ${duration_s.toFixed(2)} s (device still away)`
        : `no data from ${this.path} for ${duration_s.toFixed(2)} s (device away: ${o.reason})`,
      value: duration_s,
      data: { duration_s, start_ms: o.gapStart_ms, end_ms: end_ms, path: this.path, reason: o.reason, reopens: o.reopens, open },
    });
  }

  /** At stop/give-up during an outage: report the gap so far, marked open. */
  private flushOpenGap(): void {
    const o = this.outage;
    if (!o) return;
    this.outage = undefined;
    if (!o.initial) this.emitGap(o, this.now(), true);
  }
}
