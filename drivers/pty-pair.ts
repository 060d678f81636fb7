/**
 * A real pseudo-terminal pair made with socat: `<dir>/dev` is the end a
 * program opens as its serial device, `<dir>/feed` the end an instrument (the
 * simulator) writes to. Killing socat is an unplug; restarting it at the same
 * paths is the replug. Used by `demo` and by the tests.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, lstatSync, unlinkSync } from 'node:fs';
import { join } from 'node:path';

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

/** True when socat can be run here. */
export function haveSocat(): boolean {
  const r = spawnSync('socat', ['-V'], { stdio: 'ignore' });
  return r.status === 0;
}

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
  // a socat killed with SIGKILL leaves dangling links; a stale link could even
  // resolve to someone else's new /dev/pts/N before socat replaces it
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
