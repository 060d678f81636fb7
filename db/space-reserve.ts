/**
 * A little disk space held back beside a store while a run is written, so
 * that a full disk still leaves room to close the run: the writer deletes the
 * reserve when a write fails for want of space, then stores the run's end and
 * its store-full event. (A reserve file is the usual way to keep the last
 * writes possible on a full filesystem; common practice, no source.)
 */
import { rmSync, writeFileSync } from 'node:fs';

/** Enough for the WAL frames of the closing transaction (a few pages of 4 KiB) with a margin. */
export const RESERVE_BYTES = 128 * 1024;

/** A held reserve: `release()` frees it (true if there was one); called on a full disk and at the end of a run. */
export interface SpaceReserve {
  release(): boolean;
}

/**
 * Hold `bytes` beside the store file `dbPath`, in a file named for the run
 * (several imports may write one store at once); nothing for an in-memory
 * store, or when the disk has no room already.
 */
export function holdReserve(dbPath: string, run: number, bytes = RESERVE_BYTES): SpaceReserve {
  const path = dbPath && dbPath !== ':memory:' ? `${dbPath}-reserve-run${run}` : null;
  let held = false;
  if (path) {
    try {
      // zeros written out (not a sparse file), so the blocks are really taken
      writeFileSync(path, Buffer.alloc(bytes));
      held = true;
    } catch {
      rmSync(path, { force: true });
    }
  }
  return {
    release() {
      if (!held || !path) return false;
      held = false;
      rmSync(path, { force: true });
      return true;
    },
  };
}
