/**
 * A window is `ok` only when its oscillation stands out from the noise — a
 * number from nothing is worse than none. Reproduced faults: a constant
 * record gave an ok window (period 13.76 s, amplitude 1.8e-18 rad), a random
 * walk gave ok periods in 5 of 10 seeds.
 */
import { describe, expect, it } from 'vitest';
import { analyseWindow } from '../../src/analysis/window-analysis.js';
import { FIT_STATUS } from '../../src/analysis/fit-status.js';
import { Rng } from '../../src/analysis/rng.js';

const n = 6000;
const t = Float64Array.from({ length: n }, (_, i) => i * 0.1);
const window = (y: Float64Array) => analyseWindow({ index: 0, t, y, t_start_s: 0, t_end_s: t[n - 1] });

describe('significance of a window', () => {
  it('a constant record is no oscillation: rejected, no numbers', () => {
    for (const level of [0, 0.0123, -3.2]) {
      const r = window(new Float64Array(n).fill(level)).result;
      expect(r.status).not.toBe(FIT_STATUS.ok);
      expect(r.period_s).toBeNull();
      expect(r.shear_modulus_Pa).toBeNull();
    }
  });

  it('a random walk is no oscillation: 0 of 10 seeds ok', () => {
    let ok = 0;
    for (let s = 1; s <= 10; s++) {
      const g = new Rng(s);
      const y = new Float64Array(n);
      for (let i = 1; i < n; i++) y[i] = y[i - 1] + 1e-6 * g.normal();
      if (window(y).result.status === FIT_STATUS.ok) ok++;
    }
    expect(ok).toBe(0);
  });

  it('a weak but real swing in white noise is still found: amplitude 20 σ_A, ok in ≥ 19 of 20 seeds', () => {
    // 10 periods of 60 s at 10 Hz: σ_A = σ·√(2/N) ≈ 0.018σ, so A = 0.37σ is 20 σ_A
    let ok = 0;
    for (let s = 1; s <= 20; s++) {
      const g = new Rng(100 + s);
      const y = Float64Array.from(t, (ti) => 0.37e-6 * Math.cos((2 * Math.PI * ti) / 60 + s) + 1e-6 * g.normal());
      if (window(y).result.status === FIT_STATUS.ok) ok++;
    }
    expect(ok).toBeGreaterThanOrEqual(19);
  });
});
