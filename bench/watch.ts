/**
 * Benchmark of the drift watchers on simulated window-result series:
 * detection delay of equilibrium-drift for a creep starting at 2× the
 * threshold, detection delay of a 500 ppm period step (in windows), and the
 * false-alarm rate over quiet 7-day runs with a 100 ppm daily period swing.
 * Run: npx tsx bench/watch.ts
 *
 * The series generator is also used by the watcher tests (simulated data
 * only: a scenario of our own, not a measurement).
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { from, merge, lastValueFrom, toArray } from 'rxjs';
import { parseStation } from '../src/config/station.js';
import { importFile } from '../src/app/import-file.js';
import { openStore } from '../db/open.js';
import { listEvents } from '../db/events-store.js';
import { listWindows } from '../db/windows-store.js';
import { parseScenario, type ScenarioInput } from '../drivers/simulator/scenario.js';
import { runSimulator } from '../drivers/simulator/run-simulator.js';
import type { Incident } from '../src/domain/events.js';
import type { WindowResult } from '../src/domain/window-result.js';
import { watchEquilibrium } from '../pipelines/watch/watch-equilibrium.js';
import { watchPeriod } from '../pipelines/watch/watch-period.js';
import { Rng } from '../src/analysis/rng.js';

/** Scenario of a simulated run at the window level. */
export interface WindowSeriesOptions {
  seed: number;
  /** run length, h */
  hours: number;
  /** period, s (default 60) */
  period_s?: number;
  /** window length and step in periods (defaults 4 and 1) */
  window_periods?: number;
  /** standard uncertainty of one window's equilibrium, rad (default 1e-7) */
  eq_sigma_rad?: number;
  /** relative standard uncertainty of one window's period (default 1e-5) */
  period_sigma_rel?: number;
  /** peak-to-peak daily temperature swing, K (default 0: no temperature channel when null) */
  temp_swing_K?: number | null;
  /** period temperature coefficient, ppm/K (default 50) */
  temp_coef_ppm_per_K?: number;
  /** phase of the daily swing, rad (default 0) */
  temp_phase_rad?: number;
  /** equilibrium creep θ = a·ln(1 + (t − t0)/t_c) after t0 */
  creep?: { t0_s: number; a_rad: number; t_c_s: number } | null;
  /** linear equilibrium ramp at rate_rad_per_s from t0_s to t1_s (flat after) */
  ramp?: { t0_s: number; t1_s: number; rate_rad_per_s: number } | null;
  /** period step by ppm at t_s */
  period_step?: { t_s: number; ppm: number } | null;
  /** fraction of windows that are glitches (equilibrium off by 50 σ, period by 30 ppm; default 0) */
  outlier_fraction?: number;
}

/** Seeded uniform (u) and standard normal (n) deviates from the project's generator. */
export function makeRng(seed: number): { u: () => number; n: () => number } {
  const r = new Rng(seed);
  return { u: () => r.uniform(), n: () => r.normal() };
}

/**
 * Window results of a simulated run: one window per period, each the mean of
 * `window_periods` one-period segments, so neighbouring windows share noise
 * as overlapping fits do; the σ's reported are the windows' own.
 */
