/**
 * The virtual balance with internal damping (a constant loss angle): its
 * thermal torque against the fluctuation–dissipation formula
 * S_τ = 4·k_B·T·κ/(2π·f·Q) (Saulson 1990, docs/physics.md), its angle
 * against |χ|²·S_τ, its stationary variance, and the free decay; and a
 * viscous scenario gives the same samples as before internal damping existed.
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { Balance, INTERNAL_RATE_RATIO, internalTorqueRates, propagator, type BalanceBlock } from '../../drivers/simulator/balance.js';
import { parseScenario, ScenarioError, type Scenario } from '../../drivers/simulator/scenario.js';
import { SimulatorSource } from '../../drivers/simulator/simulate.js';
import { Rng } from '../../src/analysis/rng.js';
import { WelchPsd } from '../../src/analysis/welch-psd.js';
import { K_BOLTZMANN } from '../../src/physics/constants.js';
import { thermalAnglePsd, thermalTorquePsd } from '../../src/physics/thermal.js';
import { kappaFromPeriod } from '../../src/physics/torsion.js';

const T_K = 300;

/** Mean of a Welch PSD and of a reference spectrum over the bins with lo ≤ f < hi; their ratio. */
function bandRatio(x: Float64Array, segment: number, dt: number, lo: number, hi: number, ref: (f: number) => number): { ratio: number; bins: number } {
  const w = new WelchPsd({ segment, dt_s: dt });
  w.push(x);
  const r = w.result()!;
  let m = 0, e = 0, bins = 0;
  for (let k = 1; k < r.psd.length; k++) {
    const f = r.frequency_Hz[k];
    if (f < lo || f >= hi) continue;
    m += r.psd[k];
    e += ref(f);
    bins++;
  }
  return { ratio: m / e, bins };
}

describe('internal damping: the thermal torque and the angle it drives', () => {
  // f₀ = 0.2 Hz at 10 Hz: the held torque's sinc²(πf₀/f_s) loss is 0.1 %
  const I = 1e-4, T0 = 5, fs = 10, Q = 100, n = 1 << 20;
  let sc: Scenario;
  let b: BalanceBlock;
  beforeAll(() => {
    sc = parseScenario({ name: 'internal', duration_s: n / fs, sample_rate_Hz: fs, inertia_kg_m2: I, kappa_Nm_per_rad: kappaFromPeriod(I, T0), q: Q, damping: 'internal', temperature_K: T_K });
    b = new Balance(sc, new Rng(3)).next(n);
  });

  it('the synthesis: the sampled sum of OU spectra is 4·k_B·T·κ/(2π·f·Q) within 1 % from 40·λ_min/(2π) (below 0.64/duration) to f_s/10', () => {
    // a sampled OU process of variance σ² and step decay a = e^(−λΔt) is an AR(1) sequence, one-sided
    // PSD 2Δt·σ²(1 − a²)/(1 − 2a·cos ωΔt + a²) (textbook); summed over the simulator's components
    const rates = internalTorqueRates(n / fs, fs);
    const c = (4 * K_BOLTZMANN * T_K * sc.kappa) / (2 * Math.PI * Q);
    const dt = 1 / fs;
    const lo = (40 * rates[rates.length - 1]) / (2 * Math.PI);
    expect(lo).toBeLessThan(0.64 / (n / fs));
    let worst = 0;
    for (let i = 0; i <= 400; i++) {
      const f = lo * Math.pow(fs / 10 / lo, i / 400);
      let s = 0;
      for (const l of rates) {
        const a = Math.exp(-l * dt);
        s += (2 * dt * c * Math.log(INTERNAL_RATE_RATIO) * (1 - a * a)) / (1 - 2 * a * Math.cos(2 * Math.PI * f * dt) + a * a);
      }
      worst = Math.max(worst, Math.abs(s / thermalTorquePsd(f, T_K, I, sc.kappa, Q, 'internal') - 1));
    }
    expect(worst).toBeLessThan(0.01);
    expect(rates[rates.length - 1]).toBeLessThanOrEqual(0.1 / (n / fs));
  });

  it('the simulated torque PSD follows 4·k_B·T·κ/(2π·f·Q) within 6 % over two decades', () => {
    // 255 segments of 2¹³ samples; each half-decade band averages ≥ 17 bins, so its
    // statistical error is ≈ 2 % (Welch 1967: a Hann-windowed bin averaged over K segments at
    // 50 % overlap has a relative variance ≈ 1.06/K; neighbouring bins are correlated):
    // 6 % is three of those
    const S = (f: number) => thermalTorquePsd(f, T_K, I, sc.kappa, Q, 'internal');
    const edges = [0.01, 0.0316, 0.1, 0.316, 1];
    for (let j = 0; j + 1 < edges.length; j++) {
      const r = bandRatio(b.torque_Nm!, 1 << 13, 1 / fs, edges[j], edges[j + 1], S);
      expect(r.bins).toBeGreaterThanOrEqual(17);
      expect(Math.abs(r.ratio - 1), `band ${edges[j]}–${edges[j + 1]} Hz`).toBeLessThan(0.06);
    }
  });

  it('the angle PSD is |χ|²·S_τ below and at the resonance (thermalAnglePsd, internal damping)', () => {
    const f0 = 1 / T0;
    const S = (f: number) => thermalAnglePsd(f, T_K, I, sc.kappa, Q, 'internal');
    // below: bins of 2¹³-sample segments; at the resonance: 2¹⁵ samples (Δf = f₀/655),
    // the line (width f₀/Q) spans 6.5 bins and the band ±5 widths holds 94 % of its power,
    // so the Hann window's smearing moves little across the band's edges
    for (const [lo, hi] of [[f0 / 30, f0 / 10], [f0 / 10, f0 / 3], [f0 / 3, f0 / 1.5]]) {
      const r = bandRatio(b.theta, 1 << 13, 1 / fs, lo, hi, S);
      expect(Math.abs(r.ratio - 1), `band ${lo}–${hi} Hz`).toBeLessThan(0.05);
    }
    // the line's power is correlated over ~1/(π·linewidth): about D·π·f₀/Q ≈ 650 independent
    // stretches, a 4 % error; the viscous-equivalent response differs by < 1/(2Q) = 0.5 %
    const r = bandRatio(b.theta, 1 << 15, 1 / fs, f0 * (1 - 5 / Q), f0 * (1 + 5 / Q), S);
    expect(Math.abs(r.ratio - 1)).toBeLessThan(0.12);
  });
});

