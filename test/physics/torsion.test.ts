import { describe, expect, it } from 'vitest';
import {
  dampedPeriod, decayFromQ, kappaFromPeriod, kappaRibbon, kappaRound, periodFromKappa,
  qFromDecay, shearModulusRibbon, shearModulusRound, undampedPeriod,
} from '../../src/physics/torsion.js';
import { inertiaFromParts, pointMass } from '../../src/physics/inertia.js';
import { lookupMaterial } from '../../src/physics/materials.js';

const inch = 0.0254;

describe('torsion relations', () => {
  it('κ and T₀ are inverse of each other', () => {
    // T₀ = 2π√(I/κ): with I = 1, κ = 4π² the period is exactly 1 s (definition).
    expect(periodFromKappa(1, 4 * Math.PI ** 2)).toBeCloseTo(1, 14);
    expect(kappaFromPeriod(3.6e-5, periodFromKappa(3.6e-5, 2.7e-9))).toBeCloseTo(2.7e-9, 22);
  });

  it('undamped period from damped period and decay time: ω₀² = ω_d² + 1/τ²', () => {
    const T0 = 60;
    const Q = 3;
    const tau = decayFromQ(Q, T0);
    // ω_d = ω₀·√(1 − 1/(4Q²)) (damped harmonic oscillator, any mechanics text)
    const wd = (2 * Math.PI / T0) * Math.sqrt(1 - 1 / (4 * Q * Q));
    const Td = 2 * Math.PI / wd;
    expect(dampedPeriod(T0, tau)).toBeCloseTo(Td, 10);
    expect(undampedPeriod(Td, tau)).toBeCloseTo(T0, 10);
    expect(qFromDecay(tau, T0)).toBeCloseTo(Q, 12);
    expect(() => dampedPeriod(1, 0.1)).toThrow(/overdamped/);
  });

  it('round fibre: κ = πGd⁴/(32L) and back', () => {
    // polar second moment of a circle J = πd⁴/32 (standard section property); κ = GJ/L
    const G = 161e9;
    const d = 25e-6;
    const L = 0.8;
    const k = kappaRound(G, d, L);
    expect(k / (G * (Math.PI * d ** 4 / 32) / L)).toBeCloseTo(1, 12);
    expect(shearModulusRound(k, d, L)).toBeCloseTo(G, 0);
    // doubling d multiplies κ by 16, doubling L halves it
    expect(kappaRound(G, 2 * d, L) / k).toBeCloseTo(16, 10);
    expect(kappaRound(G, d, 2 * L) / k).toBeCloseTo(0.5, 12);
  });

  it('ribbon: κ ≈ G·w·t³/(3L) and back', () => {
    const k = kappaRibbon(31e9, 1e-3, 2e-5, 0.5);
    expect(k).toBeCloseTo(31e9 * 1e-3 * 8e-15 / 1.5, 20);
    expect(shearModulusRibbon(k, 1e-3, 2e-5, 0.5)).toBeCloseTo(31e9, 0);
  });

  // Classroom-scale example, common practice, no source: a piano wire of
  // 0.025 in diameter and 2.5 m length carrying two 0.2 kg masses at 0.30 m
  // has κ ≈ 4×10⁻⁴ N·m/rad and a period of about a minute.
  describe('piano-wire classroom balance', () => {
    const d = 0.025 * inch;
    const L = 2.5;
    const I = inertiaFromParts([{ shape: 'point', mass_kg: 0.2, offset_m: 0.3, count: 2 }]);
    const music = lookupMaterial('piano wire')!;
    const G = music.shearModulus.value; // 79.29 GPa = 11.5 Mpsi, SMI Handbook of Spring Design via ODOP table
    const k = kappaRound(G, d, L);

    it('two point masses give I ≈ 0.036 kg·m²', () => {
      expect(I).toBeCloseTo(2 * pointMass(0.2, 0.3), 15);
      expect(I).toBeCloseTo(0.036, 12);
    });
    it('κ from the handbook G is within 30 % of 4×10⁻⁴ N·m/rad', () => {
      expect(Math.abs(k / 4e-4 - 1)).toBeLessThan(0.3);
      expect(k).toBeCloseTo(5.06e-4, 5); // worked by hand: π·79.29e9·(6.35e-4)⁴/80
    });
    it('the period from I and that κ is about a minute', () => {
      const T = periodFromKappa(I, k);
      expect(T).toBeGreaterThan(50);
      expect(T).toBeLessThan(65);
    });
    it('stopwatch half periods at 1, 3 and 10 turns agree within timing error: amplitude independence', () => {
      // measured half periods (s) at 1, 3, 10 turns, stopwatch; reaction time
      // 0.1–0.2 s at each of start and stop (common practice, no source)
      const halves = [28.75, 28.5, 29.2];
      const reaction = 0.2;
      const timingError = 2 * reaction; // start and stop each carry one reaction error
      const mean = halves.reduce((s, x) => s + x, 0) / halves.length;
      for (const h of halves) expect(Math.abs(h - mean)).toBeLessThanOrEqual(timingError);
      // the whole spread over a tenfold change of amplitude (0.7 s, ~2 %) stays inside
      // the window two independent timings can differ by
      expect(Math.max(...halves) - Math.min(...halves)).toBeLessThanOrEqual(2 * timingError);
      // and the measured period (≈ 57.6 s) sits within 15 % of the period computed from the handbook G
      expect(Math.abs(2 * mean / periodFromKappa(I, k) - 1)).toBeLessThan(0.15);
    });
  });
});
