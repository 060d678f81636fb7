/**
 * The virtual balance's configurations, polynomial drift and anelastic fibre
 * (drivers/simulator/balance.ts), checked on noise-free runs against the
 * textbook: a steady torque τ moves the equilibrium by τ/κ; the damped
 * oscillator's zero crossings are exactly half a damped period apart, and
 * T ∝ 1/√κ; a step torque leaves the angle continuous (it changes the
 * acceleration, not the position or the velocity).
 */
import { describe, expect, it } from 'vitest';
import { PassThrough } from 'node:stream';
import { parseScenario, type ScenarioInput } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { simulateToArrays } from '../helpers/simulate-arrays.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';

const I = 1e-5, T = 20, kappa = kappaFromPeriod(I, T);
const base = (extra: Partial<ScenarioInput> = {}) => parseScenario({
  name: 'cfg', duration_s: 4000, sample_rate_Hz: 20, inertia_kg_m2: I, kappa_Nm_per_rad: kappa, q: 1e5, thermal_noise: false,
  initial: { amplitude_rad: 1e-3, phase_rad: 0.3, equilibrium_rad: 0 }, ...extra,
});

/** Upward zero crossings of y in [from, to), linearly interpolated. */
function crossings(t: Float64Array, y: Float64Array, from: number, to: number): number[] {
  const out: number[] = [];
  for (let i = 1; i < t.length; i++) if (t[i] >= from && t[i] < to && y[i - 1] < 0 && y[i] >= 0) out.push(t[i - 1] + ((t[i] - t[i - 1]) * -y[i - 1]) / (y[i] - y[i - 1]));
  return out;
}
const period = (c: number[]) => (c[c.length - 1] - c[0]) / (c.length - 1);

describe('simulator configurations', () => {
  it('writes the state, moves the equilibrium by τ/κ and the period by its ppm, with a continuous angle', () => {
    const sc = base({ configurations: { states: [{ state: 7 }, { state: 9, torque_Nm: 3e-6 * kappa, period_ppm: 500 }], every_s: 1000 } });
    expect(sc.output.columns).toEqual(['t_s', 'angle_rad', 'state']);
    const r = simulateToArrays(sc, 1);
    const st = r.channels.state!;
    const at = (t: number) => Math.round(t * 20);
    expect([st[at(999.95)], st[at(1000)], st[at(1999.95)], st[at(2000)], st[at(3500)]]).toEqual([7, 9, 9, 7, 9]);
    // τ/κ, exactly: the simulator's reference κ
    expect(r.thetaEq[at(1500)] - r.thetaEq[at(500)]).toBeCloseTo(3e-6, 15);
    // the angle has no jump at the switch (one sample's motion at most: A·ω·Δt)
    const i = at(1000);
    expect(Math.abs(r.theta[i] - r.theta[i - 1])).toBeLessThan(1e-3 * ((2 * Math.PI) / T) * 0.05 * 1.01);
    // T ∝ 1/√κ: the periods of the two states differ by 500 ppm (zero crossings of θ − θ_eq, half a period apart exactly)
    const y = r.theta.map((v, k) => v - r.thetaEq[k]);
    const p1 = period(crossings(r.t, y, 100, 950)), p2 = period(crossings(r.t, y, 1100, 1950));
    expect((p2 / p1 - 1) * 1e6).toBeCloseTo(500, 0);
  });

  it('a schedule sets the states at its times; the first state holds before it', () => {
    const sc = base({ configurations: { states: [{ state: 1 }, { state: 2 }, { state: 3 }], schedule: [{ t_s: 500, state: 3 }, { t_s: 2500, state: 2 }] } });
    const st = simulateToArrays(sc, 1).channels.state!;
    expect([st[0], st[500 * 20 - 1], st[500 * 20], st[2500 * 20], st[3999 * 20]]).toEqual([1, 1, 3, 2, 2]);
  });

  it('an anelastic fibre: the period grows by slope × amplitude', () => {
    // a swing decaying from 20 to 7 mrad over the run (Q 400), slope 2 s/rad: 0.026 s less at the end
    const sc = base({ q: 400, initial: { amplitude_rad: 0.02, phase_rad: 0, equilibrium_rad: 0 }, anelastic: { period_amplitude_slope_s_per_rad: 2 } });
    const r = simulateToArrays(sc, 1);
    const y = r.theta.map((v, k) => v - r.thetaEq[k]);
    const amp = (a: number, b: number) => { let m = 0; for (let k = a * 20; k < b * 20; k++) m = Math.max(m, Math.abs(y[k])); return m; };
    const e = { p: period(crossings(r.t, y, 100, 300)), A: amp(180, 220) };
    const l = { p: period(crossings(r.t, y, 3600, 3800)), A: amp(3680, 3720) };
    const slope = (e.p - l.p) / (e.A - l.A);
    expect(slope).toBeGreaterThan(1.97);
    expect(slope).toBeLessThan(2.03);
    // without it the period does not follow the amplitude (an elastic fibre, textbook)
    const r0 = simulateToArrays(base({ q: 400, initial: { amplitude_rad: 0.02, phase_rad: 0, equilibrium_rad: 0 } }), 1);
    const y0 = r0.theta.map((v, k) => v - r0.thetaEq[k]);
    expect(Math.abs(period(crossings(r0.t, y0, 100, 300)) - period(crossings(r0.t, y0, 3600, 3800)))).toBeLessThan(1e-6);
  });

  it('a polynomial drift adds rate·t + quadratic·t² to the equilibrium', () => {
    const r = simulateToArrays(base({ drift: { rate_rad_per_s: 1e-9, quadratic_rad_per_s2: 3e-13 } }), 1);
    expect(r.thetaEq[3000 * 20]).toBeCloseTo(1e-9 * 3000 + 3e-13 * 3000 ** 2, 15);
  });

  it('the lines output carries the state column; bad configurations are refused naming the field', async () => {
    const sc = base({ duration_s: 10, configurations: { states: [{ state: 1 }, { state: 2 }], every_s: 5 } });
    const out = new PassThrough();
    let text = '';
    out.on('data', (d) => (text += d));
    await runSimulator({ scenario: sc, out, speed: 0 });
    expect(text).toMatch(/# columns: t_s,angle_rad,state\n/);
    expect(text.trim().split('\n').at(-1)).toMatch(/,2$/);
    const bad = (c: unknown) => () => base({ configurations: c as never });
    expect(bad({ states: [{ state: 1 }] })).toThrow(/configurations: give either every_s or schedule/);
    expect(bad({ states: [{ state: 1 }, { state: 1 }], every_s: 5 })).toThrow(/configurations\.states\[1\]\.state: 1 is listed twice/);
    expect(bad({ states: [{ state: 1 }], schedule: [{ t_s: 1, state: 4 }] })).toThrow(/configurations\.schedule\[0\]\.state: 4 is not among/);
    expect(bad({ states: [{ state: 1.5 }], every_s: 5 })).toThrow(/configurations\.states\.0\.state|states\[0\]\.state.*integer/);
    expect(() => base({ output: { format: 'lines', columns: ['t_s', 'angle_rad', 'state'] } })).toThrow(/"state" needs configurations/);
  });
});
