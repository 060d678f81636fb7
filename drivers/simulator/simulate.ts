/**
 * The simulator's sample source: the balance, the detector and the
 * scenario's dropouts combined into blocks of what the device would send.
 */
import type { ValueRole } from '../../src/domain/block.js';
import { Balance } from './balance.js';
import { Rng } from '../../src/analysis/rng.js';
import type { Scenario } from './scenario.js';
import { sensorChannels } from './sensor-model.js';

/** One block of simulated samples, all arrays of length n. */
export interface SimBlock {
  /** index of the first sample in the run (sample k is at t = k/sample_rate_Hz) */
  i0: number;
  n: number;
  /** time, s since the run's start */
  t: Float64Array;
  /** true angle, rad */
  theta: Float64Array;
  /** equilibrium angle, rad */
  thetaEq: Float64Array;
  /** pendulum temperature, K */
  temperature_K: Float64Array;
  /** raw channels as the device writes them (sensor roles, temp_C, state) */
  channels: Partial<Record<ValueRole, Float64Array>>;
  /** 1 where the sample is written, 0 inside a dropout */
  keep: Uint8Array;
}

/** Default seed of a simulation when none is given. */
export const DEFAULT_SEED = 1;

/** Number of samples a run of `duration_s` has at the scenario's rate (samples at t < duration). */
export function sampleCount(sc: Scenario, duration_s = sc.duration_s): number {
  return Math.max(0, Math.ceil(duration_s * sc.sample_rate_Hz - 1e-9));
}

/** Generates a scenario's samples block by block; deterministic for a seed. */
export class SimulatorSource {
  readonly balance: Balance;
  readonly total: number;
  private readonly sensorRng: Rng;
  private readonly tempRng: Rng;
  private readonly angleRng: Rng;
  private readonly roles: string[];

  /** @param duration_s run length, s (default the scenario's) */
  constructor(readonly sc: Scenario, seed = DEFAULT_SEED, duration_s?: number) {
    // separate streams, so changing the detector leaves the pendulum's motion unchanged
    this.balance = new Balance(sc, new Rng(seed));
    this.sensorRng = new Rng(seed + 0x5bd1e995);
    this.tempRng = new Rng(seed + 0x27d4eb2f);
    this.angleRng = new Rng(seed + 0x165667b1);
    this.total = sampleCount(sc, duration_s);
    this.roles = sc.output.format === 'lines' ? sc.output.columns : sc.output.channels.map((c) => c.role);
  }

  /** Samples not yet generated. */
  get remaining(): number {
    return this.total - this.balance.index;
  }

  /** The next up to `max` samples (fewer at the end of the run; n = 0 when done). */
  next(max: number): SimBlock {
    const i0 = this.balance.index;
    const n = Math.max(0, Math.min(max, this.total - i0));
    const b = this.balance.next(n);
    let measured = b.theta;
    if (this.sc.angle_noise_rad > 0) {
      measured = new Float64Array(n);
      for (let i = 0; i < n; i++) measured[i] = b.theta[i] + this.sc.angle_noise_rad * this.angleRng.normal();
    }
    const channels = sensorChannels(measured, this.sc.sensor, this.sensorRng, this.roles);
    if (this.sc.temperature_channel) {
      const tc = new Float64Array(n);
      const sd = this.sc.temperature_channel.noise_K;
      for (let i = 0; i < n; i++) tc[i] = b.temperature_K[i] - 273.15 + (sd > 0 ? sd * this.tempRng.normal() : 0);
      channels.temp_C = tc;
    }
    if (b.state) channels.state = b.state;
    const keep = new Uint8Array(n).fill(1);
    for (const d of this.sc.dropouts) {
      const end = d.t_s + d.duration_s;
      if (n === 0 || end <= b.t[0] || d.t_s > b.t[n - 1]) continue;
      for (let i = 0; i < n; i++) if (b.t[i] >= d.t_s && b.t[i] < end) keep[i] = 0;
    }
    return { i0, n, t: b.t, theta: b.theta, thetaEq: b.thetaEq, temperature_K: b.temperature_K, channels, keep };
  }
}
