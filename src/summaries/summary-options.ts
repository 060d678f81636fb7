/** What a run's summaries read from the station stored with it: the overlap of its windows, the nominal context, the systematic σ's. */
import type { RunSummaryOptions } from '../analysis/run-summary.js';
import { parseStation, type Station } from '../config/station.js';
import { deriveContextFor, systematicsFor, temperatureFor } from '../config/derive-context.js';

/** window_periods / step_periods of the station a run was recorded with (4, the default, when unknown). */
export function overlapOf(stationConfig: unknown): number {
  const a = (stationConfig as { analysis?: { window_periods?: number; step_periods?: number } } | null)?.analysis;
  return a && a.window_periods && a.step_periods ? a.window_periods / a.step_periods : 4;
}

/** The station a run was recorded with, as stored with it; null when there is none or it no longer validates. */
export function storedStation(stationConfig: unknown): Station | null {
  if (stationConfig === null || typeof stationConfig !== 'object') return null;
  try {
    return parseStation(stationConfig, 'stored station');
  } catch {
    return null;
  }
}

/** Overlap, nominal context and systematic σ's of a run, from the station stored with it. */
export function summaryOptionsOf(stationConfig: unknown): RunSummaryOptions & { temperatureAssumed?: boolean } {
  const st = storedStation(stationConfig);
  if (!st) return { overlap: overlapOf(stationConfig) };
  const T = temperatureFor(st);
  return {
    overlap: st.analysis.window_periods / st.analysis.step_periods, context: deriveContextFor(st), systematics: systematicsFor(st),
    temperature_K: T.temperature_K, temperatureAssumed: T.assumed,
  };
}
