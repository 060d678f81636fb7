/**
 * The simulator's detectors: true angle → the raw channels a station's
 * firmware would send (docs/physics.md, "Reading the angle"). The optical lever
 * turns the beam by 2θ, so the spot on a detector at lever arm D sits at
 * x = D·tan(2θ).
 */
import erf from '@stdlib/math-base-special-erf';
import type { ValueRole } from '../../src/domain/block.js';
import type { Rng } from '../../src/analysis/rng.js';
import type { Scenario } from './scenario.js';

/** The sensor part of a scenario. */
export type SimSensor = Scenario['sensor'];

/** Encoder count for angle θ (rad): round(θ·counts_per_rev/2π), wrapped to a signed counter of `bits` bits when given. */
export function encoderCount(theta: number, countsPerRev: number, bits?: number): number {
  const c = Math.round((theta * countsPerRev) / (2 * Math.PI));
  return bits === undefined ? c : wrapSigned(c, bits);
}

/** Wrap an integer into the two's-complement range of a `bits`-bit counter, [−2^(bits−1), 2^(bits−1)). */
export function wrapSigned(c: number, bits: number): number {
  const m = 2 ** bits;
  const half = m / 2;
  let r = (c + half) % m;
  if (r < 0) r += m;
  return r - half;
}

/**
 * Raw channels for the given true angles: angle_rad, counts, a/b (split
 * photodiode, or a PSD's two electrode currents) or x_m, as the sensor kind
 * gives. `roles` says which a PSD should write (x_m, or a and b).
 */
export function sensorChannels(theta: Float64Array, sensor: SimSensor, rng: Rng, roles: readonly string[] = []): Partial<Record<ValueRole, Float64Array>> {
  const n = theta.length;
  switch (sensor.kind) {
    case 'angle':
      return { angle_rad: Float64Array.from(theta) };
    case 'encoder': {
      const counts = new Float64Array(n);
      for (let i = 0; i < n; i++) counts[i] = encoderCount(theta[i], sensor.counts_per_rev, sensor.counter_bits);
      return { counts };
    }
    case 'split-photodiode': {
      const a = new Float64Array(n);
      const b = new Float64Array(n);
      const D = sensor.lever_arm_m;
      const w = sensor.beam_radius_m;
      const P = sensor.power;
      const edge = sensor.detector_half_size_m ?? 10 * w;
      const full = sensor.full_scale ?? Infinity;
      for (let i = 0; i < n; i++) {
        const x = D * Math.tan(2 * theta[i]);
        let ai = 0;
        let bi = 0;
        // a Gaussian spot split by the gap: fractions (1 ± erf(√2·x/w))/2; off the detector both halves go dark
        if (Math.abs(x) <= edge && Math.abs(2 * theta[i]) < Math.PI / 2) {
          const s = erf((Math.SQRT2 * x) / w);
          ai = (P * (1 + s)) / 2;
          bi = (P * (1 - s)) / 2;
        }
        if (sensor.noise > 0) {
          ai += sensor.noise * rng.normal();
          bi += sensor.noise * rng.normal();
        }
        a[i] = Math.min(full, Math.max(0, ai));
        b[i] = Math.min(full, Math.max(0, bi));
      }
      return { a, b };
    }
    case 'psd': {
      const h = sensor.half_length_m;
      const D = sensor.lever_arm_m;
      const x = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        let xi = D * Math.tan(2 * theta[i]);
        if (sensor.noise_m > 0) xi += sensor.noise_m * rng.normal();
        // the centroid cannot leave the active area: a spot beyond it reads at the end
        x[i] = Math.max(-h, Math.min(h, xi));
      }
      if (roles.includes('a') && roles.includes('b')) {
        const a = new Float64Array(n);
        const b = new Float64Array(n);
        for (let i = 0; i < n; i++) {
          a[i] = (sensor.power * (1 + x[i] / h)) / 2;
          b[i] = (sensor.power * (1 - x[i] / h)) / 2;
        }
        return roles.includes('x_m') ? { x_m: x, a, b } : { a, b };
      }
      return { x_m: x };
    }
  }
}
