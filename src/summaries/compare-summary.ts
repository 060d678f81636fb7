/**
 * `fibrewatch compare RUN`: the run cut into segments at its configuration
 * changes (state channel, marks), one drift model across all of them with an
 * offset per configuration for the equilibrium and for the period, and each
 * pair of configurations against each other: Δθ, the torque κ·Δθ and the
 * period change in ppm (docs/analysis.md, "Configurations"; fields in
 * docs/commands.md, "compare").
 */
import type { ReadStore } from '../../db/read-store.js';
import { RuntimeError } from '../domain/errors.js';
import { summariseWindows } from '../analysis/run-summary.js';
import { fitConfigurations, type ConfigurationFit, type DriftModel } from '../analysis/configuration-fit.js';
import type { Exclusions } from '../analysis/configuration-segments.js';
import { segmentStoredRun } from './configurations.js';
import { summaryOptionsOf } from './summary-options.js';

/** Options of buildComparison. */
export interface CompareOptions {
  /** windows starting less than this many periods after a change are left out (default 3) */
  settlePeriods?: number;
  /** compare only the windows within [from_s, to_s), s since the run's start (default: the whole run) */
  from_s?: number;
  to_s?: number;
}

/** One segment in the output. */
export interface CompareSegment {
  label: string;
  from_s: number;
  to_s: number;
  windows: number;
  equilibrium_rad: number | null;
  equilibrium_sigma_rad: number | null;
  period_s: number | null;
  period_sigma_s: number | null;
  /** the state in force and the latest mark (null where none) */
  state: number | null;
  mark: string | null;
}

/** One pair of configurations: `to` minus `from`. */
export interface CompareDifference {
  from: string;
  to: string;
  delta_equilibrium_rad: number | null;
  delta_equilibrium_sigma_rad: number | null;
  torque_Nm: number | null;
  torque_sigma_Nm: number | null;
  delta_period_ppm: number | null;
  delta_period_sigma_ppm: number | null;
  segments_used: number;
}

/** How a fit's σ's were made. */
export interface SigmaMethod {
  /** Birge ratio of the windows about the model, and of the segments' second differences (null: too few segments) */
  birge_windows: number;
  birge_segments: number | null;
  /** Satterthwaite degrees of freedom of the segments' ratio */
  segment_dof: number;
  /** the factor applied to the overlap-scaled covariance */
  scale: number;
  /** 'segments' (the segments' second differences, widened for their degrees of freedom) or 'windows' (too few segments: the larger of the windows' ratio and the segments' own scatter) */
  from: 'segments' | 'windows';
}

/** The comparison. */
export interface Comparison {
  run: number;
  /** where the configurations come from */
  source: 'state' | 'marks' | 'state and marks' | 'none';
  settle_s: number;
  /** the span compared, s since the run's start (null: from the start, to the end) */
  from_s: number | null;
  to_s: number | null;
  segments: CompareSegment[];
  configurations: { label: string; segments: number; windows: number; equilibrium_rad: number | null; equilibrium_sigma_rad: number | null; period_s: number | null; period_sigma_s: number | null }[];
  differences: CompareDifference[];
  /** the equilibrium's drift model and χ²_red, and the period's */
  drift_model: DriftModel | null;
  chi2_red: number | null;
  period_drift_model: DriftModel | null;
  period_chi2_red: number | null;
  /** the time the configurations' levels refer to, s since the run's start */
  t_ref_s: number | null;
  /** windows used, and those kept out by reason */
  windows_used: number;
  /** windows kept out by reason; `outside_span` those outside from_s … to_s */
  excluded: Exclusions & { outside_span: number };
  sigma: { equilibrium: SigmaMethod | null; period: SigmaMethod | null };
  /** the κ the torques use (total σ, the inertia's included once); null without an inertia */
  kappa_Nm_per_rad: number | null;
  kappa_sigma_Nm_per_rad: number | null;
  /** nuisance terms fitted with the period, by name (the temperature in s/K, the amplitude in s/rad) */
  period_terms: Record<string, { value: number; sigma: number }>;
  /** one line each: what the reader should know (few segments, no inertia, …) */
  notes: string[];
}

