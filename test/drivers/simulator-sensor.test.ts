import { describe, expect, it } from 'vitest';
import { Rng } from '../../src/analysis/rng.js';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { encoderCount, sensorChannels, wrapSigned } from '../../drivers/simulator/sensor-model.js';
import { Unwrapper } from '../../drivers/unwrap.js';
import { beamHalves } from '../helpers/gaussian-beam.js';

const sensorOf = (sensor: Record<string, unknown>, columns?: string[]) => parseScenario({
  name: 's', duration_s: 1, sample_rate_Hz: 1, inertia_kg_m2: 1, kappa_Nm_per_rad: 1, q: 10, sensor,
  ...(columns ? { output: { columns } } : {}),
}).sensor;

describe('simulated detectors', () => {
  it('encoder counts are integers, wrap at counter_bits and unwrap back', () => {
    const sensor = sensorOf({ kind: 'encoder', counts_per_rev: 4096, counter_bits: 12 });
    const n = 2000;
    const theta = new Float64Array(n);
    for (let i = 0; i < n; i++) theta[i] = 0.05 * i - 30; // −30 rad … +70 rad: many full turns both signs
    const { counts } = sensorChannels(theta, sensor, new Rng(1));
    const u = new Unwrapper(4096);
    // the unwrapper starts from the first reading; the true count differs by whole wraps
    const first = Math.round(theta[0] * 4096 / (2 * Math.PI)) - counts![0];
    let bad = 0, wraps = 0;
    for (let i = 0; i < n; i++) {
      const c = counts![i];
      if (!Number.isInteger(c) || c < -2048 || c >= 2048) bad++;
      if (i > 0 && Math.abs(c - counts![i - 1]) > 2048) wraps++;
      if (u.next(c) !== Math.round(theta[i] * 4096 / (2 * Math.PI)) - first) bad++;
    }
    expect(bad).toBe(0);
    expect(wraps).toBeGreaterThan(10);
  });

  it('wrapSigned is two’s complement', () => {
    // 16-bit two's complement: 32768 → −32768, 65535 → −1, −32769 → 32767 (common practice, no source)
    expect(wrapSigned(32768, 16)).toBe(-32768);
    expect(wrapSigned(65535, 16)).toBe(-1);
    expect(wrapSigned(-32769, 16)).toBe(32767);
    expect(wrapSigned(5, 16)).toBe(5);
    expect(encoderCount(2 * Math.PI, 1000)).toBe(1000);
  });

  it('split photodiode: (a − b)/(a + b) = erf(√2·x/w) with x = D·tan 2θ', () => {
    const sensor = sensorOf({ kind: 'split-photodiode', lever_arm_m: 0.5, beam_radius_m: 1e-3, power: 2 });
    const theta = Float64Array.from([-1e-3, -2e-4, 0, 1e-4, 5e-4, 3e-3]);
    const { a, b } = sensorChannels(theta, sensor, new Rng(1));
    for (let i = 0; i < theta.length; i++) {
      const x = 0.5 * Math.tan(2 * theta[i]);
      // reference: the beam's halves integrated numerically (the simulator itself uses @stdlib erf)
      const ref = beamHalves(x, 1e-3);
      expect((a![i] - b![i]) / (a![i] + b![i])).toBeCloseTo((ref.a - ref.b) / (ref.a + ref.b), 12);
      expect(a![i] + b![i]).toBeCloseTo(2, 12);
    }
  });

  it('split photodiode saturates when the spot leaves the split, and goes dark off the detector', () => {
    const sensor = sensorOf({ kind: 'split-photodiode', lever_arm_m: 0.5, beam_radius_m: 1e-3, noise: 1e-3, detector_half_size_m: 5e-3 });
    // 2 mrad → x = 2 mm = 2w: s = erf(2√2) ≈ 0.99993, past a 0.98 saturation mark; 10 mrad → x = 1 cm: off the detector
    const { a, b } = sensorChannels(Float64Array.from([2e-3, 1e-2]), sensor, new Rng(3));
    expect(Math.abs((a![0] - b![0]) / (a![0] + b![0]))).toBeGreaterThan(0.98);
    expect(a![1]).toBeLessThan(5e-3);
    expect(b![1]).toBeLessThan(5e-3);
    expect(a![1]).toBeGreaterThanOrEqual(0);
  });

  it('psd: x = D·tan 2θ, clipped at the ends, or as two electrode signals', () => {
    const sensor = sensorOf({ kind: 'psd', lever_arm_m: 1, half_length_m: 5e-3 });
    const theta = Float64Array.from([1e-3, -2e-3, 1e-2]);
    const { x_m } = sensorChannels(theta, sensor, new Rng(1));
    expect(x_m![0]).toBeCloseTo(Math.tan(2e-3), 15);
    expect(x_m![1]).toBeCloseTo(Math.tan(-4e-3), 15);
    expect(x_m![2]).toBe(5e-3);
    const ab = sensorChannels(theta, sensor, new Rng(1), ['t_s', 'a', 'b']);
    // lateral-effect PSD: x = h·(a − b)/(a + b) (docs/physics.md)
    expect(5e-3 * (ab.a![0] - ab.b![0]) / (ab.a![0] + ab.b![0])).toBeCloseTo(x_m![0], 15);
    expect(ab.x_m).toBeUndefined();
  });
});
