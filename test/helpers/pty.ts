/**
 * Real pseudo-terminal pairs for tests: socat links `<dir>/dev` (the end the
 * program opens as its serial device) to `<dir>/feed` (the end a writer
 * process plays the instrument on). Killing socat is an unplug: both paths
 * vanish and the reader sees a hang-up; starting it again at the same paths
 * is the replug.
 */
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';

// the pty pair itself lives in src (the demo uses it too)
export { startPtyPair, waitFor, type PtyPair } from '../../drivers/pty-pair.js';

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
  /** write the data lines of this file (comments skipped) instead of the test stream; count defaults to all of them */
  file?: string;
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
  /** lines skipped while the pty was away (with reopen): the instrument could not send them */
  skipped: number;
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
      let parsed: { written?: number; reopens?: number; skipped?: number; error?: string } = {};
      try {
        parsed = last.startsWith('{') ? JSON.parse(last) : {};
      } catch {
        // killed mid-line: no summary
      }
      if (code === 2 || (code !== 0 && code !== 3 && code !== null)) parsed.error ??= err.trim() || `exit ${code}`;
      resolve({ code, written: parsed.written ?? 0, reopens: parsed.reopens ?? 0, skipped: parsed.skipped ?? 0, error: parsed.error });
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
