/** Test helper: a whole simulated run into arrays, the samples lost in dropouts removed. */
import type { ValueRole } from '../../src/domain/block.js';
import type { Scenario } from '../../drivers/simulator/scenario.js';
import { DEFAULT_SEED, SimulatorSource } from '../../drivers/simulator/simulate.js';

/** A whole simulated run, dropout samples removed. */
export interface SimArrays {
  /** run-wide sample index of each sample */
  index: Float64Array;
  /** time, s since the run's start */
  t: Float64Array;
  /** true angle, rad */
  theta: Float64Array;
  /** equilibrium angle, rad */
  thetaEq: Float64Array;
  /** pendulum temperature, K */
  temperature_K: Float64Array;
  /** raw channels as written to the wire (before encoding) */
  channels: Partial<Record<ValueRole, Float64Array>>;
}

/** Run a scenario into arrays: true angle, time and raw channels, without the samples lost in dropouts. */
export function simulateToArrays(sc: Scenario, seed = DEFAULT_SEED, duration_s?: number): SimArrays {
  const src = new SimulatorSource(sc, seed, duration_s);
  const b = src.next(src.total);
  let m = 0;
  for (let i = 0; i < b.n; i++) m += b.keep[i];
  const pick = (a: Float64Array): Float64Array => {
    if (m === b.n) return a;
    const o = new Float64Array(m);
    for (let i = 0, j = 0; i < b.n; i++) if (b.keep[i]) o[j++] = a[i];
    return o;
  };
  const index = new Float64Array(b.n);
  for (let i = 0; i < b.n; i++) index[i] = b.i0 + i;
  const channels: Partial<Record<ValueRole, Float64Array>> = {};
  for (const [k, v] of Object.entries(b.channels) as [ValueRole, Float64Array][]) channels[k] = pick(v);
  return { index: pick(index), t: pick(b.t), theta: pick(b.theta), thetaEq: pick(b.thetaEq), temperature_K: pick(b.temperature_K), channels };
}
