/**
 * The overlapping Allan deviation against the worked values of NIST SP 1065
 * (W. J. Riley, "Handbook of Frequency Stability Analysis", 2008, section 12;
 * fixtures and their provenance in test/fixtures/sp1065/SOURCES.md).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { octaveFactors, overlappingAllan } from '../../src/analysis/allan-deviation.js';
import { normals } from '../helpers/blocks.js';

const ref = JSON.parse(readFileSync(new URL('../fixtures/sp1065/sp1065_reference.json', import.meta.url), 'utf8')) as {
  dataset_1000pt: { averaging_factors: number[]; published: { oadev: number[] } };
  dataset_nbs_9pt: { frequency: number[]; averaging_factors: number[]; published: { oadev: number[] } };
};
const riley = readFileSync(new URL('../fixtures/sp1065/riley_1000pt_frequency.txt', import.meta.url), 'utf8').trim().split('\n').map(Number);

/** Relative agreement to the 7 significant digits SP 1065 prints. */
const seven = (got: number, want: number) => expect(Math.abs(got / want - 1)).toBeLessThan(6e-7);

describe('overlapping Allan deviation', () => {
  it('reproduces SP 1065 for the 1000-point set at m = 1, 10, 100', () => {
    const d = ref.dataset_1000pt;
    expect(riley.length).toBe(1000);
    const r = overlappingAllan(riley, 1, d.averaging_factors);
    expect(r.tau_s).toEqual([1, 10, 100]);
    r.adev.forEach((a, i) => seven(a, d.published.oadev[i]));
    expect(r.n).toEqual([999, 981, 801]); // M − 2m + 1 terms
  });

  it('reproduces SP 1065 for the 1000-point set generated from its definition', () => {
    // n₀ = 1234567890, n_{i+1} = 16807·n_i mod 2147483647, y_i = n_i/2147483647 (the fixture's definition)
    const y = new Float64Array(1000);
    let n = 1234567890;
    for (let i = 0; i < 1000; i++) {
      y[i] = n / 2147483647;
      n = (16807 * n) % 2147483647;
    }
    const r = overlappingAllan(y, 1, ref.dataset_1000pt.averaging_factors);
    r.adev.forEach((a, i) => seven(a, ref.dataset_1000pt.published.oadev[i]));
  });

  it('reproduces SP 1065 for the 9-point NBS set at m = 1, 2, and scales with τ₀', () => {
    const d = ref.dataset_nbs_9pt;
    const r = overlappingAllan(d.frequency, 1, d.averaging_factors);
    r.adev.forEach((a, i) => seven(a, d.published.oadev[i]));
    const s = overlappingAllan(d.frequency, 60, d.averaging_factors);
    expect(s.tau_s).toEqual([60, 120]);
    expect(s.adev).toEqual(r.adev);
  });

  it('a level far above the variations costs no digits (the mean is taken out first)', () => {
    const lifted = riley.map((v) => 1e-3 + 1e-9 * v);
    const r = overlappingAllan(lifted, 1, [1, 10, 100]);
    r.adev.forEach((a, i) => expect(Math.abs(a / (1e-9 * ref.dataset_1000pt.published.oadev[i]) - 1)).toBeLessThan(1e-6));
  });

  it('white frequency noise: σ_y(τ) = σ/√m (white FM, SP 1065 Table of noise types)', () => {
    const g = normals(17);
    const y = Float64Array.from({ length: 20000 }, () => g());
    const r = overlappingAllan(y, 1);
    expect(r.tau_s.slice(0, 4)).toEqual([1, 2, 4, 8]);
    for (let i = 0; i < 5; i++) expect(r.adev[i] * Math.sqrt(r.tau_s[i])).toBeGreaterThan(0.95);
    for (let i = 0; i < 5; i++) expect(r.adev[i] * Math.sqrt(r.tau_s[i])).toBeLessThan(1.05);
  });

  it('missing values (NaN) leave out only the terms that touch them', () => {
    const y = riley.slice();
    y[500] = NaN;
    const r = overlappingAllan(y, 1, [1, 10]);
    // m = 1: terms j = 499 and 500 touch index 500; m = 10: the 20 terms j = 481…500
    expect(r.n).toEqual([997, 961]);
    // the same as the terms computed by hand from the two halves
    const part = (a: number[], m: number) => {
      let s = 0, c = 0;
      for (let j = 0; j + 2 * m <= a.length; j++) {
        let d = 0;
        for (let i = j; i < j + m; i++) d += a[i + m] - a[i];
        s += (d / m) ** 2;
        c++;
      }
      return { s, c };
    };
    const a = part(riley.slice(0, 500), 10), b = part(riley.slice(501), 10);
    expect(r.adev[1]).toBeCloseTo(Math.sqrt((a.s + b.s) / (2 * (a.c + b.c))), 12);
  });

  it('octave factors stop where fewer than two terms remain', () => {
    expect(octaveFactors(9)).toEqual([1, 2, 4]);
    expect(octaveFactors(10)).toEqual([1, 2, 4]);
    expect(octaveFactors(2)).toEqual([]);
    expect(overlappingAllan([1, 2], 1).tau_s).toEqual([]);
  });
});
