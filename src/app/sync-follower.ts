/**
 * `record --archive URL`: the archive follows the store from a worker thread
 * (src/app/sync-worker.ts). The recorder never awaits it: acquisition,
 * storage and alerts go on whatever the network does, the store holds what the
 * archive has not taken yet, and the worker catches up when the archive
 * answers again. At the end of the recording the worker gets a bounded time
 * for its last pass (the run's close); what it cannot push then, the next
 * `sync` or `record --archive` pushes.
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { SyncWorkerData, SyncWorkerMessage } from './sync-worker.js';

export interface SyncFollowerOptions extends SyncWorkerData {
  log: (line: string) => void;
  /** wait before starting a worker again after it failed, ms; default 10 000 */
  restart_ms?: number;
}

/** The worker's script: the compiled file beside this one, or its source when running from sources (tests, tsx). */
function workerScript(): { url: URL; execArgv?: string[] } {
  const js = new URL('./sync-worker.js', import.meta.url);
  if (existsSync(fileURLToPath(js))) return { url: js };
  return { url: new URL('./sync-worker.ts', import.meta.url), execArgv: ['--import', 'tsx'] };
}

/** The archive follower of one recording. */
export class SyncFollower {
  private worker: Worker | undefined;
  private finishing = false;
  private done: Promise<void> = Promise.resolve();
  private restartTimer: NodeJS.Timeout | undefined;

  private constructor(private readonly opts: SyncFollowerOptions) {}

  /** Start following; returns at once. */
  static start(opts: SyncFollowerOptions): SyncFollower {
    const f = new SyncFollower(opts);
    f.spawn();
    return f;
  }

  private spawn(): void {
    const { log, restart_ms, ...data } = this.opts;
    const script = workerScript();
    const w = new Worker(script.url, { workerData: data satisfies SyncWorkerData, execArgv: script.execArgv, stdout: false, stderr: false });
    this.worker = w;
    let finished = false;
    this.done = new Promise<void>((resolve) => {
      w.on('message', (m: SyncWorkerMessage) => {
        if (m.kind === 'log') log(m.line);
        else if (m.kind === 'done') {
          // the worker's work is over (its message port would keep it alive): end it
          finished = true;
          resolve();
          void w.terminate();
        }
      });
      w.on('error', (e) => log(`archive follower failed: ${e.message}`));
      w.on('exit', () => {
        this.worker = undefined;
        resolve();
        if (!finished && !this.finishing) {
          log(`archive follower ended unexpectedly; starting it again in ${((restart_ms ?? 10_000) / 1000).toFixed(0)} s`);
          this.restartTimer = setTimeout(() => this.spawn(), restart_ms ?? 10_000);
          // a pending restart must not keep a finished recorder alive
          this.restartTimer.unref();
        }
      });
    });
    // the worker must never keep the process alive on its own
    w.unref();
  }

  /** Ask for the last pass and wait for it at most `timeout_ms`; true when it finished in time. */
  async finish(timeout_ms = 15_000): Promise<boolean> {
    this.finishing = true;
    if (this.restartTimer) clearTimeout(this.restartTimer);
    const w = this.worker;
    if (!w) return true;
    w.postMessage('finish');
    let timer: NodeJS.Timeout | undefined;
    const inTime = await Promise.race([
      this.done.then(() => true),
      new Promise<boolean>((res) => { timer = setTimeout(() => res(false), timeout_ms); }),
    ]);
    clearTimeout(timer);
    await w.terminate();
    return inTime;
  }
}
