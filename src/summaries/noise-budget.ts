/**
 * The `noise` budget of one run (docs/commands.md, "noise"; docs/analysis.md,
 * "Noise budget"): the angle's noise with each window's fitted free oscillation
 * removed, referred to torque by the pendulum's response and set against the
 * thermal limit of its damping, and the Allan deviations of the windows'
 * equilibria and periods.
 *
 * One pass over the stored angle chunks (ReadStore.chunks, db/read-store.ts),
 * so memory is a few Welch segments (at most 2¹⁸ samples each) whatever the run's
 * length, plus the run's windows (a few numbers each). Windows that found no
 * swing above the noise (a balance at rest) cover their samples with nothing
 * to remove; samples under no window are left out. T₀ and Q are the
 * medians over the ok windows of the damped period and of the decay rate 1/τ
 * (a median, so a knock or a few poor windows do not move them); κ = I·(2π/T₀)²
 * with the station's inertia; the temperature is the mean of the stored temp_C
 * channel, else the station's environment.temperature_K, else 295 K, assumed.
 */
import type { ReadStore } from '../../db/read-store.js';
import { FLAG_INVALID } from '../domain/block.js';
import { RuntimeError, UsageError } from '../domain/errors.js';
import { inertiaFromParts, type InertiaPart } from '../physics/inertia.js';
import type { Damping } from '../physics/thermal.js';
import { undampedPeriod } from '../physics/torsion.js';
import { medianInterval } from '../analysis/decimate.js';
import { FIT_STATUS } from '../analysis/fit-status.js';
import { median } from '../analysis/median.js';
import { ResidualSpectrum } from '../analysis/residual-spectrum.js';
import { decayRate, SwingModel, type SwingWindow } from '../analysis/swing-model.js';
import { torqueNoise, type TorqueNoise } from '../analysis/torque-noise.js';
import { windowStability, type StabilityWindow, type WindowStability } from '../analysis/window-stability.js';

/** Temperature used when neither a temp_C channel nor the station gives one, K. */
export const ASSUMED_TEMPERATURE_K = 295;
/**
 * Longest Welch segment, samples: 3.6 h at 20 Hz, so the spectrum reaches 1.5·10⁻⁴ Hz there (and
 * lower at lower rates). A few arrays of this length are held; at 2¹⁹ a 7-day run at 20 Hz peaked
 * at 190–199 MB, at the edge of the 200 MB goal (bench/noise.ts).
 */
export const MAX_SEGMENT = 1 << 18;
/** Shortest Welch segment, samples. */
export const MIN_SEGMENT = 64;

/** Window statuses that mean "no swing above the noise": their samples need nothing removed (a balance at rest). */
const NO_SWING: ReadonlySet<string> = new Set([FIT_STATUS.noOscillation, FIT_STATUS.amplitudeBelowNoise]);

/**
 * `noise --json` (field names fixed by docs/commands.md): the torque-noise arrays and figures
 * (src/analysis/torque-noise.ts) with the span, the assumptions and the Allan deviations.
 */
export interface NoiseBudget extends TorqueNoise {
  run: number;
  /** the span analysed, s since the run's start: first sample used, and one interval after the last */
  from_s: number | null;
  to_s: number | null;
  temperature_K: number;
  temperature_assumed: boolean;
  damping: Damping;
  resonance_Hz: number | null;
  q: number | null;
  kappa_Nm_per_rad: number | null;
  allan: { equilibrium: WindowStability['equilibrium']; period: WindowStability['period'] };
}

/** The budget with what a person should be told about it. */
export interface NoiseBudgetReport {
  budget: NoiseBudget;
  /** why fields are null, and what was assumed: one line each */
  notes: string[];
  /** Welch segment length, s, and the number of segments averaged */
  segment_s: number | null;
  segments: number;
  /** window step, s (the τ₀ of the Allan deviations) */
  step_s: number | null;
}

/** Options of buildNoiseBudget: the span, s since the run's start ([from_s, to_s)). */
export interface NoiseBudgetOptions {
  from_s?: number;
  to_s?: number;
}

interface StationBits {
  pendulum?: { inertia_kg_m2?: number; parts?: InertiaPart[]; damping?: string };
  environment?: { temperature_K?: number };
  analysis?: { window_periods?: number; step_periods?: number };
}

