/**
 * A store that keeps the last few runs' window lists while the store is
 * unchanged (its change token): the summary, the windows answer and a fibre's
 * history all read the same ten thousand windows of a week-long run, and
 * reading them once is enough. Callers get a copy of the list.
 */
import type { ReadStore } from '../../db/read-store.js';
import type { WindowResult } from '../domain/window-result.js';

/** `store` with listWindows remembered per run (at most `runs` of them) until the change token moves. */
export function windowMemoStore(store: ReadStore, runs = 4): ReadStore {
  const kept = new Map<number, { token: number; windows: Promise<WindowResult[]> }>();
  const listWindows = async (run: number): Promise<WindowResult[]> => {
    const token = await store.changeToken();
    let e = kept.get(run);
    if (!e || e.token !== token) {
      e = { token, windows: store.listWindows(run) };
      kept.set(run, e);
      const entry = e;
      e.windows.catch(() => kept.get(run) === entry && kept.delete(run));
      if (kept.size > runs) kept.delete(kept.keys().next().value!);
    }
    return (await e.windows).slice();
  };
  // the stores are plain objects of closures (db/read-store.ts, db/pg/postgres-read-store.ts): a copy with one method replaced
  return { ...store, listWindows };
}
