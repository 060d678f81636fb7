/**
 * What the one-file report carries for its charts, inlined as JSON beside the
 * client bundle: the summary, the ok windows as columns, the events (for the
 * marks), the angle as a few layers of min/max buckets — the whole run
 * coarsely, its first and last stretches finely — the noise budget, the
 * period and Q against the swing amplitude, and the comparison of the run's
 * configurations. Numbers are rounded to what a chart can show, so a week
 * stays small.
 */
import type { ShowSummary } from '../summaries/show-summary.js';
import type { NoiseBudget } from '../summaries/noise-budget.js';
import type { AmplitudeDependence } from '../summaries/amplitude-dependence.js';
import type { Comparison } from '../summaries/compare-summary.js';
import type { WindowColumns } from './window-columns.js';

/** One layer of the angle: buckets (or samples, bucket_s null) over [from_s, to_s). */
export interface TraceLayer {
  from_s: number;
  to_s: number;
  bucket_s: number | null;
  t_s: number[];
  min_rad: number[];
  max_rad: number[];
  samples: number;
}

/** The report's inline data. */
export interface ReportData {
  summary: ShowSummary;
  /** windows stored (ok or not) */
  windows: number;
  columns: WindowColumns;
  events: { t: string; t_s: number; kind: string; severity: string; state: string | null; message: string; value: number | null; threshold: number | null; data: null }[];
  trace: TraceLayer[];
  noise: NoiseBudget | null;
  /** period and Q against the swing amplitude, its per-window points thinned to every k-th (src/report/report-summaries.ts); null when no window has an amplitude and a period */
  amplitude: AmplitudeDependence | null;
  /** windows the amplitude dependence used (the points inlined may be fewer) */
  amplitude_windows: number;
  /** the run's configurations against each other; null when the run has neither a state channel nor marks */
  compare: Comparison | null;
}
