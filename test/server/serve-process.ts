/**
 * `fibrewatch serve` as a user starts it: the built CLI in its own process,
 * on a real port of 127.0.0.1 (or 0.0.0.0), reading a real store.
 */
import { startCli, type LongRunning } from '../helpers/cli.js';

/** A running `serve` process. */
export interface ServeProcess {
  proc: LongRunning;
  port: number;
  /** http://127.0.0.1:PORT (whatever the host it is bound to) */
  base: string;
  /** SIGTERM and wait for the exit; resolves with the exit code */
  stop(): Promise<number | null>;
}

/** Start serve (port 0 by default: any free port) and wait until it says where it listens. */
export async function startServe(db: string, extra: string[] = [], env: NodeJS.ProcessEnv = {}): Promise<ServeProcess> {
  const args = ['serve', '--db', db, ...extra];
  if (!extra.includes('--port')) args.push('--port', '0');
  const proc = startCli(args, { env });
  await proc.waitForStderr(/serving .* at http:\/\/\S+:\d+\//, 20_000);
  const port = Number(/at http:\/\/\S+?:(\d+)\//.exec(proc.stderr())![1]);
  return {
    proc, port, base: `http://127.0.0.1:${port}`,
    async stop() {
      if (proc.child.exitCode === null && proc.child.signalCode === null) proc.child.kill('SIGTERM');
      return (await proc.exited).code;
    },
  };
}

/** GET a path as JSON with its status. */
export async function getJson(base: string, path: string, headers: Record<string, string> = {}): Promise<{ status: number; body: any; headers: Headers }> {
  const r = await fetch(base + path, { headers, redirect: 'manual' });
  const text = await r.text();
  let body: unknown = text;
  try {
    body = JSON.parse(text);
  } catch {
    // not JSON: kept as text
  }
  return { status: r.status, body, headers: r.headers };
}