export function simulateWindowSeries(o: WindowSeriesOptions): WindowResult[] {
  const T = o.period_s ?? 60;
  const L = o.window_periods ?? 4;
  const sEq = o.eq_sigma_rad ?? 1e-7;
  const sP = o.period_sigma_rel ?? 1e-5;
  const swing = o.temp_swing_K ?? null;
  const coef = (o.temp_coef_ppm_per_K ?? 50) * 1e-6;
  const phase = o.temp_phase_rad ?? 0;
  const rnd = makeRng(o.seed);
  const nSeg = Math.floor((o.hours * 3600) / T);
  const temp = (t: number) => (swing === null ? 21 : 21 + (swing / 2) * Math.sin((2 * Math.PI * t) / 86400 + phase));
  const eqSeg = new Float64Array(nSeg);
  const pSeg = new Float64Array(nSeg);
  const tSeg = new Float64Array(nSeg);
  for (let k = 0; k < nSeg; k++) {
    const tm = (k + 0.5) * T;
    let eq = 1e-3;
    if (o.creep && tm > o.creep.t0_s) eq += o.creep.a_rad * Math.log1p((tm - o.creep.t0_s) / o.creep.t_c_s);
    if (o.ramp && tm > o.ramp.t0_s) eq += o.ramp.rate_rad_per_s * (Math.min(tm, o.ramp.t1_s) - o.ramp.t0_s);
    let rel = coef * (temp(tm) - 21);
    if (o.period_step) {
      // fraction of this segment after the step
      const f = Math.min(1, Math.max(0, ((k + 1) * T - o.period_step.t_s) / T));
      rel += f * o.period_step.ppm * 1e-6;
    }
    eqSeg[k] = eq + Math.sqrt(L) * sEq * rnd.n();
    pSeg[k] = T * (1 + rel + Math.sqrt(L) * sP * rnd.n());
    tSeg[k] = temp(tm) + 0.01 * rnd.n();
  }
  const out: WindowResult[] = [];
  const outlier = o.outlier_fraction ?? 0;
  for (let i = 0; i + L <= nSeg; i++) {
    let eq = 0, p = 0, tc = 0;
    for (let k = i; k < i + L; k++) { eq += eqSeg[k]; p += pSeg[k]; tc += tSeg[k]; }
    eq /= L; p /= L; tc /= L;
    if (outlier > 0 && rnd.u() < outlier) { eq += 50 * sEq * (rnd.u() < 0.5 ? -1 : 1); p *= 1 + 30e-6 * (rnd.u() < 0.5 ? -1 : 1); }
    out.push({
      index: i, t_start_s: i * T, t_mid_s: (i + L / 2) * T, t_end_s: (i + L) * T, samples: L * 200, status: 'ok',
      period_s: p, period_sigma_s: p * sP, decay_time_s: 3.6e4, decay_time_sigma_s: 50, decay_rate_per_s: 1 / 3.6e4, decay_rate_sigma_per_s: 50 / 3.6e4 ** 2, q: 1900, q_sigma: 3,
      amplitude_rad: 1e-3, amplitude_sigma_rad: 1e-7, equilibrium_rad: eq, equilibrium_sigma_rad: sEq,
      drift_rad_per_s: 0, drift_sigma_rad_per_s: 1e-10, phase_rad: 0, residual_rms_rad: 1e-6, chi2_red: 1,
      kappa_Nm_per_rad: null, kappa_sigma_Nm_per_rad: null, shear_modulus_Pa: null, shear_modulus_sigma_Pa: null,
      temp_C: swing === null ? null : tc,
    });
  }
  return out;
}

/** Run both drift watchers over a series; returns every incident. */
export async function runDriftWatchers(ws: WindowResult[], alerts = { equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, horizon_h: 6 }): Promise<Incident[]> {
  const src = from(ws);
  return lastValueFrom(merge(
    src.pipe(watchEquilibrium({ threshold_rad_per_hour: alerts.equilibrium_rate_rad_per_hour, horizon_h: alerts.horizon_h })),
    src.pipe(watchPeriod({ periodChange_ppm: alerts.period_change_ppm })),
  ).pipe(toArray()));
}

const quantile = (xs: number[], q: number) => {
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.floor(q * (s.length - 1) + 0.5))];
};

