/**
 * The alert as it leaves the program (stderr line, webhook body, command
 * stdin): an Incident placed on the run's time base. JSON fields follow
 * docs/commands.md `events` (`t` ISO 8601 UTC, `t_s` seconds since the run's start).
 */
import type { AlertState, EventKind, Incident, Severity } from '../domain/events.js';

/** What the dispatcher is handed: an incident with its run, station and times. */
export type AlertInput = Omit<Incident, 't'> & { run: number | string; station: string; t: string; t_s: number };

/** The JSON document every sink delivers. */
export interface AlertRecord {
  run: number | string;
  station: string;
  t: string;
  t_s: number;
  kind: EventKind;
  severity: Severity;
  state: AlertState | null;
  message: string;
  value: number | null;
  threshold: number | null;
  data: Record<string, unknown> | null;
}

/** Normalise an alert into the delivered JSON document (drops host-only fields). */
export function alertRecord(a: AlertInput): AlertRecord {
  return {
    run: a.run,
    station: a.station,
    t: a.t,
    t_s: a.t_s,
    kind: a.kind,
    severity: a.severity,
    state: a.state ?? null,
    message: a.message,
    value: a.value ?? null,
    threshold: a.threshold ?? null,
    data: a.data ?? null,
  };
}
