/**
 * The windows' fitted free oscillation over a run: each window's damped sine
 * (docs/commands.md, "The fitted model") where it alone covers the time, a
 * linear blend between consecutive windows' middles, breaks where windows do
 * not overlap, nothing outside them.
 */
import { describe, expect, it } from 'vitest';
import { decayRate, SwingModel, type SwingWindow } from '../../src/analysis/swing-model.js';

/** Windows of a damped sine A·e^(−t/τ)·cos(ωt + φ₀) sampled exactly: each window's parameters at its middle. */
function windowsOf(A0: number, tau: number, T: number, phi0: number, mids: number[], half: number): SwingWindow[] {
  const w = (2 * Math.PI) / T;
  return mids.map((tm) => ({
    t_start_s: tm - half, t_mid_s: tm, t_end_s: tm + half,
    amplitude_rad: A0 * Math.exp(-tm / tau), decay_time_s: tau, period_s: T, phase_rad: w * tm + phi0,
  }));
}

const evalAt = (m: SwingModel, t: number[]) => {
  const v = new Float64Array(t.length), c = new Int32Array(t.length);
  m.evaluate(t, t.length, v, c);
  return { v: Array.from(v), c: Array.from(c) };
};

describe('swing model', () => {
  it('reproduces the damped sine the windows describe, blend or not (they agree on one oscillation)', () => {
    const A0 = 2e-3, tau = 500, T = 10, phi0 = 0.4;
    const mids = [20, 30, 40, 50, 60];
    const m = new SwingModel(windowsOf(A0, tau, T, phi0, mids, 20));
    const t = Array.from({ length: 801 }, (_, i) => i * 0.1); // 0 … 80 s: the first start to the last end
    const r = evalAt(m, t);
    for (let i = 0; i < t.length; i++) {
      const truth = A0 * Math.exp(-t[i] / tau) * Math.cos((2 * Math.PI * t[i]) / T + phi0);
      expect(r.v[i]).toBeCloseTo(truth, 14);
      expect(r.c[i]).toBe(0);
    }
    expect(m.chainSpans().length).toBe(1);
    expect(m.windows).toBe(5);
  });

  it('blends linearly between two windows that disagree, so there is no step at the hand-over', () => {
    const a: SwingWindow = { t_start_s: 0, t_mid_s: 20, t_end_s: 40, amplitude_rad: 1, decay_time_s: null, period_s: 10, phase_rad: 0 };
    const b: SwingWindow = { ...a, t_start_s: 10, t_mid_s: 30, t_end_s: 50, amplitude_rad: 1.1, phase_rad: (2 * Math.PI * 10) / 10 };
    const m = new SwingModel([a, b]);
    const t = [20, 25, 29.999, 30, 30.001];
    const r = evalAt(m, t);
    const osc = (w: SwingWindow, x: number) => w.amplitude_rad! * Math.cos((2 * Math.PI * (x - w.t_mid_s)) / w.period_s! + w.phase_rad!);
    expect(r.v[0]).toBeCloseTo(osc(a, 20), 14);
    expect(r.v[1]).toBeCloseTo(0.5 * osc(a, 25) + 0.5 * osc(b, 25), 14);
    expect(r.v[3]).toBeCloseTo(osc(b, 30), 14);
    expect(Math.abs(r.v[2] - r.v[3])).toBeLessThan(1e-3);
    expect(Math.abs(r.v[4] - r.v[3])).toBeLessThan(1e-3);
  });

  it('windows that do not overlap to each other\'s middle make a break; outside every window there is no model', () => {
    const ws = windowsOf(1e-3, 1e9, 10, 0, [20, 30, 40, 100, 110], 20);
    const m = new SwingModel(ws);
    expect(m.chainSpans()).toEqual([{ start_s: 0, end_s: 60 }, { start_s: 80, end_s: expect.closeTo(130, 6) }]);
    const r = evalAt(m, [-1, 0, 59.9, 60, 79.9, 80, 130, 131]);
    expect(r.c).toEqual([-1, 0, 0, -1, -1, 1, 1, -1]);
    expect(Number.isNaN(r.v[0])).toBe(true);
    expect(Number.isNaN(r.v[3])).toBe(true);
  });

  it('the decay comes from the stored rate when there is one (a growing window keeps its sign)', () => {
    expect(decayRate({ decay_time_s: 200, decay_rate_per_s: -1e-4 })).toBe(-1e-4);
    expect(decayRate({ decay_time_s: 200 })).toBe(1 / 200);
    expect(decayRate({ decay_time_s: null })).toBe(0);
    const w: SwingWindow = { t_start_s: 0, t_mid_s: 10, t_end_s: 20, amplitude_rad: 1, decay_time_s: null, decay_rate_per_s: -0.01, period_s: 5, phase_rad: 0 };
    const r = evalAt(new SwingModel([w]), [20]);
    expect(r.v[0]).toBeCloseTo(Math.exp(0.1) * Math.cos(4 * Math.PI), 12);
  });
});