/** Print and return the detection delays and the false-alarm rate on simulated window series. */
export async function benchWatchWindows(opts: { runs?: number; quietRuns?: number } = {}) {
  const runs = opts.runs ?? 50;
  const quietRuns = opts.quietRuns ?? 5;
  const thr = 5e-6 / 3600;
  const t0 = Date.now();
  // creep starting at 2× the threshold (a/t_c = 2·thr, t_c = 12 h), onset 4–5 h into the run
  const creepDelays: number[] = [];
  let creepMissed = 0;
  let creepEarly = 0;
  for (let r = 0; r < runs; r++) {
    const rnd = makeRng(1000 + r);
    const onset = 4 * 3600 + rnd.u() * 3600;
    const tc = 12 * 3600;
    const ws = simulateWindowSeries({ seed: 2000 + r, hours: onset / 3600 + 3, temp_swing_K: 2, temp_phase_rad: rnd.u() * 2 * Math.PI, creep: { t0_s: onset, a_rad: 2 * thr * tc, t_c_s: tc } });
    const src = from(ws);
    const inc = await lastValueFrom(src.pipe(watchEquilibrium({ threshold_rad_per_hour: 5e-6 }), toArray()));
    const first = inc.find((i) => i.state === 'raised');
    if (!first) creepMissed++;
    else if (first.t! < onset) creepEarly++;
    else creepDelays.push(first.t! - onset);
  }
  // 500 ppm period step at a random phase within a period, 2–3 h into the run
  const stepDelays: number[] = [];
  let stepMissed = 0;
  for (let r = 0; r < runs; r++) {
    const rnd = makeRng(3000 + r);
    const tStep = 2 * 3600 + rnd.u() * 3600;
    const ws = simulateWindowSeries({ seed: 4000 + r, hours: tStep / 3600 + 1, temp_swing_K: 2, temp_phase_rad: rnd.u() * 2 * Math.PI, period_step: { t_s: tStep, ppm: 500 } });
    const inc = await lastValueFrom(from(ws).pipe(watchPeriod({ periodChange_ppm: 300 }), toArray()));
    const first = inc.find((i) => i.state === 'raised');
    const firstContaining = ws.findIndex((w) => w.t_end_s > tStep);
    if (!first) { stepMissed++; continue; }
    const idx = ws.findIndex((w) => w.t_mid_s === first.t);
    stepDelays.push(idx - firstContaining + 1); // 1 = raised on the first window containing the step
  }
  // quiet 7-day runs: no creep, no step, 100 ppm daily period swing (2 K × 50 ppm/K), 0.5 % glitch windows
  let quietAlerts = 0;
  const byKind: Record<string, number> = {};
  for (let r = 0; r < quietRuns; r++) {
    const ws = simulateWindowSeries({ seed: 5000 + r, hours: 7 * 24, temp_swing_K: 2, temp_phase_rad: r, outlier_fraction: 0.005 });
    const inc = await runDriftWatchers(ws);
    for (const i of inc) if (i.state === 'raised') { quietAlerts++; byKind[i.kind] = (byKind[i.kind] ?? 0) + 1; }
  }
  const res = {
    creep_runs: runs,
    creep_delay_median_h: creepDelays.length ? quantile(creepDelays, 0.5) / 3600 : NaN,
    creep_delay_max_h: creepDelays.length ? Math.max(...creepDelays) / 3600 : NaN,
    creep_missed_within_3h: creepMissed,
    creep_raised_before_onset: creepEarly,
    step_runs: runs,
    step_delay_median_windows: stepDelays.length ? quantile(stepDelays, 0.5) : NaN,
    step_delay_max_windows: stepDelays.length ? Math.max(...stepDelays) : NaN,
    step_missed: stepMissed,
    quiet_days: quietRuns * 7,
    false_alarms_per_day: quietAlerts / (quietRuns * 7),
    false_alarms_by_kind: byKind,
    elapsed_s: (Date.now() - t0) / 1000,
  };
  console.log('watch bench (simulated windows: T = 60 s, 4-period windows stepping 1, σ_eq = 1e-7 rad, σ_T/T = 1e-5)');
  console.log(`  equilibrium-drift, creep at 2× threshold (5 µrad/h), ${runs} runs: delay median ${res.creep_delay_median_h.toFixed(2)} h, max ${res.creep_delay_max_h.toFixed(2)} h; missed within 3 h: ${creepMissed}; raised before onset: ${creepEarly}`);
  console.log(`  period-drift, 500 ppm step (threshold 300 ppm), ${runs} runs: delay median ${res.step_delay_median_windows} windows, max ${res.step_delay_max_windows} windows (1 = the first window containing the step); missed: ${stepMissed}`);
  console.log(`  false alarms over ${res.quiet_days} quiet days (100 ppm daily period swing, 0.5 % glitch windows): ${quietAlerts} → ${res.false_alarms_per_day.toFixed(3)} per day ${JSON.stringify(byKind)}`);
  console.log(`  elapsed ${res.elapsed_s.toFixed(1)} s`);
  return res;
}

/**
 * The same figures through the real pipeline: the quiet-week balance
 * (429 s period, 1 Hz, thermal and readout noise, ±100 ppm daily period swing)
 * simulated into a file and imported (decoder → store → clean → condition →
 * window → fit → watchers), a few runs each.
 */
