/**
 * Real pseudo-terminal pairs for tests: socat links `<dir>/dev` (the end the
 * program opens as its serial device) to `<dir>/feed` (the end a writer
 * process plays the instrument on). Killing socat is an unplug: both paths
 * vanish and the reader sees a hang-up; starting it again at the same paths
 * is the replug.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, lstatSync, unlinkSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export interface PtyPair {
  /** path the code under test opens (a symlink to /dev/pts/N) */
  devicePath: string;
  /** path the writer process writes to */
  feedPath: string;
  /** socat's pid */
  pid: number;
  /** kill socat (SIGTERM, SIGKILL after 2 s) and wait until it has exited */
  stop(): Promise<void>;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/** Poll `cond` every `every_ms` until true; reject after `timeout_ms` naming `what`. */
export async function waitFor(cond: () => boolean, what: string, timeout_ms = 10_000, every_ms = 10): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeout_ms) throw new Error(`timed out after ${timeout_ms} ms waiting for ${what}`);
    await sleep(every_ms);
  }
}

function removeStaleLink(p: string): void {
  try {
    if (lstatSync(p).isSymbolicLink()) unlinkSync(p);
  } catch {
    // absent: nothing to remove
  }
}

function waitExit(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve();
  return new Promise((resolve) => child.once('exit', () => resolve()));
}

/** Start `socat` with a pty pair linked at `<dir>/dev` and `<dir>/feed`; resolves once both links resolve and socat is transferring. */
export async function startPtyPair(dir: string, timeout_ms = 10_000): Promise<PtyPair> {
  const devicePath = join(dir, 'dev');
  const feedPath = join(dir, 'feed');
  // A socat killed with SIGKILL leaves dangling links; a stale link could even
  // resolve to someone else's new /dev/pts/N before socat replaces it.
  removeStaleLink(devicePath);
  removeStaleLink(feedPath);
  const child = spawn('socat', ['-d', '-d', `pty,raw,echo=0,link=${devicePath}`, `pty,raw,echo=0,link=${feedPath}`], {
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  let log = '';
  let transferring = false;
  child.stderr!.setEncoding('utf8');
  child.stderr!.on('data', (d: string) => {
    log = (log + d).slice(-4000);
    if (d.includes('starting data transfer loop')) transferring = true;
  });
  let spawnError: Error | undefined;
  child.once('error', (e) => (spawnError = e));
  try {
    await waitFor(
      () => {
        if (spawnError) throw new Error(`cannot start socat: ${spawnError.message}`);
        if (child.exitCode !== null) throw new Error(`socat exited with ${child.exitCode}: ${log}`);
        return transferring && existsSync(devicePath) && existsSync(feedPath);
      },
      `socat pty pair at ${dir}`,
      timeout_ms,
    );
  } catch (e) {
    child.kill('SIGKILL');
    throw e;
  }
  return {
    devicePath,
    feedPath,
    pid: child.pid!,
    async stop() {
      if (child.exitCode !== null || child.signalCode !== null) return;
      const exited = waitExit(child);
      child.kill('SIGTERM');
      const timer = setTimeout(() => child.kill('SIGKILL'), 2000);
      await exited;
      clearTimeout(timer);
      removeStaleLink(devicePath);
      removeStaleLink(feedPath);
    },
  };
}

/** Line `i` of the writer's test stream (must match test/helpers/pty-writer.mjs). */
export function writerLine(i: number): string {
  return `${i},${((i * 7919) % 10007) / 10007}\n`;
}

export interface WriterSpec {
  /** first line index, default 0 */
  start?: number;
  /** lines to write; default: until the pty goes away */
  count?: number;
  /** lines per second; 0 (default) = as fast as the pty takes them */
  rate_per_s?: number;
  /** open the feed, report ready, then wait for go() before writing; default false */
  waitGo?: boolean;
  /** raw bytes to write instead of lines */
  bytes?: Buffer;
  /** how long to wait for the feed path to appear, seconds; default 10 */
  waitPath_s?: number;
  /** survive the pty going away: wait for the path to return and carry on, skipping the lines due meanwhile; default false */
  reopen?: boolean;
}

export interface WriterResult {
  /** exit code: 0 done, 3 the pty went away, 2 bad usage */
  code: number | null;
  /** lines (or bytes, for `bytes`) done: indexes start…start+written−1 were written (or skipped while away, with reopen) */
  written: number;
  /** times the feed was reopened after the pty came back */
  reopens: number;
  error?: string;
}

export interface Writer {
  /** resolves once the writer has the feed open */
  ready: Promise<void>;
  /** start writing (with waitGo) */
  go(): void;
  /** ask the writer to stop after its current batch; resolves with its result */
  finish(): Promise<WriterResult>;
  /** resolves when the writer exits */
  done: Promise<WriterResult>;
  /** kill the writer and wait for it */
  stop(): Promise<void>;
}

const WRITER_SCRIPT = fileURLToPath(new URL('./pty-writer.mjs', import.meta.url));

/** Spawn a separate node process that writes test lines (or bytes) into `feedPath`. */
export function writerProcess(feedPath: string, spec: WriterSpec = {}): Writer {
  const { bytes, ...rest } = spec;
  const json = JSON.stringify(bytes ? { ...rest, bytes_b64: bytes.toString('base64') } : rest);
  const child = spawn(process.execPath, [WRITER_SCRIPT, feedPath, json], { stdio: ['pipe', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  let markReady!: () => void;
  const ready = new Promise<void>((r) => (markReady = r));
  child.stdout!.setEncoding('utf8');
  child.stdout!.on('data', (d: string) => {
    out += d;
    if (out.includes('ready\n')) markReady();
  });
  child.stderr!.setEncoding('utf8');
  child.stderr!.on('data', (d: string) => (err = (err + d).slice(-4000)));
  child.stdin!.on('error', () => {}); // writer gone before go(): reported through `done`
  const done = new Promise<WriterResult>((resolve) => {
    child.once('exit', (code) => {
      const last = out.trim().split('\n').pop() ?? '';
      let parsed: { written?: number; reopens?: number; error?: string } = {};
      try {
        parsed = last.startsWith('{') ? JSON.parse(last) : {};
      } catch {
        // killed mid-line: no summary
      }
      if (code === 2 || (code !== 0 && code !== 3 && code !== null)) parsed.error ??= err.trim() || `exit ${code}`;
      resolve({ code, written: parsed.written ?? 0, reopens: parsed.reopens ?? 0, error: parsed.error });
    });
  });
  return {
    ready: Promise.race([ready, done.then((r) => Promise.reject(new Error(`writer exited before ready: ${r.error ?? r.code}`)))]),
    go() {
      child.stdin!.write('go\n');
    },
    finish() {
      child.stdin!.write('stop\n');
      return done;
    },
    done,
    async stop() {
      if (child.exitCode === null && child.signalCode === null) {
        child.kill('SIGTERM');
        await done;
      }
    },
  };
}