describe('internal damping: stationary variance and free decay', () => {
  it('the angle variance is what the synthesized spectrum gives, the 1/f excess over k_B·T/κ included', () => {
    // Q = 20 makes the constant loss angle's 1/f share large, (2/(πQ))·ln(f₀·D) ≈ 0.3·k_B·T/κ,
    // so the check tells the two apart; f₀ = f_s/50
    const I = 1e-4, T0 = 2, fs = 25, Q = 20, D = 8000;
    const sc = parseScenario({ name: 'variance', duration_s: D, sample_rate_Hz: fs, inertia_kg_m2: I, kappa_Nm_per_rad: kappaFromPeriod(I, T0), q: Q, damping: 'internal', temperature_K: T_K });
    const seeds = [1, 2, 3, 4, 5, 6, 7, 8];
    const v = seeds.map((seed) => {
      const th = new Balance(sc, new Rng(seed)).next(Math.round(D * fs)).theta;
      let s = 0, s2 = 0;
      for (let i = 0; i < th.length; i++) { s += th[i]; s2 += th[i] * th[i]; }
      return s2 / th.length - (s / th.length) ** 2;
    });
    const mean = v.reduce((a, x) => a + x, 0) / v.length;
    const se = Math.sqrt(v.reduce((a, x) => a + (x - mean) ** 2, 0) / (v.length - 1) / v.length);
    // expected sample variance of a record of length D about its own mean:
    // ∫ S_θ(f)·(1 − sinc²(π·f·D)) df (textbook: the variance of a stationary process's sample mean is
    // ∫ S(f)·sinc²(πfD) df), with S_θ = S_τ,synth/|κ − Iω² + i·bω|² and S_τ,synth the sum of the
    // simulator's Lorentzians 4σ_k²λ_k/(λ_k² + ω²), σ_k² = (4k_BTκ/(2πQ))·ln√10
    const rates = internalTorqueRates(D, fs);
    const c = (4 * K_BOLTZMANN * T_K * sc.kappa * Math.log(INTERNAL_RATE_RATIO)) / (2 * Math.PI * Q);
    const w0 = Math.sqrt(sc.kappa / I), b = (I * w0) / Q;
    const Sth = (f: number) => {
      const w = 2 * Math.PI * f;
      let st = 0;
      for (const l of rates) st += (4 * c * l) / (l * l + w * w);
      const x = Math.PI * f * D;
      const keep = x < 1e-4 ? x * x / 3 : 1 - (Math.sin(x) / x) ** 2;
      return (st * keep) / ((sc.kappa - I * w * w) ** 2 + (b * w) ** 2);
    };
    // midpoint rule in ln f from 1e-9 Hz to Nyquist, 2·10⁵ points (the resonance spans ~400 of them)
    let expected = 0;
    const a = Math.log(1e-9), z = Math.log(fs / 2), N = 200000, du = (z - a) / N;
    for (let i = 0; i < N; i++) {
      const f = Math.exp(a + (i + 0.5) * du);
      expected += Sth(f) * f * du;
    }
    const equipartition = (K_BOLTZMANN * T_K) / sc.kappa;
    expect(se / expected).toBeLessThan(0.05);
    expect(Math.abs(mean - expected)).toBeLessThan(3 * se);
    expect(expected / equipartition).toBeGreaterThan(1.15);
  });

  it('the free decay is that of the complex stiffness κ(1 + i/Q): ω_d + iγ = ω₀·√(1 + i/Q), amplitude rate ≈ ω₀/(2Q)', () => {
    const I = 3.6e-5, T0 = 10, Q = 50;
    const common = { name: 'decay', duration_s: 600, sample_rate_Hz: 10, inertia_kg_m2: I, kappa_Nm_per_rad: kappaFromPeriod(I, T0), q: Q, initial: { amplitude_rad: 0.01, phase_rad: 0.7, equilibrium_rad: 0.002 } };
    const sc = parseScenario({ ...common, damping: 'internal', thermal_noise: false });
    const r = new Balance(sc, new Rng(1)).next(6000);
    // a loss angle φ = 1/Q: I·θ̈ + κ(1 + iφ)·θ = 0 has θ ∝ e^(iλt) with λ² = ω₀²(1 + iφ) (textbook complex
    // stiffness); √(1 + iφ) in polar form: modulus (1 + φ²)^¼, argument atan(φ)/2
    const w0 = (2 * Math.PI) / T0, phi = 1 / Q;
    const mod = Math.pow(1 + phi * phi, 0.25), arg = Math.atan(phi) / 2;
    const wd = w0 * mod * Math.cos(arg), g = w0 * mod * Math.sin(arg);
    expect(wd * wd - g * g).toBeCloseTo(w0 * w0, 12);
    expect(g / (w0 / (2 * Q))).toBeCloseTo(1, 3);
    let maxErr = 0;
    for (let i = 0; i < r.t.length; i++) maxErr = Math.max(maxErr, Math.abs(r.theta[i] - (0.002 + 0.01 * Math.exp(-g * r.t[i]) * Math.cos(wd * r.t[i] + 0.7))));
    expect(maxErr).toBeLessThan(1e-13);
    expect(r.torque_Nm).toBeUndefined();
  });

  it('a torque held over a step moves the pendulum as the integrated equation of motion says', () => {
    // a constant torque τ from rest: y(t) = (τ/κ)·(1 − e^(−γt)(cos ω_d t + (γ/ω_d) sin ω_d t)) (textbook step response)
    const I = 2e-5, kappa = kappaFromPeriod(I, 7), Q = 30;
    const w0 = Math.sqrt(kappa / I), g = w0 / (2 * Q), wd = Math.sqrt(w0 * w0 - g * g);
    const tq = 3e-9;
    // propagate the step response by the propagator's Γ and compare at t = 40 s
    const p = propagator(I, kappa, Q, 1 / 20, 0);
    let y = 0, v = 0;
    for (let i = 0; i < 800; i++) {
      const y1 = p.phi[0] * y + p.phi[1] * v + p.input[0] * tq;
      v = p.phi[2] * y + p.phi[3] * v + p.input[1] * tq;
      y = y1;
    }
    const t = 40;
    const exact = (tq / kappa) * (1 - Math.exp(-g * t) * (Math.cos(wd * t) + (g / wd) * Math.sin(wd * t)));
    expect(y / exact).toBeCloseTo(1, 10);
  });
});

