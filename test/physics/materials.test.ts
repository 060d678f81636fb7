import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { lookupMaterial, MATERIALS, tensileStrengthAt } from '../../src/physics/materials.js';

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
    expect(lookupMaterial('steel')!.name).toBe('music wire');
    expect(lookupMaterial('Music Wire')!.name).toBe('music wire');
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
});
