import { describe, expect, it } from 'vitest';
import {
  dampedPeriod, decayFromQ, kappaFromPeriod, kappaRibbon, kappaRound, periodFromKappa,
  qFromDecay, rectangleTorsionFactor, shearModulusRibbon, shearModulusRound, undampedPeriod,
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

  it('internal damping: ω₀² = ω_d² − γ², the root of −I·ω² + κ·(1 + i/Q) = 0, and T₀ ≈ T_d·(1 + 1/(8Q²))', () => {
    // constant loss angle φ = 1/Q: complex stiffness κ(1 + iφ) (Saulson 1990, docs/physics.md). The free
    // motion e^(iωt) needs ω² = ω₀²(1 + iφ); its principal root, by hand in polar form: ω = ω₀·(1 + φ²)^¼·e^(i·atan(φ)/2)
    for (const Q of [2, 10, 1000]) {
      const w0 = 2 * Math.PI / 60, phi = 1 / Q;
      const mod = w0 * (1 + phi * phi) ** 0.25, arg = Math.atan(phi) / 2;
      const wd = mod * Math.cos(arg), gamma = mod * Math.sin(arg); // oscillation and decay of e^(iωt)
      const Td = 2 * Math.PI / wd;
      expect(undampedPeriod(Td, 1 / gamma, 'internal') / 60).toBeCloseTo(1, 12);
      expect(dampedPeriod(60, 1 / gamma, 'internal') / Td).toBeCloseTo(1, 12);
      // the damped swing is faster than ω₀ here, slower for viscous damping
      expect(Td).toBeLessThan(60);
      expect(dampedPeriod(60, 1 / gamma, 'viscous')).toBeGreaterThan(60);
      // the series of Re√(1 + i/Q) = 1 + 1/(8Q²) − …: T₀ ≈ T_d·(1 + 1/(8Q²)) at high Q
      if (Q === 1000) expect(60 / Td - 1).toBeCloseTo(1 / (8 * Q * Q), 12);
    }
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

  it('ribbon: κ = β·G·w·t³/L, β → 1/3 for w ≫ t, and back', () => {
    const k = kappaRibbon(31e9, 1e-3, 2e-5, 0.5);
    // w/t = 50: β = (1/3)(1 − 0.630/50) to the series' tail (from memory, Timoshenko & Goodier)
    expect(k / (31e9 * 1e-3 * 8e-15 / 1.5)).toBeCloseTo(1 - 0.63024 / 50, 5);
    expect(shearModulusRibbon(k, 1e-3, 2e-5, 0.5)).toBeCloseTo(31e9, 0);
    // the section's long side may be given either way round
    expect(kappaRibbon(31e9, 2e-5, 1e-3, 0.5)).toBeCloseTo(k, 20);
  });

  it('Saint-Venant factor β of a rectangle against the tabulated k₁ and a finite-difference solution', () => {
    // tabulated k₁ in M = k₁·G·θ·b·a³ (Timoshenko & Goodier, Theory of Elasticity, torsion of rectangular bars — from memory)
    const table: [number, number][] = [[1, 0.141], [1.5, 0.196], [2, 0.229], [2.5, 0.249], [3, 0.263], [4, 0.281], [5, 0.291], [10, 0.312]];
    for (const [r, k1] of table) expect(Math.abs(rectangleTorsionFactor(r) - k1), `b/a = ${r}`).toBeLessThan(6e-4);
    expect(rectangleTorsionFactor(1e6)).toBeCloseTo(1 / 3, 6);
    // independently: Prandtl's stress function ∇²ψ = −2 in the section, ψ = 0 on its edge, J = 2∫ψ dA;
    // five-point Laplacian solved by conjugate gradients on two grids, Richardson-extrapolated
    for (const r of [1, 2, 4]) {
      const J = (m: number) => prandtlJ(m, Math.round(m * r));
      const beta = (4 * J(24) - J(12)) / 3; // a = 1, b = r: J = β·b·a³
      expect(beta / r / rectangleTorsionFactor(r), `b/a = ${r}`).toBeCloseTo(1, 3);
    }
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
    // the stopwatch timings of this balance are checked against fitted swings in
    // test/pipelines/amplitude-independence.test.ts
  });
});

/** J = 2∫ψ dA of the unit-short-side rectangle (a = 1, b = n/m) on an m × n cell grid: ∇²ψ = −2, ψ = 0 on the edge. */
function prandtlJ(m: number, n: number): number {
  const h = 1 / m, nx = m - 1, ny = n - 1, N = nx * ny;
  const A = (v: Float64Array, out: Float64Array) => {
    for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
      const k = j * nx + i;
      let s = 4 * v[k];
      if (i > 0) s -= v[k - 1];
      if (i < nx - 1) s -= v[k + 1];
      if (j > 0) s -= v[k - nx];
      if (j < ny - 1) s -= v[k + nx];
      out[k] = s / (h * h);
    }
  };
  const x = new Float64Array(N), r = new Float64Array(N).fill(2), p = r.slice(), Ap = new Float64Array(N);
  let rr = r.reduce((a, v) => a + v * v, 0);
  for (let it = 0; it < 10 * N && rr > 1e-26 * N; it++) {
    A(p, Ap);
    let pAp = 0;
    for (let k = 0; k < N; k++) pAp += p[k] * Ap[k];
    const alpha = rr / pAp;
    let rr2 = 0;
    for (let k = 0; k < N; k++) { x[k] += alpha * p[k]; r[k] -= alpha * Ap[k]; rr2 += r[k] * r[k]; }
    for (let k = 0; k < N; k++) p[k] = r[k] + (rr2 / rr) * p[k];
    rr = rr2;
  }
  return 2 * x.reduce((a, v) => a + v, 0) * h * h; // the edge values are 0: the trapezoid rule is the plain sum
}

