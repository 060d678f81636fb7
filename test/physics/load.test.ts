import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { breakingMass, loadFraction, suspendedWeight, tensileStress } from '../../src/physics/load.js';
import { G_STANDARD } from '../../src/physics/constants.js';
import { lookupMaterial, tensileStrengthAt } from '../../src/physics/materials.js';
import { parseCodata } from '../fixtures/materials/parse-codata.js';

const codata = parseCodata(readFileSync(new URL('../fixtures/materials/codata2018_excerpt.txt', import.meta.url), 'utf8'));

describe('tensile load', () => {
  it('g_n is the CODATA 2018 standard acceleration of gravity', () => {
    // CODATA 2018 via NIST allascii.txt excerpt (fixture)
    expect(G_STANDARD).toBe(codata.get('standard acceleration of gravity')!.value);
  });
  it('σ = m·g/(πd²/4)', () => {
    // 1 kg on a 1 mm wire: 9.80665 N / 7.853982e-7 m² = 12.48621 MPa (worked by hand)
    expect(tensileStress(1, 1e-3) / 12.48621e6).toBeCloseTo(1, 6);
  });
  it('the tension is the weight m·g_n', () => {
    expect(suspendedWeight(0.5)).toBe(0.5 * 9.80665);
    expect(tensileStress(0.5, 1e-3)).toBeCloseTo(suspendedWeight(0.5) / (Math.PI * 0.25e-6), 3);
  });
  it('breaking load and load fraction are consistent', () => {
    const m = breakingMass(1e-4, 2e9);
    expect(loadFraction(m, 1e-4, 2e9)).toBeCloseTo(1, 12);
    expect(loadFraction(m / 2, 1e-4, 2e9)).toBeCloseTo(0.5, 12);
  });
  it('the classroom piano wire carrying 0.4 kg is far below its breaking load', () => {
    // 0.025 in music wire: tensile strength ≈ 2190 MPa (log-log between ODOP's
    // 0.010 in and 0.400 in values, SMI Handbook of Spring Design via ODOP table)
    const d = 0.025 * 0.0254;
    const uts = tensileStrengthAt(lookupMaterial('music wire')!, d);
    // rule of thumb: fibres are loaded to about half their breaking stress (common practice, no source);
    // this bench rig with a heavy wire sits far below that
    expect(loadFraction(0.4, d, uts)).toBeLessThan(0.01);
    expect(breakingMass(d, uts)).toBeGreaterThan(60);
  });
});
