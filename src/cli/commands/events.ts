/** `fibrewatch events RUN [--json]`: alerts and incidents with their times. */
import { getRun } from '../../../db/runs.js';
import { listEvents } from '../../../db/events-store.js';
import { RuntimeError } from '../errors.js';
import { fmt, table } from '../format.js';
import { withQueryStore } from '../store.js';

export async function eventsCommand(run: number, opts: { db?: string; json?: boolean }): Promise<void> {
  withQueryStore(opts.db, (db) => {
    if (!getRun(db, run)) throw new RuntimeError(`run ${run}: no such run in this store`);
    const evs = listEvents(db, run);
    if (opts.json) {
      process.stdout.write(JSON.stringify(evs, null, 2) + '\n');
      return;
    }
    if (!evs.length) {
      process.stderr.write(`run ${run}: no events\n`);
      return;
    }
    process.stdout.write(table(
      ['time (UTC)', 't_s', 'kind', 'state', 'level', 'value', 'limit', 'what happened'],
      evs.map((e) => [e.t.replace(/\.\d{3}Z$/, 'Z'), e.t_s.toFixed(1), e.kind, e.state ?? '', e.severity, fmt(e.value), fmt(e.threshold), e.message]),
    ));
  });
}
