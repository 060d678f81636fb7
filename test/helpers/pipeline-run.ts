/**
 * Test helper: a scenario of the virtual balance straight through the
 * analysis pipeline in this process (no wire, no store), and the truth each
 * window should recover. For Monte-Carlo checks of the window results.
 */
import { Subject, lastValueFrom, toArray } from 'rxjs';
import type { AngleBlock } from '../../src/domain/block.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import { parseStation } from '../../src/config/station.js';
import { deriveContextFor } from '../../src/config/derive-context.js';
import { parseScenario, type ScenarioInput, type Scenario } from '../../drivers/simulator/scenario.js';
import { SimulatorSource } from '../../drivers/simulator/simulate.js';
import { analysisPipeline } from '../../pipelines/pipeline.js';

/** The truth of a scenario without steps, swings or creep: damped period, decay rate, equilibrium. */
export interface Truth {
  period_s: number;
  decay_rate_per_s: number;
  equilibrium_rad: number;
  /** equipartition rms angle √(k_B·T/κ), rad */
  thermal_rms_rad: number;
}

/** Truth of a plain scenario (constant κ, no creep). */
export function truthOf(sc: Scenario): Truth {
  const w0 = Math.sqrt(sc.kappa / sc.I);
  const g = w0 / (2 * sc.q);
  return {
    period_s: (2 * Math.PI) / Math.sqrt(w0 * w0 - g * g),
    decay_rate_per_s: g,
    equilibrium_rad: sc.initial.equilibrium_rad,
    thermal_rms_rad: Math.sqrt((1.380649e-23 * sc.temperature_K) / sc.kappa),
  };
}

/** Options of runPipeline. */
export interface PipelineRunOptions {
  seed?: number;
  /** analysis settings of the station (window_periods, step_periods, samples_per_period …) */
  analysis?: Record<string, unknown>;
  /** give the station the scenario's inertia (for κ and the thermal prior); default true */
  inertia?: boolean;
  /** the station knows the period (skips the first estimate); default true */
  periodGuess?: boolean;
  blockSamples?: number;
  /** the damping model the station states (default viscous, the simulator's default) */
  damping?: 'internal' | 'viscous';
}

/** Simulate `input` and analyse it as a station would; resolves with every window. */
export async function runPipeline(input: ScenarioInput, opts: PipelineRunOptions = {}): Promise<{ windows: WindowResult[]; scenario: Scenario; truth: Truth }> {
  const sc = parseScenario(input);
  const truth = truthOf(sc);
  const station = parseStation({
    station: 'mc', fibre: { name: 'mc-fibre' },
    pendulum: opts.inertia === false ? {} : { inertia_kg_m2: sc.I },
    input: { columns: ['t_s', 'angle_rad'] },
    analysis: { ...(opts.periodGuess === false ? {} : { period_guess_s: truth.period_s }), ...opts.analysis },
  });
  const blocks$ = new Subject<AngleBlock>();
  const p = analysisPipeline(blocks$, { analysis: station.analysis, derive: deriveContextFor(station), noise: { damping: opts.damping ?? 'viscous', temperature_K: sc.temperature_K } });
  const out = lastValueFrom(p.windows$.pipe(toArray()));
  const src = new SimulatorSource(sc, opts.seed ?? 1);
  const B = opts.blockSamples ?? 8192;
  while (src.remaining > 0) {
    const b = src.next(B);
    const angle = b.channels.angle_rad!;
    // a recorded temperature goes along, as a station's temp_C column would
    blocks$.next({ n: b.n, t: b.t, angle, flags: new Uint8Array(b.n), channels: b.channels.temp_C ? { temp_C: b.channels.temp_C } : {}, clock: 'device', host_ms: 0 });
  }
  blocks$.complete();
  return { windows: await out, scenario: sc, truth };
}

/** Pulls (estimate − truth)/σ of one field over windows spaced `every` apart (non-overlapping when every = window/step). */
export function pulls(ws: WindowResult[], field: 'period_s' | 'equilibrium_rad', sigma: 'period_sigma_s' | 'equilibrium_sigma_rad', truth: number, every = 1, from = 0): number[] {
  const out: number[] = [];
  for (let i = from; i < ws.length; i += every) {
    const w = ws[i];
    if (w.status !== 'ok' || w[field] === null || !(w[sigma]! > 0)) continue;
    out.push((w[field]! - truth) / w[sigma]!);
  }
  return out;
}

/** Sample standard deviation. */
export function sd(x: number[]): number {
  const m = x.reduce((a, b) => a + b, 0) / x.length;
  return Math.sqrt(x.reduce((a, b) => a + (b - m) ** 2, 0) / (x.length - 1));
}

/** One cell of the noise-regime map: a balance (T = 60 s, I = 1e-5 kg·m², 295 K, 10 Hz) at a Q, a swing in units of the thermal rms and a readout noise. */
export interface RegimeCell {
  q: number;
  /** starting amplitude over the equipartition rms √(k_B·T/κ) */
  amplitudeOverThermal: number;
  /** white readout noise, rad per sample */
  readout_rad: number;
  /** thermal torque noise on (default true) */
  thermal?: boolean;
  /** damping model of the simulator and the station (default viscous) */
  damping?: 'internal' | 'viscous';
}

/** Pull SDs of non-overlapping windows' period, decay rate and equilibrium in a cell, over enough seeds for `minPulls`. */
export async function regimePulls(cell: RegimeCell, minPulls = 150, maxSeeds = 60): Promise<{ period: number; decay: number; equilibrium: number; pulls: number; chi2_median: number }> {
  const I = 1e-5, T = 60, kappa = I * ((2 * Math.PI) / T) ** 2;
  const th = Math.sqrt((1.380649e-23 * 295) / kappa);
  const tau = (cell.q * T) / Math.PI;
  // long enough for many windows, short enough that the swing stays ≥ 30× the thermal rms
  const duration_s = Math.min(24 * 3600, tau * Math.log(Math.max(cell.amplitudeOverThermal / 30, 1.5)));
  const P: number[] = [], G: number[] = [], E: number[] = [], C: number[] = [];
  for (let seed = 1; P.length < minPulls && seed <= maxSeeds; seed++) {
    const { windows, truth } = await runPipeline({
      name: 'regime', duration_s, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: cell.q, temperature_K: 295,
      thermal_noise: cell.thermal ?? true, angle_noise_rad: cell.readout_rad, initial: { amplitude_rad: cell.amplitudeOverThermal * th },
      ...(cell.damping ? { damping: cell.damping } : {}),
    }, { seed, damping: cell.damping });
    for (let i = 0; i < windows.length; i += 4) {
      const w = windows[i];
      if (w.status !== 'ok' || w.amplitude_rad! < 30 * th) continue;
      P.push((w.period_s! - truth.period_s) / w.period_sigma_s!);
      G.push((w.decay_rate_per_s! - truth.decay_rate_per_s) / w.decay_rate_sigma_per_s!);
      E.push((w.equilibrium_rad! - truth.equilibrium_rad) / w.equilibrium_sigma_rad!);
      C.push(w.chi2_red!);
    }
  }
  C.sort((a, b) => a - b);
  return { period: sd(P), decay: sd(G), equilibrium: sd(E), pulls: P.length, chi2_median: C[C.length >> 1] };
}
