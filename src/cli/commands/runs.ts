/** `fibrewatch runs`: past runs, filtered by fibre, station and date span. */
import { withReadStore } from '../store.js';
import { parseDateArg } from '../../../db/runs.js';
import { UsageError } from '../../domain/errors.js';
import { duration, isoShort, table } from '../../display/format.js';

export async function runsCommand(opts: { fibre?: string; station?: string; since?: string; until?: string; db?: string; json?: boolean }): Promise<void> {
  const date = (flag: string, v?: string) => {
    if (v === undefined) return undefined;
    try {
      return parseDateArg(v);
    } catch {
      throw new UsageError(`${flag}: "${v}" is not YYYY-MM-DD or an ISO 8601 time`);
    }
  };
  const since_ms = date('--since', opts.since);
  const until_ms = date('--until', opts.until);
  if (since_ms !== undefined && until_ms !== undefined && until_ms <= since_ms) {
    throw new UsageError(`--until: ${opts.until} is not after --since ${opts.since} (the span [since, until) would be empty)`);
  }
  await withReadStore(opts.db, async (store) => {
    const rows = await store.listRuns({ fibre: opts.fibre, station: opts.station, since_ms, until_ms });
    if (opts.json) {
      process.stdout.write(JSON.stringify(rows, null, 2) + '\n');
      return;
    }
    if (!rows.length) {
      process.stderr.write('no runs match\n');
      return;
    }
    process.stdout.write(table(
      ['run', 'station', 'fibre', 'started (UTC)', 'ended (UTC)', 'length', 'status', 'samples', 'windows', 'gaps'],
      rows.map((r) => [
        String(r.run), r.station, r.fibre, isoShort(r.started_at), isoShort(r.ended_at, '(still recording)'),
        r.ended_at ? duration((Date.parse(r.ended_at) - Date.parse(r.started_at)) / 1000) : '',
        r.status, String(r.samples), String(r.windows ?? ''), String(r.gaps ?? ''),
      ]),
    ));
  });
}