describe('tension stiffening', () => {
  // a tensile stress σ = F/A tilts each fibre of the section by r·θ/L and so adds a torque σ·r²·θ/L per area:
  // κ_T = (F/A)·∫r² dA/L (from memory; docs/physics.md). Checked by integrating ∫r² dA numerically here.
  const F = 0.5 * 9.80665, L = 0.8;
  const integrate = (inside: (x: number, y: number) => boolean, hx: number, hy: number, n = 400) => {
    let A = 0, J = 0;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
      const x = -hx + (2 * hx * (i + 0.5)) / n, y = -hy + (2 * hy * (j + 0.5)) / n;
      if (!inside(x, y)) continue;
      A += 1; J += x * x + y * y;
    }
    return J / A; // ∫r² dA / A, midpoint rule
  };
  it('round fibre: κ = (π·G·d⁴/32 + F·d²/8)/L, and G from κ subtracts the tension term', () => {
    const G = 161e9, d = 50e-6;
    const ja = integrate((x, y) => x * x + y * y <= (d / 2) ** 2, d / 2, d / 2);
    expect(((kappaRound(G, d, L, F) - kappaRound(G, d, L)) * L) / F / ja).toBeCloseTo(1, 3);
    expect(shearModulusRound(kappaRound(G, d, L, F), d, L, F) / G).toBeCloseTo(1, 12);
    // the tension term over the elastic one is σ/G (derived here): 4F/(π·G·d²)
    const share = (kappaRound(G, d, L, F) - kappaRound(G, d, L)) / kappaRound(G, d, L);
    expect(share / ((4 * F) / (Math.PI * d * d) / G)).toBeCloseTo(1, 12);
  });
  it('ribbon: the tension term is F·(w² + t²)/(12·L)', () => {
    const G = 31e9, w = 1e-3, t = 2e-5;
    const ja = integrate((x, y) => Math.abs(x) <= w / 2 && Math.abs(y) <= t / 2, w / 2, t / 2);
    expect(((kappaRibbon(G, w, t, L, F) - kappaRibbon(G, w, t, L)) * L) / F / ja).toBeCloseTo(1, 4);
    expect(shearModulusRibbon(kappaRibbon(G, w, t, L, F), w, t, L, F) / G).toBeCloseTo(1, 12);
  });
});
