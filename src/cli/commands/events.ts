/** `fibrewatch events RUN [--json]`: alerts and incidents with their times. */
import { getRun } from '../../../db/runs.js';
import type { EventListing } from '../../../db/events-store.js';
import { RuntimeError } from '../../domain/errors.js';
import { fmt, isoShort, table } from '../../display/format.js';
import { withReadStore } from '../store.js';

export async function eventsCommand(run: number, opts: { db?: string; json?: boolean }): Promise<void> {
  await withReadStore(opts.db, async (store) => {
    if (!(await store.getRun(run))) throw new RuntimeError(`run ${run}: no such run in this store`);
    const evs = await store.listEvents(run);
    if (opts.json) {
      process.stdout.write(JSON.stringify(evs, null, 2) + '\n');
      return;
    }
    if (!evs.length) {
      process.stderr.write(`run ${run}: no events\n`);
      return;
    }
    process.stdout.write(table(
      ['time (UTC)', 't_s (s)', 'kind', 'state', 'level', 'value', 'limit', 'what happened'],
      evs.map((e) => {
        const u = valueUnit(e);
        return [isoShort(e.t), e.t_s.toFixed(1), e.kind, e.state ?? '', e.severity, withUnit(e.value, u), withUnit(e.threshold, u), e.message];
      }),
    ));
  });
}

/** The unit of an event's value and threshold: the watcher's own `data.unit`, else what the kind's value counts. */
export function valueUnit(e: Pick<EventListing, 'kind' | 'data'>): string {
  const d = e.data ?? {};
  if (typeof d.unit === 'string') return d.unit;
  switch (e.kind) {
    case 'gap': return 's';
    case 'reconnect': case 'no-data': case 'clock-note': return 's';
    case 'bad-input': return 'records';
    default: return '';
  }
}

/** A value with its unit for display; rates in rad/s are shown per hour, as in `show`. */
function withUnit(x: number | null, unit: string): string {
  if (x === null) return '—';
  if (unit === 'rad/s') return `${fmt(x * 3600)} rad/h`;
  if (unit === 'fraction' || unit === '') return fmt(x);
  return `${fmt(x)} ${unit}`;
}
