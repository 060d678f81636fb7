/**
 * Running the real `fibrewatch` binary (the built CLI, as a user would) from
 * tests: one-shot commands and long-running ones such as `record`.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { waitFor } from '../../drivers/pty-pair.js';

export const BIN = fileURLToPath(new URL('../../bin/fibrewatch.js', import.meta.url));

export interface CliResult {
  status: number | null;
  stdout: string;
  stderr: string;
}

/** Run a command to completion. */
export function runCli(args: string[], opts: { env?: NodeJS.ProcessEnv; input?: string; timeout_ms?: number } = {}): CliResult {
  const r = spawnSync(process.execPath, [BIN, ...args], {
    encoding: 'utf8', env: { ...process.env, ...opts.env }, input: opts.input, timeout: opts.timeout_ms ?? 120_000, maxBuffer: 1 << 28,
  });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** Run a command asynchronously (for long commands that should not block the test's event loop). */
export function runCliAsync(args: string[], opts: { env?: NodeJS.ProcessEnv } = {}): Promise<CliResult> {
  return new Promise((resolve) => {
    const child = spawn(process.execPath, [BIN, ...args], { env: { ...process.env, ...opts.env } });
    let stdout = '', stderr = '';
    child.stdout.setEncoding('utf8').on('data', (d) => (stdout += d));
    child.stderr.setEncoding('utf8').on('data', (d) => (stderr += d));
    child.once('exit', (status) => resolve({ status, stdout, stderr }));
  });
}

export interface LongRunning {
  child: ChildProcess;
  stderr(): string;
  stdout(): string;
  /** resolves with the exit code (or signal) */
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null }>;
  /** wait until stderr contains `text` */
  waitForStderr(text: string | RegExp, timeout_ms?: number): Promise<void>;
}

/** Start a long-running command (e.g. `record`). */
export function startCli(args: string[], opts: { env?: NodeJS.ProcessEnv } = {}): LongRunning {
  const child = spawn(process.execPath, [BIN, ...args], { env: { ...process.env, ...opts.env }, stdio: ['ignore', 'pipe', 'pipe'] });
  let out = '', err = '';
  child.stdout!.setEncoding('utf8').on('data', (d) => (out += d));
  child.stderr!.setEncoding('utf8').on('data', (d) => (err += d));
  const exited = new Promise<{ code: number | null; signal: NodeJS.Signals | null }>((res) => child.once('exit', (code, signal) => res({ code, signal })));
  return {
    child,
    stderr: () => err,
    stdout: () => out,
    exited,
    waitForStderr: (text, timeout_ms = 30_000) =>
      waitFor(() => (typeof text === 'string' ? err.includes(text) : text.test(err)) || child.exitCode !== null, `stderr to contain ${text} (stderr so far: ${err.slice(-500)})`, timeout_ms, 20)
        .then(() => {
          if (!(typeof text === 'string' ? err.includes(text) : text.test(err))) throw new Error(`process exited (${child.exitCode}) before printing ${text}: ${err}`);
        }),
  };
}