/** The station's inertia (given, or from its parts), or null. */
function inertiaOf(cfg: StationBits | null): number | null {
  const p = cfg?.pendulum;
  if (typeof p?.inertia_kg_m2 === 'number' && p.inertia_kg_m2 > 0) return p.inertia_kg_m2;
  if (Array.isArray(p?.parts) && p.parts.length > 0) {
    try {
      return inertiaFromParts(p.parts);
    } catch {
      return null;
    }
  }
  return null;
}

/** Largest power of two L with L·Δt ≤ span/4.5 (eight half-overlapping segments fit the span), within [MIN_SEGMENT, MAX_SEGMENT]; null when too short. */
export function chooseSegment(span_s: number, dt_s: number): number | null {
  const n = Math.floor(span_s / (4.5 * dt_s));
  if (!(n >= MIN_SEGMENT)) return null;
  let L = MIN_SEGMENT;
  while (L * 2 <= n && L * 2 <= MAX_SEGMENT) L *= 2;
  return L;
}

/** Build the noise budget of a run; RuntimeError for an unknown run, UsageError for a span with no samples. */
export async function buildNoiseBudget(store: ReadStore, runId: number, opts: NoiseBudgetOptions = {}): Promise<NoiseBudgetReport> {
  const run = await store.getRun(runId);
  if (!run) throw new RuntimeError(`run ${runId}: no such run in this store`);
  const from = opts.from_s ?? -Infinity;
  const to = opts.to_s ?? Infinity;
  const cfg = run.station_config as StationBits | null;
  const notes: string[] = [];
  const damping: Damping = cfg?.pendulum?.damping === 'viscous' ? 'viscous' : 'internal';
  const I = inertiaOf(cfg);

  // windows: ok ones overlapping the span shape the swing; those centred in it give T₀, Q and the
  // Allan deviations. Only the few fields used are kept (a week has ten thousand windows).
  const swingWindows: SwingWindow[] = [];
  const inSpan: StabilityWindow[] = [];
  const periods: number[] = [], rates: number[] = [];
  for (const w of await store.listWindows(runId)) {
    if (w.t_mid_s >= from && w.t_mid_s < to) {
      inSpan.push({ t_mid_s: w.t_mid_s, status: w.status, equilibrium_rad: w.equilibrium_rad, period_s: w.period_s });
      if (w.status === 'ok' && w.period_s !== null) {
        periods.push(w.period_s);
        rates.push(decayRate(w));
      }
    }
    if (w.t_end_s < from || w.t_start_s >= to) continue;
    if (w.status === 'ok') {
      swingWindows.push({
        t_start_s: w.t_start_s, t_mid_s: w.t_mid_s, t_end_s: w.t_end_s, amplitude_rad: w.amplitude_rad,
        decay_time_s: w.decay_time_s, decay_rate_per_s: decayRate(w), period_s: w.period_s, phase_rad: w.phase_rad,
      });
    } else if (NO_SWING.has(w.status)) {
      // nothing above the noise to remove: the window's samples are taken as they are
      swingWindows.push({ t_start_s: w.t_start_s, t_mid_s: w.t_mid_s, t_end_s: w.t_end_s, amplitude_rad: 0, decay_time_s: null, period_s: 1, phase_rad: 0 });
    }
  }
  const Td = median(periods);
  const rate = median(rates);
  let T0: number | null = null;
  if (Number.isFinite(Td)) {
    try {
      T0 = undampedPeriod(Td, rate > 0 ? 1 / rate : Infinity, damping);
    } catch {
      T0 = Td;
    }
  }
  const q = T0 !== null && rate > 0 ? Math.PI / (rate * T0) : null;
  const resonance = T0 !== null ? 1 / T0 : null;
  const kappa = T0 !== null && I !== null ? I * ((2 * Math.PI) / T0) ** 2 : null;
  if (periods.length === 0) notes.push('no ok window in the span: no resonance, Q or κ from this run');
  else if (q === null) notes.push('the windows resolve no decay (median decay rate ≤ 0): Q unknown, no thermal floor');
  if (I === null) notes.push('the station gives no inertia (pendulum.inertia_kg_m2 or pendulum.parts): κ and the torque-referred fields are null');

  // temperature
  let temperature_K = ASSUMED_TEMPERATURE_K;
  let assumed = true;
  const channels = await store.listChannels(runId);
  if (channels.includes('temp_C')) {
    let s = 0, n = 0;
    for await (const c of store.chunks(runId, 'temp_C', { from_s: opts.from_s, to_s: opts.to_s })) {
      for (let i = 0; i < c.v.length; i++) if (Number.isFinite(c.v[i]) && (c.flags[i] & FLAG_INVALID) === 0) { s += c.v[i]; n++; }
    }
    if (n > 0) {
      temperature_K = s / n + 273.15;
      assumed = false;
    }
  }
  if (assumed && typeof cfg?.environment?.temperature_K === 'number') {
    temperature_K = cfg.environment.temperature_K;
    assumed = false;
  }
  if (assumed) notes.push(`no temp_C channel and no environment.temperature_K: ${ASSUMED_TEMPERATURE_K} K assumed`);

  // the sample interval, from the first chunk in the span
  let dt: number | undefined;
  let first = NaN, last = NaN;
  for await (const c of store.chunks(runId, 'angle', { from_s: opts.from_s, to_s: opts.to_s, batchChunks: 1 })) {
    if (Number.isNaN(first)) first = c.t[0];
    dt = medianInterval(c.t);
    if (dt !== undefined) break;
  }
  if (!Number.isFinite(first)) {
    if (run.samples > 0 && (opts.from_s !== undefined || opts.to_s !== undefined)) {
      const flag = opts.from_s !== undefined ? '--from-s' : '--to-s';
      throw new UsageError(`${flag}: run ${runId} has no samples in [${opts.from_s ?? 0}, ${opts.to_s ?? '∞'}) s`);
    }
    throw new RuntimeError(`run ${runId}: no angle samples stored`);
  }

  // the swing model and the Welch segment its longest unbroken stretch allows
  const swing = new SwingModel(swingWindows);
  let longest = 0;
  for (const c of swing.chainSpans()) longest = Math.max(longest, Math.min(c.end_s, to) - Math.max(c.start_s, from));
  const segment = dt !== undefined ? chooseSegment(longest, dt) : null;
  let spectrum = null;
  let segments = 0;
  if (segment !== null && dt !== undefined) {
    const rs = new ResidualSpectrum(swing, { dt_s: dt, segment });
    for await (const c of store.chunks(runId, 'angle', { from_s: opts.from_s, to_s: opts.to_s })) {
      rs.push(c.t, c.v, c.flags);
      last = c.t[c.t.length - 1];
    }
    spectrum = rs.result();
    segments = spectrum?.segments ?? 0;
  }
  if (!spectrum) {
    notes.push(`no stretch covered by windows (ok, or with no swing above the noise) is long enough for a spectrum (${MIN_SEGMENT} samples × 4.5): no angle or torque spectrum`);
  }
  const tn = spectrum
    ? torqueNoise(spectrum, { resonance_Hz: resonance, q, kappa_Nm_per_rad: kappa, inertia_kg_m2: I, temperature_K, damping })
    : { frequency_Hz: [], angle_asd_rad_per_rtHz: [], torque_asd_Nm_per_rtHz: null, thermal_torque_asd_Nm_per_rtHz: null, readout_asd_rad_per_rtHz: null, band_Hz: null, excess_over_thermal: null };
  if (spectrum && tn.thermal_torque_asd_Nm_per_rtHz && tn.band_Hz === null) notes.push('the thermal angle noise stands nowhere above the readout floor: no thermal band, no excess');
  if (!Number.isFinite(last)) {
    for await (const c of store.chunks(runId, 'angle', { from_s: opts.from_s, to_s: opts.to_s })) last = c.t[c.t.length - 1];
  }

  const st = windowStability(inSpan);
  const budget: NoiseBudget = {
    run: run.run,
    from_s: first,
    to_s: last + (dt ?? 0),
    temperature_K,
    temperature_assumed: assumed,
    damping,
    resonance_Hz: resonance,
    q,
    kappa_Nm_per_rad: kappa,
    ...tn,
    allan: { equilibrium: st.equilibrium, period: st.period },
  };
  return { budget, notes, segment_s: segment !== null && dt !== undefined ? segment * dt : null, segments, step_s: st.step_s };
}
