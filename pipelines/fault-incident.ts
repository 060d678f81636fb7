/**
 * The event a fault leaves in the run: `internal-error` for a pipeline stage
 * (or one window's analysis), `watch-error` for a watcher. A stage that keeps
 * failing is reported for its first ten faults, then at the 100th, 1000th, …
 * so that the events stay readable while the count stays known.
 */
import type { Incident } from '../src/domain/events.js';
import type { StageFault } from './restart-on-fault.js';

/** Faults reported one by one before only the 100th, 1000th, … are. */
const REPORT_FIRST = 10;

/** Options of faultIncident. */
export interface FaultIncidentOptions {
  kind: 'internal-error' | 'watch-error';
  /** time of the fault on the run's time base, s (undefined: "now") */
  t?: number;
  /** what happens next, appended to the message */
  consequence: string;
  /** more fields for the event's data */
  data?: Record<string, unknown>;
}

/** True for the fault counts that are reported: 1…10, 100, 1000, … */
export function isReportedFault(faults: number): boolean {
  if (faults <= REPORT_FIRST) return true;
  const e = Math.log10(faults);
  return Math.abs(e - Math.round(e)) < 1e-12;
}

/** The incident of a fault, or null when this fault count is not reported (see isReportedFault). */
export function faultIncident(f: Pick<StageFault<unknown>, 'stage' | 'message' | 'faults'>, opts: FaultIncidentOptions): Incident | null {
  if (!isReportedFault(f.faults)) return null;
  const at = opts.t !== undefined && Number.isFinite(opts.t) ? ` at t = ${opts.t.toFixed(2)} s` : '';
  const count = f.faults > 1 ? ` (fault ${f.faults} of this ${opts.kind === 'watch-error' ? 'watcher' : 'stage'}${f.faults === REPORT_FIRST ? '; from now on only the 100th, 1000th, … are reported' : ''})` : '';
  const inc: Incident = {
    kind: opts.kind,
    severity: 'warning',
    message: `${f.stage} failed${at}: ${f.message}; ${opts.consequence}${count}`,
    data: { stage: f.stage, message: f.message, faults: f.faults, ...opts.data },
  };
  if (opts.t !== undefined && Number.isFinite(opts.t)) inc.t = opts.t;
  return inc;
}
