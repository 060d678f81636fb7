/**
 * A run's angle for charts: min and max per bucket over any time range, so a
 * week at 20 Hz (12 M samples) draws at a few thousand points and still shows
 * every swing's extremes.
 *
 * One pass over the stored angle chunks fills a fine grid (cells of about 64
 * sample intervals, a power of two seconds, at most MAX_CELLS of them: cells
 * double in width when a run outgrows that). A range at least one cell per
 * bucket is answered from the grid (merged m cells to a bucket: exact min/max
 * on buckets aligned to the cells); a narrower range is read from its chunks
 * and bucketed exactly as asked; a range with no more samples than buckets
 * comes back as the samples themselves. Later calls read only what was stored
 * since (the last cell is dropped and read again), so a live run costs one
 * short read per update.
 */
import type { ReadStore } from '../../db/read-store.js';
import { MinMaxBuckets } from '../analysis/min-max-buckets.js';
import { FLAG_INVALID } from '../domain/block.js';

/** Most cells a grid keeps before doubling their width (16 MB of typed arrays at most). */
const MAX_CELLS = 1 << 19;
/** Sample intervals per cell, rounded to a power of two seconds. */
const SAMPLES_PER_CELL = 64;
/** Chunks read between turns of the event loop, so a server stays responsive while a long run is read. */
const CHUNKS_PER_TURN = 8;

/** `GET /api/runs/:run/samples`: min/max per bucket (or the samples themselves, min = max). */
export interface TraceAnswer {
  /** bucket centres (or sample times), s since the run's start */
  t_s: number[];
  min_rad: number[];
  max_rad: number[];
  /** bucket width, s; null when these are the samples themselves */
  bucket_s: number | null;
  /** the range covered (widened to bucket edges when answered from the grid), s since the run's start; null when empty */
  from_s: number | null;
  to_s: number | null;
  /** samples summarised */
  samples: number;
}

/** Let the event loop run (other requests, the live feed) between batches of chunks. */
const breathe = (): Promise<void> => new Promise((r) => setImmediate(r));

/** One run's angle trace, kept up to date with the store. */
export class AngleTrace {
  private grid: MinMaxBuckets | undefined;
  private updating: Promise<void> | undefined;

  constructor(private readonly store: ReadStore, readonly run: number) {}

  /** Memory held by the grid, bytes. */
  get bytes(): number {
    return this.grid?.bytes ?? 0;
  }

  /** Bring the grid up to what the store holds; concurrent calls share one read. */
  update(): Promise<void> {
    this.updating ??= this.read().finally(() => (this.updating = undefined));
    return this.updating;
  }

  private async read(): Promise<void> {
    if (!this.grid) {
      const cell = await this.cellWidth();
      if (cell === undefined) return; // no samples yet
      this.grid = new MinMaxBuckets(0, cell);
    }
    let g: MinMaxBuckets = this.grid;
    // the last cell may have been partial: drop it and read from its start again
    const resume_s = g.length > 0 ? g.origin_s + (g.length - 1) * g.width_s : undefined;
    if (resume_s !== undefined) g.truncate(g.length - 1);
    let k = 0;
    // a chunk that fails its checksum comes masked (invalid, left out): a hole in the trace, as in `export`
    for await (const c of this.store.chunks(this.run, 'angle', { from_s: resume_s, onCorrupt: () => {} })) {
      g.add(c.t, c.v, c.flags);
      if (g.length > MAX_CELLS) g = g.coarsen(2);
      if (++k % CHUNKS_PER_TURN === 0) await breathe();
    }
    this.grid = g;
  }

  /** Cell width from the first chunk's sample interval (undefined when nothing is stored yet). */
  private async cellWidth(): Promise<number | undefined> {
    for await (const c of this.store.chunks(this.run, 'angle', { onCorrupt: () => {} })) {
      const n = c.t.length;
      if (n < 2) continue;
      const dt = (c.t[n - 1] - c.t[0]) / (n - 1);
      if (!(dt > 0)) continue;
      return 2 ** Math.max(-10, Math.round(Math.log2(SAMPLES_PER_CELL * dt)));
    }
    return undefined;
  }

  /**
   * Min/max per bucket over [from_s, to_s) (defaults: the run's start, the end of
   * what is stored), at most `points` buckets; call update() first for fresh data.
   */
  async query(from_s: number | undefined, to_s: number | undefined, points: number): Promise<TraceAnswer> {
    const g = this.grid;
    const empty: TraceAnswer = { t_s: [], min_rad: [], max_rad: [], bucket_s: null, from_s: null, to_s: null, samples: 0 };
    if (!g || g.length === 0) return empty;
    const from = from_s ?? 0;
    const to = to_s ?? g.origin_s + g.length * g.width_s;
    if (!(to > from)) return empty;
    const width = (to - from) / points;
    // from the grid when a bucket spans at least one cell and the range is not sparse
    if (width >= g.width_s && g.countIn(from, to) > 4 * points) {
      const m = g.merge(from, to, points);
      const s = m.series();
      return {
        t_s: s.t_s, min_rad: s.min, max_rad: s.max, bucket_s: m.width_s,
        from_s: m.origin_s, to_s: m.origin_s + m.length * m.width_s, samples: s.count.reduce((a, b) => a + b, 0),
      };
    }
    return this.readRange(from, to, points);
  }

  /** Read [from, to) from its chunks: the samples themselves when no more than `points`, else exact buckets. */
  private async readRange(from: number, to: number, points: number): Promise<TraceAnswer> {
    const width = (to - from) / points;
    const b = new MinMaxBuckets(from, width, points);
    const rawT: number[] = [], rawV: number[] = [];
    let raw = true, k = 0;
    for await (const c of this.store.chunks(this.run, 'angle', { from_s: from, to_s: to, onCorrupt: () => {} })) {
      b.add(c.t, c.v, c.flags, to);
      if (raw) {
        for (let i = 0; i < c.t.length; i++) {
          if (!Number.isFinite(c.v[i]) || c.flags[i] & FLAG_INVALID) continue;
          rawT.push(c.t[i]);
          rawV.push(c.v[i]);
        }
        if (rawT.length > points) raw = false;
      }
      if (++k % CHUNKS_PER_TURN === 0) await breathe();
    }
    if (raw) return { t_s: rawT, min_rad: rawV, max_rad: rawV.slice(), bucket_s: null, from_s: from, to_s: to, samples: rawT.length };
    const s = b.series();
    return { t_s: s.t_s, min_rad: s.min, max_rad: s.max, bucket_s: width, from_s: from, to_s: to, samples: s.count.reduce((a, x) => a + x, 0) };
  }
}
