/**
 * Systematic terms of a run's κ and G, checked against an independent
 * propagation: a Monte-Carlo draw of the hand-measured inputs through the
 * textbook formulas written out here (round: G = 32·κ·L/(π·d⁴) − 4F/(π·d²), from
 * κ = (π·G·d⁴/32 + F·d²/8)/L; ribbon: κ = β·G·w·t³/L + F·(w² + t²)/(12L) with the
 * thin-strip β ≈ (1/3)(1 − 0.630·t/w) — Timoshenko & Goodier, from memory), κ = I·ω₀².
 */
import { describe, expect, it } from 'vitest';
import { sampleStandardDeviation } from 'simple-statistics';
import { combinedRelative, kappaSystematics, shearModulusSystematics } from '../../src/analysis/systematics.js';
import { normals } from '../helpers/blocks.js';

const w0 = (2 * Math.PI) / 429; // a measured undamped frequency, fixed: the inputs are what is uncertain
const draws = 20000;

/** Relative SD of f over draws of the inputs, each N(value, σ). */
function monteCarlo(inputs: Record<string, [number, number]>, f: (x: Record<string, number>) => number, seed: number): number {
  const z = normals(seed);
  const out: number[] = [];
  for (let k = 0; k < draws; k++) {
    const x: Record<string, number> = {};
    for (const [name, [v, s]] of Object.entries(inputs)) x[name] = v + s * z();
    out.push(f(x));
  }
  return sampleStandardDeviation(out) / (out.reduce((a, b) => a + b, 0) / draws);
}

describe('systematic terms of κ and G', () => {
  const I = 3.6e-5, d = 25e-6, L = 0.8;
  const kappa = I * w0 * w0;

  it('κ: σ_I/I; round G without a load: σ_I/I, 4·σ_d/d and σ_L/L, as a Monte-Carlo draw finds', () => {
    const sys = { inertia_sigma_kg_m2: 0.01 * I, diameter_sigma_m: 0.005 * d, length_sigma_m: 2e-3 };
    const ctx = { inertia_kg_m2: I, diameter_m: d, length_m: L };
    expect(kappaSystematics(ctx, sys)).toEqual({ inertia: 0.01 });
    const t = shearModulusSystematics(kappa, ctx, sys)!;
    expect(t.diameter! / (4 * 0.005)).toBeCloseTo(1, 8);
    expect(t.inertia! / 0.01).toBeCloseTo(1, 8);
    expect(t.length! / (2e-3 / L)).toBeCloseTo(1, 8);
    const mc = monteCarlo({ I: [I, 0.01 * I], d: [d, 0.005 * d], L: [L, 2e-3] }, (x) => (32 * x.I * w0 * w0 * x.L) / (Math.PI * x.d ** 4), 11);
    // 20000 draws: the SD is known to about 0.5 %; d⁻⁴ is mildly non-linear at 0.5 %
    expect(Math.abs(combinedRelative(t) / mc - 1)).toBeLessThan(0.02);
  });

  it('round G with a load: the tension term bends the sensitivities, as the draw through the formula finds', () => {
    // a load giving a tension share of a few per cent, so the bend is visible
    const F = 1.2;
    const ctx = { inertia_kg_m2: I, diameter_m: d, length_m: L, tension_N: F };
    const kTot = kappa; // the κ the pendulum shows includes the tension term
    const share = (F * d * d) / 8 / L / kTot;
    expect(share).toBeGreaterThan(0.01);
    const sys = { inertia_sigma_kg_m2: 0.002 * I, diameter_sigma_m: 0.01 * d, length_sigma_m: 1e-3 };
    const t = shearModulusSystematics(kTot, ctx, sys)!;
    // ∂lnG/∂ln d = (−4 + 2s)/(1 − s), ∂lnG/∂ln I = ∂lnG/∂ln L = 1/(1 − s), s the tension share (derived here)
    expect(t.diameter! / (((4 - 2 * share) / (1 - share)) * 0.01)).toBeCloseTo(1, 6);
    expect(t.inertia! / (0.002 / (1 - share))).toBeCloseTo(1, 6);
    const G = (x: Record<string, number>) => (32 * x.I * w0 * w0 * x.L) / (Math.PI * x.d ** 4) - (4 * F) / (Math.PI * x.d ** 2);
    const mc = monteCarlo({ I: [I, 0.002 * I], d: [d, 0.01 * d], L: [L, 1e-3] }, G, 12);
    expect(Math.abs(combinedRelative(t) / mc - 1)).toBeLessThan(0.02);
  });

  it('ribbon G: σ_w/w and 3·σ_t/t in the thin-strip limit, with the finite-width factor as the draw finds', () => {
    const w = 1e-3, th = 2e-5;
    const ctx = { inertia_kg_m2: I, width_m: w, thickness_m: th, length_m: L };
    const sys = { inertia_sigma_kg_m2: 0.004 * I, width_sigma_m: 0.01 * w, thickness_sigma_m: 0.01 * th, length_sigma_m: 1e-3 };
    const t = shearModulusSystematics(kappa, ctx, sys)!;
    expect(t.diameter).toBeUndefined();
    // thin strip: 1·σ_w/w and 3·σ_t/t, bent by the finite width at t/w = 0.02 by about 0.63·t/w
    expect(Math.abs(t.width! / 0.01 - 1)).toBeLessThan(0.02);
    expect(Math.abs(t.thickness! / 0.03 - 1)).toBeLessThan(0.01);
    const G = (x: Record<string, number>) => (x.I * w0 * w0 * x.L) / (((1 - (0.63 * x.t) / x.w) / 3) * x.w * x.t ** 3);
    const mc = monteCarlo({ I: [I, 0.004 * I], w: [w, 0.01 * w], t: [th, 0.01 * th], L: [L, 1e-3] }, G, 13);
    expect(Math.abs(combinedRelative(t) / mc - 1)).toBeLessThan(0.02);
  });

  it('no σ given: every term is 0; no geometry: no G terms', () => {
    expect(combinedRelative(shearModulusSystematics(kappa, { inertia_kg_m2: I, diameter_m: d, length_m: L }, {})!)).toBe(0);
    expect(shearModulusSystematics(kappa, { inertia_kg_m2: I }, { inertia_sigma_kg_m2: 1e-7 })).toBeNull();
    expect(kappaSystematics({}, { inertia_sigma_kg_m2: 1e-7 })).toEqual({});
  });
});