describe('scenario field damping', () => {
  it('defaults to viscous and refuses anything but viscous or internal, naming the field', () => {
    const min = { name: 'm', duration_s: 10, sample_rate_Hz: 10, inertia_kg_m2: 1e-5, kappa_Nm_per_rad: 1e-8, q: 100 };
    expect(parseScenario(min).damping).toBe('viscous');
    expect(parseScenario({ ...min, damping: 'internal' }).damping).toBe('internal');
    expect(() => parseScenario({ ...min, damping: 'structural' }, 'sc.json')).toThrow(ScenarioError);
    expect(() => parseScenario({ ...min, damping: 'structural' }, 'sc.json')).toThrow(/sc\.json: damping: must be "viscous" or "internal"/);
  });

  it('a viscous scenario gives, for the same seed, the samples it gave before internal damping existed', () => {
    // test/fixtures/simulator/viscous-regression.json: every 10th true angle of this scenario
    // and seed, written by the simulator before the damping field was added (README there)
    const fx = JSON.parse(readFileSync(new URL('../fixtures/simulator/viscous-regression.json', import.meta.url), 'utf8')) as { scenario: object; seed: number; every: number; theta_rad: number[] };
    const sc = parseScenario(fx.scenario);
    expect(sc.damping).toBe('viscous');
    const src = new SimulatorSource(sc, fx.seed);
    const blk = src.next(src.total);
    const got: number[] = [];
    for (let i = 0; i < blk.n; i += fx.every) got.push(blk.theta[i]);
    expect(got).toEqual(fx.theta_rad);
  });
});
