/** `fibrewatch serve [--db PATH|URL] [--host H] [--port P] [--token T]`: the read-only dashboard and JSON API (docs/dashboard.md). */
import { hostname } from 'node:os';
import { RuntimeError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { checkExposure, startDashboard } from '../../server/dashboard-server.js';
import { isLoopback } from '../../server/access.js';
import { openReadStore } from '../store.js';

export async function serveCommand(opts: { db?: string; host: string; port: number; token?: string }): Promise<void> {
  const token = opts.token ?? (process.env.FIBREWATCH_TOKEN || undefined);
  // refused before the store is opened: a bad flag costs nothing
  checkExposure(opts.host, token);
  const store = await openReadStore(opts.db);
  let dash;
  try {
    dash = await startDashboard({ store, host: opts.host, port: opts.port, token });
  } catch (e) {
    await store.close();
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'EADDRINUSE') throw new RuntimeError(`--port ${opts.port}: already in use on ${opts.host} (another serve? choose another port)`);
    if (code === 'EADDRNOTAVAIL' || code === 'ENOTFOUND') throw new RuntimeError(`--host ${opts.host}: not an address of this machine`);
    if (code === 'EACCES') throw new RuntimeError(`--port ${opts.port}: not allowed for this user (ports below 1024 need privileges)`);
    throw e;
  }
  const where = isLoopback(opts.host) ? dash.url : `${dash.url} (from elsewhere: http://${hostname()}:${dash.port}/)`;
  process.stderr.write(`fibrewatch: serving ${safeText(store.label)} read-only at ${where}${token ? '; every request needs the token' : ''}; Ctrl-C stops\n`);
  void dash.readAhead.then((r) => {
    if (r) process.stderr.write(`fibrewatch: serve: read ahead ${r.runs} run${r.runs === 1 ? '' : 's'} in ${r.s.toFixed(1)} s\n`);
  });
  await new Promise<void>((resolve) => {
    const stop = () => resolve();
    for (const s of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) process.once(s, stop);
  });
  await dash.close();
  await store.close();
  process.stderr.write('fibrewatch: serve stopped\n');
}
