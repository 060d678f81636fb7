/**
 * fitLM against the NIST StRD nonlinear least-squares reference problems
 * (NIST/ITL Statistical Reference Datasets, certified values computed by
 * NIST in 128-bit arithmetic; files in test/fixtures/nist with their headers).
 */
import { readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { fitLM, type LMProblem } from '../../src/analysis/lm.js';

const here = dirname(fileURLToPath(import.meta.url));

interface Nist {
  start1: number[]; start2: number[]; certified: number[]; certifiedSd: number[];
  rss: number; residualSd: number; x: number[]; y: number[];
}

/** parse a NIST StRD .dat file: parameter table, RSS, residual SD, data (y x) */
function loadNist(name: string): Nist {
  const lines = readFileSync(join(here, '../fixtures/nist', `${name}.dat`), 'utf8').split(/\r?\n/);
  const start1: number[] = [], start2: number[] = [], certified: number[] = [], certifiedSd: number[] = [];
  let rss = NaN, residualSd = NaN;
  const x: number[] = [], y: number[] = [];
  let inData = false;
  for (const line of lines) {
    const pm = /^\s*b\d+\s*=\s*(\S+)\s+(\S+)\s+(\S+)\s+(\S+)/.exec(line);
    if (pm && !inData) {
      start1.push(Number(pm[1])); start2.push(Number(pm[2]));
      certified.push(Number(pm[3])); certifiedSd.push(Number(pm[4]));
      continue;
    }
    const rs = /^Residual Sum of Squares:\s+(\S+)/.exec(line);
    if (rs) rss = Number(rs[1]);
    const sd = /^Residual Standard Deviation:\s+(\S+)/.exec(line);
    if (sd) residualSd = Number(sd[1]);
    if (/^Data:\s+y\s+x/.test(line)) { inData = true; continue; }
    if (inData) {
      const v = line.trim().split(/\s+/).map(Number);
      if (v.length === 2 && v.every(Number.isFinite)) { y.push(v[0]); x.push(v[1]); }
    }
  }
  return { start1, start2, certified, certifiedSd, rss, residualSd, x, y };
}

type Model = LMProblem['model'];
const models: Record<string, { model: Model; jacobian?: LMProblem['jacobian'] }> = {
  Misra1a: {
    model: ([b1, b2]) => (x) => b1 * (1 - Math.exp(-b2 * x)),
    jacobian: ([b1, b2]) => (x) => [1 - Math.exp(-b2 * x), b1 * x * Math.exp(-b2 * x)],
  },
  Chwirut2: { model: ([b1, b2, b3]) => (x) => Math.exp(-b1 * x) / (b2 + b3 * x) },
  Lanczos3: {
    model: ([b1, b2, b3, b4, b5, b6]) => (x) => b1 * Math.exp(-b2 * x) + b3 * Math.exp(-b4 * x) + b5 * Math.exp(-b6 * x),
  },
  Thurber: {
    model: ([b1, b2, b3, b4, b5, b6, b7]) => (x) =>
      (b1 + b2 * x + b3 * x * x + b4 * x ** 3) / (1 + b5 * x + b6 * x * x + b7 * x ** 3),
  },
  MGH09: {
    model: ([b1, b2, b3, b4]) => (x) => (b1 * (x * x + x * b2)) / (x * x + x * b3 + b4),
    jacobian: ([b1, b2, b3, b4]) => (x) => {
      const num = x * x + x * b2, den = x * x + x * b3 + b4;
      return [num / den, (b1 * x) / den, (-b1 * num * x) / (den * den), (-b1 * num) / (den * den)];
    },
  },
  MGH10: { model: ([b1, b2, b3]) => (x) => b1 * Math.exp(b2 / (x + b3)) },
  BoxBOD: {
    model: ([b1, b2]) => (x) => b1 * (1 - Math.exp(-b2 * x)),
    jacobian: ([b1, b2]) => (x) => [1 - Math.exp(-b2 * x), b1 * x * Math.exp(-b2 * x)],
  },
  Eckerle4: {
    model: ([b1, b2, b3]) => (x) => (b1 / b2) * Math.exp(-0.5 * ((x - b3) / b2) ** 2),
  },
  Rat43: { model: ([b1, b2, b3, b4]) => (x) => b1 / (1 + Math.exp(b2 - b3 * x)) ** (1 / b4) },
  Bennett5: { model: ([b1, b2, b3]) => (x) => b1 * (b2 + x) ** (-1 / b3) },
  ENSO: {
    model: ([b1, b2, b3, b4, b5, b6, b7, b8, b9]) => (x) =>
      b1 + b2 * Math.cos((2 * Math.PI * x) / 12) + b3 * Math.sin((2 * Math.PI * x) / 12) +
      b5 * Math.cos((2 * Math.PI * x) / b4) + b6 * Math.sin((2 * Math.PI * x) / b4) +
      b8 * Math.cos((2 * Math.PI * x) / b7) + b9 * Math.sin((2 * Math.PI * x) / b7),
  },
};

/** number of matching significant digits of a vs the certified c (LRE, as in McCullough's StRD studies) */
function lre(a: number, c: number): number {
  if (a === c) return 15;
  return -Math.log10(Math.abs(a - c) / Math.abs(c));
}

function fit(name: string, start: number[]) {
  const d = loadNist(name);
  const m = models[name];
  return { d, r: fitLM({ x: d.x, y: d.y, model: m.model, jacobian: m.jacobian, p0: start }) };
}

function check(name: string, which: 1 | 2): void {
  const d0 = loadNist(name);
  const { d, r } = fit(name, which === 1 ? d0.start1 : d0.start2);
  expect(r.converged, `${name} start ${which}: ${r.reason}`).toBe(true);
  for (let j = 0; j < d.certified.length; j++) {
    expect(lre(r.params[j], d.certified[j]), `${name} start ${which} b${j + 1} = ${r.params[j]} vs ${d.certified[j]}`).toBeGreaterThanOrEqual(6);
    // certified standard deviations to ≥ 3 digits (they come from the same s²·(JᵀJ)⁻¹)
    expect(lre(r.sigmas[j], d.certifiedSd[j]), `${name} sd b${j + 1} = ${r.sigmas[j]} vs ${d.certifiedSd[j]}`).toBeGreaterThanOrEqual(3);
  }
  expect(lre(r.ssr, d.rss), `${name} RSS ${r.ssr} vs ${d.rss}`).toBeGreaterThanOrEqual(6);
  expect(lre(r.residualSd, d.residualSd), `${name} residual SD`).toBeGreaterThanOrEqual(5);
}

const all = ['Misra1a', 'Chwirut2', 'Lanczos3', 'Thurber', 'MGH09', 'MGH10', 'BoxBOD', 'Eckerle4', 'Rat43', 'Bennett5', 'ENSO'];

describe('fitLM on NIST StRD (certified values)', () => {
  for (const name of all) {
    it(`${name} from Start 2`, () => check(name, 2));
    // MGH10 from Start 1 (b2 = 4e5, b3 = 2.5e4, two orders of magnitude off)
    // is not reached by our iteration or its multistart: checked below to be
    // reported as not converged rather than as a wrong answer.
    if (name !== 'MGH10') it(`${name} from Start 1`, () => check(name, 1));
  }

  it('MGH10 from Start 1 says it did not converge instead of returning wrong numbers', () => {
    const d0 = loadNist('MGH10');
    const { d, r } = fit('MGH10', d0.start1);
    const right = r.params.every((v, j) => lre(v, d.certified[j]) >= 6);
    expect(right || !r.converged, r.reason).toBe(true);
  });

  it('library-only stage alone reaches Misra1a from Start 2 (cross-check of the wrapper)', () => {
    const d = loadNist('Misra1a');
    const r = fitLM({ x: d.x, y: d.y, model: models.Misra1a.model, jacobian: models.Misra1a.jacobian, p0: d.start2 }, { libraryOnly: true });
    for (let j = 0; j < 2; j++) expect(lre(r.params[j], d.certified[j])).toBeGreaterThanOrEqual(6);
  });

  it('weights are folded in: a weighted fit equals the unweighted fit of √w-scaled data', () => {
    // exact relation, so no reference needed: minimising Σ w(y − f)² with f = b1(1 − e^(−b2 x))
    // is minimising Σ (√w·y − √w·f)²; compare with the same fit on duplicated points (w = 2 ≡ two copies)
    const d = loadNist('Misra1a');
    const w = d.x.map((_, i) => (i % 3 === 0 ? 2 : 1));
    const rw = fitLM({ x: d.x, y: d.y, model: models.Misra1a.model, p0: d.start2, weights: w });
    const xs: number[] = [], ys: number[] = [];
    d.x.forEach((x, i) => { for (let k = 0; k < w[i]; k++) { xs.push(x); ys.push(d.y[i]); } });
    const rd = fitLM({ x: xs, y: ys, model: models.Misra1a.model, p0: d.start2 });
    expect(rw.converged).toBe(true);
    for (let j = 0; j < 2; j++) expect(lre(rw.params[j], rd.params[j])).toBeGreaterThanOrEqual(8);
    expect(lre(rw.ssr, rd.ssr)).toBeGreaterThanOrEqual(8);
  });

  it('bounds: a parameter held on its bound is flagged and not called converged', () => {
    const d = loadNist('Misra1a');
    const r = fitLM({ x: d.x, y: d.y, model: models.Misra1a.model, p0: d.start2, max: [200, 1] });
    expect(r.atBound[0]).toBe(true);
    expect(r.params[0]).toBeLessThanOrEqual(200);
    expect(r.converged).toBe(false);
  });
});