export async function benchWatchPipeline(opts: { runs?: number; quietWeeks?: number; thermalWeeks?: number } = {}) {
  const runs = opts.runs ?? 4;
  const quietWeeks = opts.quietWeeks ?? 2;
  const thr = 5e-6 / 3600;
  const t0 = Date.now();
  const dir = mkdtempSync(join(tmpdir(), 'fw-bench-watch-'));
  const base = JSON.parse(readFileSync(fileURLToPath(new URL('../drivers/simulator/scenarios/quiet-week.json', import.meta.url)), 'utf8')) as ScenarioInput;
  const station = parseStation({
    station: 'bench-watch', fibre: { name: 'W25-demo-03', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 },
    pendulum: { inertia_kg_m2: 3.6e-5 }, input: { format: 'lines', columns: ['t_s', 'angle_rad', 'temp_C'] },
    sensor: { kind: 'angle' }, analysis: { window_periods: 4, step_periods: 1 },
    alerts: { equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, stderr: false },
  });
  let n = 0;
  const oneRun = async (sc: ScenarioInput, seed: number, st = station) => {
    const file = join(dir, `run-${n}.csv`);
    const db = openStore(join(dir, `run-${n++}.db`));
    try {
      await runSimulator({ scenario: parseScenario(sc), out: file, speed: 0, seed });
      const { runId } = await importFile(db, st, file, { startedAt_ms: Date.UTC(2026, 0, 5) });
      return { events: listEvents(db, runId), windows: listWindows(db, runId) };
    } finally {
      db.close();
      rmSync(file, { force: true });
    }
  };
  const creepDelays: number[] = [];
  let creepMissed = 0;
  const stepDelays: number[] = [];
  let stepMissed = 0;
  let eqSigma = 0, eqN = 0, pSigma = 0;
  try {
    for (let r = 0; r < runs; r++) {
      const rnd = makeRng(7000 + r);
      const start = 8 * 3600 + rnd.u() * 3600;
      const tc = 12 * 3600;
      const c = await oneRun({ ...base, name: `creep-${r}`, duration_s: start + 4 * 3600, dropouts: [], creep: { a_rad: 2 * thr * tc, tc_s: tc, start_s: start } }, 100 + r);
      const raised = c.events.find((e) => e.kind === 'equilibrium-drift' && e.state === 'raised');
      if (!raised || raised.t_s < start) creepMissed++;
      else creepDelays.push(raised.t_s - start);
      for (const w of c.windows) if (w.status === 'ok' && w.equilibrium_sigma_rad !== null) { eqSigma += w.equilibrium_sigma_rad; pSigma += w.period_sigma_s! / w.period_s!; eqN++; }
      const tStep = 8 * 3600 + rnd.u() * 429;
      const p = await oneRun({ ...base, name: `step-${r}`, duration_s: tStep + 2 * 3600, dropouts: [], period_steps: [{ t_s: tStep, ppm: 500 }] }, 200 + r);
      const sr = p.events.find((e) => e.kind === 'period-drift' && e.state === 'raised');
      const first = p.windows.findIndex((w) => w.t_end_s > tStep);
      const at = sr ? p.windows.findIndex((w) => Math.abs(w.t_mid_s - sr.t_s) < 1e-6) : -1;
      if (at < first || at < 0) stepMissed++;
      else stepDelays.push(at - first + 1);
    }
    let quietAlerts = 0;
    for (let r = 0; r < quietWeeks; r++) {
      const q = await oneRun({ ...base, name: `quiet-${r}` }, 300 + r);
      quietAlerts += q.events.filter((e) => (e.kind === 'equilibrium-drift' || e.kind === 'period-drift') && e.state === 'raised').length;
    }
    // a thermal-noise-limited balance (T ≈ 60 s, Q 2000, readout 1e-8 rad, 10 Hz), where the window σ's are
    // dominated by the thermally driven phase walk: the watchers must not read that walk as drift
    let thermalAlerts = 0;
    const thermalWeeks = opts.thermalWeeks ?? 2;
    const I = 1e-5;
    const thermalBase: ScenarioInput = {
      name: 'thermal-limited', duration_s: 7 * 86400, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: I * (2 * Math.PI / 60) ** 2,
      q: 2000, temperature_K: 295, thermal_noise: true, angle_noise_rad: 1e-8, initial: { amplitude_rad: 2e-3 },
      output: { format: 'lines', columns: ['t_s', 'angle_rad'] },
    };
    const thermalStation = parseStation({ ...JSON.parse(JSON.stringify(station)), station: 'bench-thermal', pendulum: { inertia_kg_m2: I }, input: { format: 'lines', columns: ['t_s', 'angle_rad'] } });
    let thermalPullSd = NaN;
    for (let r = 0; r < thermalWeeks; r++) {
      const q = await oneRun({ ...thermalBase, name: `thermal-${r}` }, 400 + r, thermalStation);
      thermalAlerts += q.events.filter((e) => (e.kind === 'equilibrium-drift' || e.kind === 'period-drift') && e.state === 'raised').length;
      if (r === 0) {
        const T = 2 * Math.PI / Math.sqrt((I * (2 * Math.PI / 60) ** 2) / I - (Math.PI / (60 * 2000)) ** 2);
        const p: number[] = [];
        for (let i = 0; i < q.windows.length; i += 4) { const w = q.windows[i]; if (w.status === 'ok') p.push((w.period_s! - T) / w.period_sigma_s!); }
        const m = p.reduce((a, b) => a + b, 0) / p.length;
        thermalPullSd = Math.sqrt(p.reduce((a, b) => a + (b - m) ** 2, 0) / (p.length - 1));
      }
    }
    const res = {
      runs,
      window_equilibrium_sigma_rad: eqSigma / eqN,
      window_period_sigma_rel: pSigma / eqN,
      creep_delay_median_h: creepDelays.length ? quantile(creepDelays, 0.5) / 3600 : NaN,
      creep_delay_max_h: creepDelays.length ? Math.max(...creepDelays) / 3600 : NaN,
      creep_missed: creepMissed,
      step_delay_median_windows: stepDelays.length ? quantile(stepDelays, 0.5) : NaN,
      step_delay_max_windows: stepDelays.length ? Math.max(...stepDelays) : NaN,
      step_missed: stepMissed,
      quiet_days: quietWeeks * 7,
      false_alarms_per_day: quietAlerts / (quietWeeks * 7),
      thermal_quiet_days: thermalWeeks * 7,
      thermal_false_alarms_per_day: thermalAlerts / (thermalWeeks * 7),
      thermal_period_pull_sd: thermalPullSd,
      elapsed_s: (Date.now() - t0) / 1000,
    };
    console.log(`watch bench through the pipeline (quiet-week balance: T ≈ 429 s, 1 Hz; mean window σ_eq = ${res.window_equilibrium_sigma_rad.toExponential(2)} rad, σ_T/T = ${res.window_period_sigma_rel.toExponential(2)})`);
    console.log(`  equilibrium-drift, creep at 2× threshold, ${runs} runs: delay median ${res.creep_delay_median_h.toFixed(2)} h, max ${res.creep_delay_max_h.toFixed(2)} h; missed: ${creepMissed}`);
    console.log(`  period-drift, 500 ppm step, ${runs} runs: delay median ${res.step_delay_median_windows} windows, max ${res.step_delay_max_windows} windows; missed: ${stepMissed}`);
    console.log(`  false drift alarms over ${res.quiet_days} quiet days: ${quietAlerts} → ${res.false_alarms_per_day.toFixed(3)} per day`);
    console.log(`  thermal-noise-limited balance (T 60 s, Q 2000, readout 1e-8 rad): false drift alarms over ${res.thermal_quiet_days} quiet days: ${thermalAlerts}; period pulls SD ${thermalPullSd.toFixed(2)}`);
    console.log(`  elapsed ${res.elapsed_s.toFixed(1)} s`);
    return res;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

/** Both figure sets (`npm run bench -- watch`): window series, then the real pipeline (keys prefixed pipeline_). */
export async function benchWatch() {
  const w = await benchWatchWindows();
  const p = await benchWatchPipeline();
  return { ...w, ...Object.fromEntries(Object.entries(p).map(([k, v]) => [`pipeline_${k}`, v])) };
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  benchWatch().catch((e) => { console.error(e); process.exit(1); });
}
