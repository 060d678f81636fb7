/**
 * Where a stored run's configuration changed: the changes of its `state`
 * channel (read chunk by chunk, never as a whole) and its `mark` events.
 * The segmentation itself is src/analysis/configuration-segments.ts.
 */
import type { ReadStore } from '../../db/read-store.js';
import type { WindowResult } from '../domain/window-result.js';
import { segmentRun, type ChangePoint, type Segmentation } from '../analysis/configuration-segments.js';

/** Default settling time after a configuration change, in periods: windows that start sooner are left out. */
export const SETTLE_PERIODS = 3;

/** A run's configuration changes as stored. */
export interface RunConfigurations {
  /** state of the first sample with one; null without a state channel */
  initialState: number | null;
  /** state changes and marks, in time order */
  changes: ChangePoint[];
  stateChanges: number;
  marks: number;
  /** the last sample time of the state channel, s (null without one) */
  lastSample_s: number | null;
  /** chunks of the state channel that failed their checksum and were skipped */
  corruptChunks: number;
}

/** Read the state channel's changes and the marks of a run. */
export async function readConfigurations(store: ReadStore, run: number): Promise<RunConfigurations> {
  const out: RunConfigurations = { initialState: null, changes: [], stateChanges: 0, marks: 0, lastSample_s: null, corruptChunks: 0 };
  if ((await store.listChannels(run)).includes('state')) {
    let prev = NaN, prevT = NaN;
    // a corrupt chunk reads as NaN (masked): its stretch tells nothing, the next good sample decides
    for await (const c of store.chunks(run, 'state', { onCorrupt: () => out.corruptChunks++ })) {
      const { t, v } = c;
      for (let i = 0; i < v.length; i++) {
        const x = v[i];
        if (!Number.isFinite(x)) continue;
        if (x !== prev) {
          if (Number.isNaN(prev)) out.initialState = x;
          else { out.changes.push({ t_prev_s: prevT, t_new_s: t[i], state: x }); out.stateChanges++; }
          prev = x;
        }
        prevT = t[i];
      }
    }
    if (Number.isFinite(prevT)) out.lastSample_s = prevT;
  }
  for (const e of await store.listEvents(run, { kinds: ['mark'] })) {
    const label = typeof e.data?.label === 'string' ? e.data.label : e.message;
    out.changes.push({ t_prev_s: e.t_s, t_new_s: e.t_s, mark: label });
    out.marks++;
  }
  out.changes.sort((a, b) => a.t_new_s - b.t_new_s);
  return out;
}

/**
 * A stored run's windows sorted into its configurations' segments (state changes and marks), the
 * windows that straddle a change or start within `settlePeriods` periods after one left out.
 */
export async function segmentStoredRun(
  store: ReadStore, run: { run: number; started_at_ms: number; ended_at_ms: number | null }, windows: readonly WindowResult[], period_s: number | null, settlePeriods = SETTLE_PERIODS,
): Promise<{ segmentation: Segmentation; configurations: RunConfigurations; settle_s: number }> {
  const cfg = await readConfigurations(store, run.run);
  const settle_s = settlePeriods * (period_s ?? 0);
  const lastWindow = windows.length ? windows[windows.length - 1].t_end_s : 0;
  const end = run.ended_at_ms !== null ? Math.max((run.ended_at_ms - run.started_at_ms) / 1000, lastWindow) : Math.max(cfg.lastSample_s ?? 0, lastWindow);
  const segmentation = segmentRun(cfg.initialState, cfg.changes, windows.map((w) => ({ t_start_s: w.t_start_s, t_end_s: w.t_end_s, ok: w.status === 'ok' })), {
    // a quarter period: what the anti-alias filter lets a window's last samples feel of what follows
    settle_s, end_s: end, margin_s: (period_s ?? 0) / 4,
  });
  return { segmentation, configurations: cfg, settle_s };
}
