/**
 * A store whose sample chunks come with a turn of the event loop every few
 * chunks. A summary that reads a week of samples (the noise budget) then no
 * longer holds up the other requests and the live feed of the same server.
 */
import type { ReadStore } from '../../db/read-store.js';

/** Chunks between turns of the event loop. */
const CHUNKS_PER_TURN = 8;

/** `store` with chunks() that lets other work run between batches; everything else passed through. */
export function yieldingStore(store: ReadStore): ReadStore {
  async function* chunks(...args: Parameters<ReadStore['chunks']>) {
    let k = 0;
    for await (const c of store.chunks(...args)) {
      yield c;
      if (++k % CHUNKS_PER_TURN === 0) await new Promise<void>((r) => setImmediate(r));
    }
  }
  // the stores are plain objects of closures (db/read-store.ts, db/pg/postgres-read-store.ts): a copy with one method replaced
  return { ...store, chunks };
}
