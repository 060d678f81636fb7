/**
 * A run cut into segments at its configuration changes — a change of the
 * `state` channel, or a `mark` noted by hand — and its windows sorted into
 * them. A window that holds samples from both sides of a change (straddling),
 * or that starts less than the settling time after one (the step excites the
 * pendulum, and the apparatus rings), is kept out and counted.
 *
 * Labels: with a state channel the configuration is the state (as text); a
 * mark then only cuts a segment (settling included) and is named beside it.
 * Without one, the marks' labels are the configurations, and the stretch
 * before the first mark is `start` (a mark at the run's first instant names
 * it instead).
 */

/** Where the configuration changed: between the last sample of the old one and the first of the new (the same instant for a mark). */
export interface ChangePoint {
  t_prev_s: number;
  t_new_s: number;
  /** the state from here on (a state change) */
  state?: number;
  /** the mark's label (a mark) */
  mark?: string;
}

/** One stretch of one configuration. */
export interface Segment {
  /** the configuration's label */
  label: string;
  /** index of the configuration (labels in order of first appearance) */
  config: number;
  /** first and last instant of the segment, s since the run's start */
  from_s: number;
  to_s: number;
  /** the state in force (null without a state channel) and the latest mark (null before any) */
  state: number | null;
  mark: string | null;
}

/** Why windows were kept out, by count. */
export interface Exclusions {
  /** the fit was rejected (status other than ok) */
  rejected: number;
  /** the window holds samples from both sides of a change */
  straddling: number;
  /** it starts within the settling time after a change */
  settling: number;
}

/** The segmentation of a run. */
export interface Segmentation {
  segments: Segment[];
  /** configuration labels, by index */
  labels: string[];
  /** per window: its segment, or −1 when kept out */
  segmentOf: Int32Array;
  excluded: Exclusions;
  /** where the configurations come from */
  source: 'state' | 'marks' | 'state and marks' | 'none';
}

/** A window as the segmentation needs it. */
export interface WindowSpan {
  t_start_s: number;
  t_end_s: number;
  ok: boolean;
}

/**
 * Cut the run at `changes` (any order; a state change and a mark in the same
 * interval are one change) and sort the windows (in time order) into segments.
 * `initialState` is the state of the run's first sample, or null without a
 * state channel; `end_s` the run's last sample; a window ending less than
 * `margin_s` before a change counts as straddling it.
 */
export function segmentRun(
  initialState: number | null, changes: readonly ChangePoint[], windows: readonly WindowSpan[],
  opts: { settle_s: number; end_s: number; margin_s?: number },
): Segmentation {
  // the anti-alias filter lets a window's last samples feel a little of what follows them
  const margin = opts.margin_s ?? 0;
  const cs = [...changes].sort((a, b) => a.t_new_s - b.t_new_s || a.t_prev_s - b.t_prev_s);
  // a mark that falls inside a state change's interval is the same change
  const merged: ChangePoint[] = [];
  for (const c of cs) {
    const last = merged[merged.length - 1];
    if (last && c.t_prev_s <= last.t_new_s && c.t_new_s >= last.t_prev_s) {
      merged[merged.length - 1] = {
        t_prev_s: Math.min(last.t_prev_s, c.t_prev_s), t_new_s: Math.max(last.t_new_s, c.t_new_s),
        state: c.state ?? last.state, mark: c.mark ?? last.mark,
      };
    } else merged.push({ ...c });
  }
  // a change at or before the run's first sample names the start (a mark made with the run's start time)
  let state0 = initialState, mark0: string | null = null;
  while (merged.length && merged[0].t_new_s <= 0) {
    const c = merged.shift()!;
    if (c.state !== undefined) state0 = c.state;
    if (c.mark !== undefined) mark0 = c.mark;
  }
  const hasState = state0 !== null || merged.some((c) => c.state !== undefined);
  const hasMarks = mark0 !== null || merged.some((c) => c.mark !== undefined);
  const labels: string[] = [];
  const configOf = (label: string): number => {
    let i = labels.indexOf(label);
    if (i < 0) { i = labels.length; labels.push(label); }
    return i;
  };
  const labelOf = (state: number | null, mark: string | null): string => (hasState ? (state === null ? 'unknown' : String(state)) : mark ?? (hasMarks ? 'start' : 'all'));
  const segments: Segment[] = [];
  let state = state0, mark = mark0;
  let from = 0;
  for (let k = 0; k <= merged.length; k++) {
    const c = merged[k];
    const to = c ? c.t_prev_s : opts.end_s;
    const label = labelOf(state, mark);
    segments.push({ label, config: configOf(label), from_s: from, to_s: to, state, mark });
    if (!c) break;
    if (c.state !== undefined) state = c.state;
    if (c.mark !== undefined) mark = c.mark;
    from = c.t_new_s;
  }
  // windows: the last change at or before the window's end decides
  const segmentOf = new Int32Array(windows.length).fill(-1);
  const excluded: Exclusions = { rejected: 0, straddling: 0, settling: 0 };
  let k = -1; // index in merged of the last change with t_new_s ≤ window end
  for (let i = 0; i < windows.length; i++) {
    const w = windows[i];
    while (k + 1 < merged.length && merged[k + 1].t_new_s <= w.t_end_s + margin) k++;
    if (!w.ok) { excluded.rejected++; continue; }
    const c = k >= 0 ? merged[k] : null;
    if (c && w.t_start_s <= c.t_prev_s) { excluded.straddling++; continue; }
    if (c && w.t_start_s < c.t_new_s + opts.settle_s) { excluded.settling++; continue; }
    segmentOf[i] = k + 1;
  }
  const source = hasState && hasMarks ? 'state and marks' : hasState ? 'state' : hasMarks ? 'marks' : 'none';
  return { segments, labels, segmentOf, excluded, source };
}
