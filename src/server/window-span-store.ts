/**
 * A store that lists only a run's windows within a span [from_s, to_s) (s
 * since the run's start; a window counts when it starts at or after from_s and
 * ends before to_s, as `compare --from-s --to-s` takes them), so a summary
 * that reads a whole run's windows — the swing-amplitude dependence — can be
 * asked for a span without a span option of its own.
 */
import type { ReadStore } from '../../db/read-store.js';

/** `store` with listWindows kept to [from_s, to_s) (undefined bounds: open); the store itself when both are undefined. */
export function windowSpanStore(store: ReadStore, from_s: number | undefined, to_s: number | undefined): ReadStore {
  if (from_s === undefined && to_s === undefined) return store;
  const from = from_s ?? -Infinity, to = to_s ?? Infinity;
  const listWindows: ReadStore['listWindows'] = async (run) => (await store.listWindows(run)).filter((w) => w.t_start_s >= from && w.t_end_s < to);
  return new Proxy(store, {
    get(target, prop) {
      if (prop === 'listWindows') return listWindows;
      const v = Reflect.get(target, prop, target);
      return typeof v === 'function' ? v.bind(target) : v;
    },
  });
}