const sigmaMethod = (f: ConfigurationFit): SigmaMethod => ({
  birge_windows: f.birge_windows, birge_segments: f.birge_segments, segment_dof: f.segment_dof, scale: f.inflation,
  from: f.birge_segments === null ? 'windows' : 'segments',
});

/** Build the comparison of a stored run; throws RuntimeError for an unknown run. */
export async function buildComparison(store: ReadStore, runId: number, opts: CompareOptions = {}): Promise<Comparison> {
  const run = await store.getRun(runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const sopts = summaryOptionsOf(run.station_config);
  const overlap = sopts.overlap ?? 1;
  const all = await store.listWindows(runId);
  // the run's κ and period from all its windows; the comparison from those in the span
  const sum = summariseWindows(all, sopts);
  const from = opts.from_s ?? -Infinity, to = opts.to_s ?? Infinity;
  const windows = all.filter((w) => w.t_start_s >= from && w.t_end_s < to);
  const { segmentation: sg, configurations: cfg, settle_s: settle } = await segmentStoredRun(store, run, windows, sum.period_s, opts.settlePeriods);
  const notes: string[] = [];
  if (cfg.corruptChunks) notes.push(`${cfg.corruptChunks} chunk(s) of the state channel failed their checksum and were skipped (fibrewatch check)`);
  if (sg.source === 'none') notes.push('no state channel and no marks: one configuration, nothing to compare (mark the changes with `fibrewatch mark`)');
  else if (sg.labels.length < 2) notes.push('only one configuration so far: nothing to compare yet');

  // the windows in the comparison
  const use = windows.map((w, i) => ({ w, s: sg.segmentOf[i] })).filter((x) => x.s >= 0);
  const temps = use.every((x) => x.w.temp_C !== null && Number.isFinite(x.w.temp_C)) && use.length > 0;
  const common = {
    t_s: use.map((x) => x.w.t_mid_s), config: use.map((x) => sg.segments[x.s].config), segment: use.map((x) => x.s),
  };
  const tempExtra = temps ? [{ name: 'temperature', values: use.map((x) => x.w.temp_C as number) }] : [];
  const eq = fitConfigurations({
    ...common, y: use.map((x) => x.w.equilibrium_rad ?? NaN), sigma: use.map((x) => x.w.equilibrium_sigma_rad ?? NaN), extras: tempExtra,
  }, { overlap, logCreep: true });
  const per = fitConfigurations({
    ...common, y: use.map((x) => x.w.period_s ?? NaN), sigma: use.map((x) => x.w.period_sigma_s ?? NaN),
    extras: [...tempExtra, { name: 'amplitude', values: use.map((x) => x.w.amplitude_rad ?? NaN) }],
  }, { overlap, tRef_s: eq?.tRef_s });
  for (const [what, f] of [['equilibrium', eq], ['period', per]] as const) {
    if (f && f.birge_segments === null && sg.labels.length > 1) {
      notes.push(`${what}: too few segments to measure the scatter at the switching time scale well; σ from the largest of the windows' scatter and the segments' own (widened for its few degrees of freedom), which correlated noise (1/f torque, drifts) can still make too small — switch back and forth more often`);
    }
  }
  const kappa = sum.kappa_Nm_per_rad, kappaSigma = sum.kappa_sigma_Nm_per_rad;
  if (kappa === null && sg.labels.length > 1) notes.push('no κ (the station gives no inertia): no torques, only Δθ');

  const num = (x: number | undefined): number | null => (x === undefined || !Number.isFinite(x) ? null : x);
  const segAll: CompareSegment[] = sg.segments.map((s, k) => ({
    label: s.label, from_s: Math.max(s.from_s, opts.from_s ?? -Infinity), to_s: Math.min(s.to_s, opts.to_s ?? Infinity),
    windows: eq?.segments[k]?.windows ?? use.filter((x) => x.s === k).length,
    equilibrium_rad: num(eq?.segments[k]?.value), equilibrium_sigma_rad: num(eq?.segments[k]?.sigma),
    period_s: num(per?.segments[k]?.value), period_sigma_s: num(per?.segments[k]?.sigma),
    state: s.state, mark: s.mark,
  }));
  // the segments that reach into the span
  const segments = segAll.filter((s) => s.to_s > s.from_s);
  const level = (f: ConfigurationFit | null, c: number) => ({ v: num(f?.levels[c]), s: num(f ? Math.sqrt(f.levelCov[c * f.levels.length + c]) : undefined) });
  const configurations = sg.labels.map((label, c) => {
    const e = level(eq, c), p = level(per, c);
    return {
      label, segments: sg.segments.filter((s, k) => s.config === c && segAll[k].windows > 0).length,
      windows: use.filter((x) => sg.segments[x.s].config === c).length,
      equilibrium_rad: e.v, equilibrium_sigma_rad: e.s, period_s: p.v, period_sigma_s: p.s,
    };
  });
  const diffVar = (f: ConfigurationFit, i: number, j: number): number => {
    const C = f.levels.length, c = f.levelCov;
    return c[i * C + i] + c[j * C + j] - 2 * c[i * C + j];
  };
  const differences: CompareDifference[] = [];
  for (let i = 0; i < sg.labels.length; i++) {
    for (let j = i + 1; j < sg.labels.length; j++) {
      // a configuration without windows in the comparison has nothing to say
      if (!configurations[i].windows || !configurations[j].windows) continue;
      let dTh: number | null = null, sTh: number | null = null, dP: number | null = null, sP: number | null = null;
      if (eq && Number.isFinite(eq.levels[i]) && Number.isFinite(eq.levels[j])) {
        dTh = eq.levels[j] - eq.levels[i];
        sTh = Math.sqrt(Math.max(diffVar(eq, i, j), 0));
      }
      if (per && Number.isFinite(per.levels[i]) && Number.isFinite(per.levels[j])) {
        const p0 = per.levels[i];
        dP = ((per.levels[j] - p0) / p0) * 1e6;
        sP = (Math.sqrt(Math.max(diffVar(per, i, j), 0)) / p0) * 1e6;
      }
      // torque = κ·Δθ; σ² = (κ·σ_Δθ)² + (Δθ·σ_κ)², σ_κ the total (the inertia's σ in it once)
      const torque = kappa !== null && dTh !== null ? kappa * dTh : null;
      const torqueSigma = torque !== null && sTh !== null ? Math.hypot(kappa! * sTh, dTh! * (kappaSigma ?? 0)) : null;
      differences.push({
        from: sg.labels[i], to: sg.labels[j],
        delta_equilibrium_rad: dTh, delta_equilibrium_sigma_rad: sTh, torque_Nm: torque, torque_sigma_Nm: torqueSigma,
        delta_period_ppm: dP, delta_period_sigma_ppm: sP,
        segments_used: configurations[i].segments + configurations[j].segments,
      });
    }
  }
  return {
    run: runId, source: sg.source, settle_s: settle, from_s: opts.from_s ?? null, to_s: opts.to_s ?? null, segments, configurations, differences,
    drift_model: eq?.model ?? null, chi2_red: eq?.chi2_red ?? null,
    period_drift_model: per?.model ?? null, period_chi2_red: per?.chi2_red ?? null,
    t_ref_s: eq?.tRef_s ?? null,
    windows_used: use.length, excluded: { ...sg.excluded, outside_span: all.length - windows.length },
    sigma: { equilibrium: eq ? sigmaMethod(eq) : null, period: per ? sigmaMethod(per) : null },
    kappa_Nm_per_rad: kappa, kappa_sigma_Nm_per_rad: kappaSigma,
    period_terms: per?.extras ?? {},
    notes,
  };
}
