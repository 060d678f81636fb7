import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { ambiguousMaterial, lookupMaterial, MATERIALS, shearModulusDeviation, tensileStrengthAt } from '../../src/physics/materials.js';

// Handbook rows copied with their source ids (fixture; see test/fixtures/materials/SOURCES.md)
const rows = readFileSync(new URL('../fixtures/materials/fibre_materials.csv', import.meta.url), 'utf8')
  .trim().split('\n').slice(1).map((l) => {
    const f = l.match(/("([^"]|"")*"|[^,]*)(,|$)/g)!.map((x) => x.replace(/,$/, '').replace(/^"|"$/g, ''));
    return { material: f[0], designation: f[1], property: f[2], value: Number(f[3]), unit: f[4], source: f[6], status: f[7] };
  });
const row = (material: string, property: string, source: string) => {
  const r = rows.find((x) => x.material === material && x.property === property && x.source === source);
  if (!r) throw new Error(`no fixture row ${material}/${property}/${source}`);
  return r.value * (r.unit === 'GPa' ? 1e9 : 1e6);
};

describe('materials table', () => {
  it('lookup tolerates case and aliases', () => {
    expect(lookupMaterial('Music Wire')!.name).toBe('music wire');
    expect(lookupMaterial('Stainless')!.name).toBe('stainless steel');
    expect(lookupMaterial('piano wire')!.name).toBe('music wire');
    expect(lookupMaterial('W')!.name).toBe('tungsten');
    expect(lookupMaterial('tungsten wire')!.name).toBe('tungsten');
    expect(lookupMaterial('Fused_Silica')!.name).toBe('fused silica');
    expect(lookupMaterial('BeCu')!.name).toBe('beryllium copper');
    expect(lookupMaterial('Ti-6Al-4V')!.name).toBe('Ti-6Al-4V');
    expect(lookupMaterial('unobtainium')).toBeUndefined();
  });

  it('G values match the handbook rows they cite', () => {
    // SMI Handbook of Spring Design via ODOP table
    expect(lookupMaterial('music wire')!.shearModulus.value).toBeCloseTo(row('music wire', 'shear_modulus_G', 'ODOP_US'), -6);
    expect(lookupMaterial('phosphor bronze')!.shearModulus.value).toBeCloseTo(row('phosphor bronze', 'shear_modulus_G', 'ODOP_US'), -6);
    expect(lookupMaterial('beryllium copper')!.shearModulus.value).toBeCloseTo(row('beryllium copper', 'shear_modulus_G', 'ODOP_US'), -6);
    // ASM/MatWeb Ti-6Al-4V STA bar datasheet
    expect(lookupMaterial('ti64')!.shearModulus.value).toBeCloseTo(row('titanium alloy', 'shear_modulus_G', 'MATWEB_MTP645'), -6);
    // element table (pymatgen copy) and MakeItFrom fused silica
    expect(lookupMaterial('tungsten')!.shearModulus.value).toBeCloseTo(row('tungsten', 'shear_modulus_G', 'PYMATGEN'), -6);
    expect(lookupMaterial('silica')!.shearModulus.value).toBeCloseTo(row('fused silica', 'shear_modulus_G', 'MAKEITFROM_SIO2'), -6);
    // common practice, no source: music wire G ≈ 79–81 GPa; tungsten ≈ 161 GPa
    expect(lookupMaterial('music wire')!.shearModulus.value).toBeGreaterThan(78e9);
    expect(lookupMaterial('music wire')!.shearModulus.value).toBeLessThan(82e9);
  });

  it('music-wire tensile strength matches the handbook at the table diameters and falls with diameter', () => {
    const m = lookupMaterial('music wire')!;
    expect(tensileStrengthAt(m, 0.010 * 0.0254)).toBeCloseTo(row('music wire', 'tensile_strength_0.010in_(0.254mm)', 'ODOP_US'), -6);
    expect(tensileStrengthAt(m, 0.400 * 0.0254)).toBeCloseTo(row('music wire', 'tensile_strength_0.400in_(10.2mm)', 'ODOP_US'), -6);
    expect(tensileStrengthAt(m, 0.05 * 0.0254)).toBeLessThan(tensileStrengthAt(m, 0.02 * 0.0254));
    // clamped outside the table range
    expect(tensileStrengthAt(m, 1e-5)).toBe(tensileStrengthAt(m, 0.010 * 0.0254));
  });

  it('every value carries a source', () => {
    for (const m of MATERIALS) {
      expect(m.shearModulus.source.length).toBeGreaterThan(0);
      expect(m.tensileStrength.source.length).toBeGreaterThan(0);
      if (m.dGdT_per_K) expect(m.dGdT_per_K.source).toMatch(/\S/);
    }
  });

  it('"steel" is not silently music wire: it names two materials 10 % apart', () => {
    for (const n of ['steel', 'Spring Steel', 'steel wire']) {
      expect(lookupMaterial(n)).toBeUndefined();
      expect(ambiguousMaterial(n)).toEqual(['music wire', 'stainless steel']);
    }
    expect(ambiguousMaterial('tungsten')).toBeUndefined();
    // ODOP_US: Type 302 stainless gg = 10000 ksi, 17-7 PH 11000 ksi; music wire 11500 ksi
    expect(lookupMaterial('stainless steel')!.shearModulus.value).toBeCloseTo(row('stainless steel', 'shear_modulus_G', 'ODOP_US'), -6);
    expect(tensileStrengthAt(lookupMaterial('302')!, 0.010 * 0.0254)).toBeCloseTo(row('stainless steel', 'tensile_strength_0.010in_(0.254mm)', 'ODOP_US'), -6);
  });

  it('every material has a handbook span of G that holds its value, with a source', () => {
    for (const m of MATERIALS) {
      const r = m.shearModulusRange;
      expect(r.lo_Pa).toBeLessThanOrEqual(m.shearModulus.value);
      expect(r.hi_Pa).toBeGreaterThanOrEqual(m.shearModulus.value);
      expect(r.source).toMatch(/\S/);
    }
    // the spans the trade quotes (common practice, no source; the ends of each span are sourced in the table):
    // music wire ≈ 79–83 GPa, stainless ≈ 69–77 GPa, beryllium copper ≈ 45–50 GPa
    const span = (n: string) => [lookupMaterial(n)!.shearModulusRange.lo_Pa / 1e9, lookupMaterial(n)!.shearModulusRange.hi_Pa / 1e9];
    const [mwLo, mwHi] = span('music wire'), [ssLo, ssHi] = span('stainless steel'), [bcLo, bcHi] = span('BeCu');
    expect(mwLo).toBeGreaterThanOrEqual(79); expect(mwHi).toBeLessThanOrEqual(83);
    expect(ssLo).toBeGreaterThanOrEqual(68.9); expect(ssHi).toBeLessThanOrEqual(77);
    expect(bcLo).toBeGreaterThanOrEqual(44.8); expect(bcHi).toBeLessThanOrEqual(50);
    // the stainless span ends at 17-7 PH's value in the fixture
    const ph177 = rows.find((x) => x.material === 'stainless steel' && x.designation.startsWith('17-7') && x.property === 'shear_modulus_G')!;
    expect(ssHi).toBeCloseTo(ph177.value, 6);
  });

  it('the deviation from the span is relative to its nearer end, and 0 inside', () => {
    const w = lookupMaterial('tungsten')!;
    expect(shearModulusDeviation(w, 160e9)).toBe(0);
    expect(shearModulusDeviation(w, 2 * 165e9)).toBeCloseTo(1, 12);
    expect(shearModulusDeviation(w, 75e9)).toBeCloseTo(-0.5, 12);
  });
});
