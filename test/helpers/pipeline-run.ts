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
  const p = analysisPipeline(blocks$, { analysis: station.analysis, derive: deriveContextFor(station) });
  const out = lastValueFrom(p.windows$.pipe(toArray()));
  const src = new SimulatorSource(sc, opts.seed ?? 1);
  const B = opts.blockSamples ?? 8192;
  while (src.remaining > 0) {
    const b = src.next(B);
    const angle = b.channels.angle_rad!;
    blocks$.next({ n: b.n, t: b.t, angle, flags: new Uint8Array(b.n), channels: {}, clock: 'device', host_ms: 0 });
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
