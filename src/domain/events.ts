/** Event kinds stored in the archive (docs/commands.md lists the fixed ones; more are allowed). */
export const EVENT_KINDS = [
  'equilibrium-drift', 'period-drift', 'no-data', 'gap', 'reconnect', 'bad-input',
  'saturation', 'amplitude-low', 'amplitude-limit',
  // our own additions
  'run-start', 'run-end', 'device-lost', 'clock-note',
  // samples whose device time could not be trusted were masked (drivers/clock-guard.ts)
  'clock-fault',
  // the store ran out of space: the run was closed as interrupted (src/app/record.ts, import-file.ts)
  'store-full',
  // faults of the program itself: a pipeline stage (or one window's analysis) threw and was restarted,
  // or a watcher threw and was restarted with its state reset; acquisition and storage went on
  'internal-error', 'watch-error',
  // a stored sample chunk failed its checksum or did not decode (fibrewatch check --mark); its samples read as invalid
  'corrupt-chunk',
  // a configuration change noted by hand (fibrewatch mark); it starts a segment for `compare`
  'mark',
] as const;
export type EventKind = (typeof EVENT_KINDS)[number];

export type Severity = 'info' | 'warning' | 'alarm';

/** Alert life-cycle state carried by watcher events (ignored for plain incidents). */
export type AlertState = 'raised' | 'updated' | 'cleared';

/**
 * An incident or alert as the drivers, pipelines and watchers report it.
 * `t` is on the same time base as the samples (seconds, device or host clock);
 * the recorder maps it to seconds since the run's start and to UTC.
 */
export interface Incident {
  kind: EventKind;
  severity: Severity;
  /** time on the samples' time base, seconds; undefined = "now" (host time) */
  t?: number;
  /** host wall time, ms since the epoch, when known */
  host_ms?: number;
  message: string;
  value?: number | null;
  threshold?: number | null;
  state?: AlertState;
  /** duration in seconds for gaps, count for bad input, etc. */
  data?: Record<string, unknown>;
}
