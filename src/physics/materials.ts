/**
 * Fibre materials: room-temperature shear modulus, tensile strength and the
 * temperature coefficient of G, each value with where it comes from. Values
 * as in test/fixtures/materials/fibre_materials.csv (source ids as there, each
 * source named in full in test/fixtures/materials/SOURCES.md): ODOP_US = the ODOP spring-material table, whose key cites a
 * major spring maker's design handbook and the SMI Handbook of Spring Design;
 * MATWEB_*, PYMATGEN, MAKEITFROM_SIO2, GLASS_STRENGTH_BLOG as listed there. "from memory" marks commonly quoted values with no
 * citable copy. Wire strength depends strongly on diameter and temper.
 */

/** A number with the id of its source (or "from memory"). */
export interface Sourced {
  value: number;
  source: string;
}

/**
 * The span of G that handbooks give for one material as it is sold (one alloy, its tempers and
 * wire sizes), Pa: a fitted G far outside it says that an input is wrong, not the fibre unusual.
 */
export interface SourcedRange {
  lo_Pa: number;
  hi_Pa: number;
  source: string;
}

/** Tensile strength at a given wire diameter. */
export interface StrengthPoint {
  diameter_m: number;
  value_Pa: number;
}

/** One fibre material with sourced room-temperature properties. */
export interface Material {
  /** canonical name */
  name: string;
  /** accepted alternative names (lower case) */
  aliases: readonly string[];
  designation: string;
  /** shear modulus G, Pa */
  shearModulus: Sourced;
  /** the handbook span of G (contains shearModulus.value) */
  shearModulusRange: SourcedRange;
  /** Young's modulus E, Pa, where the source gives it */
  youngsModulus?: Sourced;
  /**
   * Tensile strength, Pa: one value, or points by wire diameter (interpolated
   * log-log between them, clamped to the end values outside).
   */
  tensileStrength: { points: readonly StrengthPoint[]; source: string; note?: string };
  /** (1/G)·dG/dT, per kelvin, where known */
  dGdT_per_K?: Sourced;
  /** allowable torsional shear stress as a fraction of the tensile strength, where practice gives one */
  torsionFraction?: Sourced;
  /** density, kg/m³, where known */
  density?: Sourced;
}

const inch = 0.0254;
const MPa = 1e6;
const GPa = 1e9;

/** The materials table (values and source ids as in test/fixtures/materials/fibre_materials.csv). */
export const MATERIALS: readonly Material[] = [
  {
    name: 'music wire',
    // not "steel": a stainless fibre is 10 % softer (see AMBIGUOUS below)
    aliases: ['music wire', 'piano wire', 'astm a228', 'a228', 'music-wire', 'piano-wire'],
    designation: 'ASTM A228',
    // ODOP_US: gg = 11500 ksi (SMI Handbook of Spring Design value 11.5 Mpsi)
    shearModulus: { value: 79.29 * GPa, source: 'ODOP_US' },
    // 11.5 Mpsi (ODOP_US) to 12.0 Mpsi, the thinnest wire in Shigley's table by diameter (MEMORY_SHIGLEY, from memory)
    shearModulusRange: { lo_Pa: 79.29 * GPa, hi_Pa: 82.74 * GPa, source: 'ODOP_US (low end); MEMORY_SHIGLEY, from memory (high end)' },
    youngsModulus: { value: 206.8 * GPa, source: 'ODOP_US' },
    tensileStrength: {
      points: [
        { diameter_m: 0.01 * inch, value_Pa: 2551 * MPa },
        { diameter_m: 0.4 * inch, value_Pa: 1379 * MPa },
      ],
      source: 'ODOP_US',
      note: 't010 = 370 ksi, t400 = 200 ksi; log-log interpolation between them',
    },
    dGdT_per_K: { value: -2.5e-4, source: 'from memory (typical for carbon spring steel, approximate)' },
    torsionFraction: { value: 0.45, source: 'spring-design practice: 45 % of tensile strength (common practice, no source)' },
    density: { value: 7850, source: 'from memory' },
  },
  {
    name: 'tungsten',
    aliases: ['tungsten', 'w', 'wolfram'],
    designation: 'W',
    shearModulus: { value: 161 * GPa, source: 'PYMATGEN (MATMAKE_W gives 160.6 GPa citing the CRC Handbook)' },
    // drawn wire is textured: a few per cent either side of the element's value (from memory)
    shearModulusRange: { lo_Pa: 150 * GPa, hi_Pa: 165 * GPa, source: 'PYMATGEN, MATMAKE_W (160.6–161 GPa); the span for drawn wire from memory' },
    youngsModulus: { value: 411 * GPa, source: 'PYMATGEN' },
    tensileStrength: {
      points: [{ diameter_m: 5e-5, value_Pa: 3000 * MPa }],
      source: 'from memory',
      note: 'cold-drawn fine wire, commonly quoted 2500–4000 MPa; bulk W is 980 MPa (MATWEB_W)',
    },
    dGdT_per_K: { value: -1.0e-4, source: 'from memory (approximate)' },
    density: { value: 19250, source: 'PYMATGEN' },
  },
  {
    name: 'fused silica',
    aliases: ['fused silica', 'silica', 'fused quartz', 'quartz', 'sio2', 'fused-silica'],
    designation: 'SiO2 glass',
    shearModulus: { value: 31 * GPa, source: 'MAKEITFROM_SIO2' },
    shearModulusRange: { lo_Pa: 30 * GPa, hi_Pa: 32 * GPa, source: 'MAKEITFROM_SIO2 (31 GPa); 31.4 GPa for Corning 7980 class glass from memory (MEMORY); span from memory' },
    youngsModulus: { value: 73 * GPa, source: 'MAKEITFROM_SIO2' },
    tensileStrength: {
      points: [{ diameter_m: 1e-4, value_Pa: 5500 * MPa }],
      source: 'GLASS_STRENGTH_BLOG',
      note: 'pristine drawn fibre; bulk design value 50 MPa (MAKEITFROM_SIO2) — a scratched fibre is far weaker',
    },
    // fused silica stiffens as it warms (anomalous); sign and size from memory
    dGdT_per_K: { value: +1.5e-4, source: 'from memory (approximate; G of fused silica rises with temperature)' },
    density: { value: 2200, source: 'MAKEITFROM_SIO2' },
  },
  {
    name: 'beryllium copper',
    aliases: ['beryllium copper', 'becu', 'cube2', 'c17200', 'berylium copper', 'beryllium-copper', 'astm b197'],
    designation: 'ASTM B197 (CuBe2/C17200)',
    shearModulus: { value: 44.82 * GPa, source: 'ODOP_US (BOYNE gives 47 GPa for CB101)' },
    // the aged tempers run higher; 50 GPa is the top of what is commonly quoted (from memory)
    shearModulusRange: { lo_Pa: 44.82 * GPa, hi_Pa: 50 * GPa, source: 'ODOP_US (44.82 GPa), BOYNE (47 GPa); 50 GPa from memory' },
    youngsModulus: { value: 127.6 * GPa, source: 'ODOP_US' },
    tensileStrength: {
      points: [
        { diameter_m: 0.01 * inch, value_Pa: 1241 * MPa },
        { diameter_m: 0.4 * inch, value_Pa: 1172 * MPa },
      ],
      source: 'ODOP_US',
    },
    density: { value: 8250, source: 'from memory' },
  },
  {
    name: 'phosphor bronze',
    aliases: ['phosphor bronze', 'phosphor-bronze', 'cusn6', 'cusn8', 'astm b159', 'bronze'],
    designation: 'ASTM B159 (CuSn6/CuSn8)',
    shearModulus: { value: 43.09 * GPa, source: 'ODOP_US' },
    shearModulusRange: { lo_Pa: 41 * GPa, hi_Pa: 44 * GPa, source: 'ODOP_US (43.09 GPa); 41–44 GPa commonly quoted, from memory' },
    youngsModulus: { value: 103.4 * GPa, source: 'ODOP_US' },
    tensileStrength: {
      points: [
        { diameter_m: 0.01 * inch, value_Pa: 1000 * MPa },
        { diameter_m: 0.4 * inch, value_Pa: 724 * MPa },
      ],
      source: 'ODOP_US',
    },
    density: { value: 8860, source: 'from memory' },
  },
  {
    name: 'Ti-6Al-4V',
    aliases: ['ti-6al-4v', 'ti6al4v', 'ti64', 'titanium', 'grade 5 titanium', 'titanium grade 5'],
    designation: 'Ti-6Al-4V (Grade 5) STA bar',
    shearModulus: { value: 44 * GPa, source: 'MATWEB_MTP645' },
    shearModulusRange: { lo_Pa: 40 * GPa, hi_Pa: 45 * GPa, source: 'MATWEB_MTP645 (44 GPa); 40–45 GPa across tempers from memory' },
    youngsModulus: { value: 114 * GPa, source: 'MATWEB_MTP645' },
    tensileStrength: { points: [{ diameter_m: 0.01, value_Pa: 1035 * MPa }], source: 'MATWEB_MTP645', note: 'bar stock, solution treated and aged' },
    density: { value: 4430, source: 'from memory' },
  },
  {
    name: 'beta-C titanium',
    aliases: ['beta-c titanium', 'beta-c', 'beta c', 'ti-3al-8v-6cr-4mo-4zr', 'ams 4917'],
    designation: 'Beta-C (Ti-3Al-8V-6Cr-4Mo-4Zr; AMS 4917)',
    shearModulus: { value: 42.06 * GPa, source: 'ODOP_US' },
    shearModulusRange: { lo_Pa: 40 * GPa, hi_Pa: 43 * GPa, source: 'ODOP_US (42.06 GPa); span from memory' },
    youngsModulus: { value: 113.8 * GPa, source: 'ODOP_US' },
    tensileStrength: {
      points: [
        { diameter_m: 0.01 * inch, value_Pa: 1358 * MPa },
        { diameter_m: 0.4 * inch, value_Pa: 1172 * MPa },
      ],
      source: 'ODOP_US',
    },
  },
  {
    name: 'stainless steel',
    aliases: ['stainless steel', 'stainless', 'stainless steel 302', 'type 302', '302', 'ss302', '302 stainless', 'astm a313', 'a313', 'stainless-steel'],
    designation: 'Type 302 spring wire (ASTM A313)',
    // ODOP_US: gg = 10000 ksi for Types 302 and 316, 11000 ksi for 17-7 PH (condition CH)
    shearModulus: { value: 68.95 * GPa, source: 'ODOP_US (Type 302)' },
    shearModulusRange: { lo_Pa: 68.95 * GPa, hi_Pa: 75.84 * GPa, source: 'ODOP_US: Types 302/316 (10.0 Mpsi) to 17-7 PH (11.0 Mpsi)' },
    youngsModulus: { value: 193.1 * GPa, source: 'ODOP_US' },
    tensileStrength: {
      points: [
        { diameter_m: 0.01 * inch, value_Pa: 2275 * MPa },
        { diameter_m: 0.4 * inch, value_Pa: 1000 * MPa },
      ],
      source: 'ODOP_US',
      note: 't010 = 330 ksi, t400 = 145 ksi (Type 302); log-log interpolation between them',
    },
    density: { value: 7920, source: 'ODOP_US (0.286 lb/in³)' },
  },
];

/**
 * Names that do not say which material is meant: "steel" is music wire (G ≈ 79–83 GPa) or stainless
 * (≈ 69–76 GPa), 10 % apart — more than a careful measurement's error — so it is not looked up.
 */
const AMBIGUOUS: Readonly<Record<string, readonly string[]>> = {
  steel: ['music wire', 'stainless steel'],
  'spring steel': ['music wire', 'stainless steel'],
  'steel wire': ['music wire', 'stainless steel'],
};

const norm = (s: string): string => s.trim().toLowerCase().replace(/[\s_]+/g, ' ');

/** Find a material by name or alias, ignoring case, spaces/underscores and a trailing "wire"/"fibre"; undefined if unknown. */
export function lookupMaterial(name: string): Material | undefined {
  const n = norm(name);
  const bare = n.replace(/ (wire|fibre|fiber)$/, '');
  for (const m of MATERIALS) {
    for (const a of [norm(m.name), ...m.aliases]) {
      if (a === n || a === bare) return m;
    }
  }
  return undefined;
}

/** The materials a name could mean when it names none of them alone ("steel"); undefined for any other name. */
export function ambiguousMaterial(name: string): readonly string[] | undefined {
  const n = norm(name);
  return AMBIGUOUS[n] ?? AMBIGUOUS[n.replace(/ (fibre|fiber)$/, '')];
}

/**
 * How far G lies outside the material's handbook span, relative to the nearer end:
 * G/hi − 1 above it (> 0), G/lo − 1 below it (< 0), 0 inside.
 */
export function shearModulusDeviation(material: Material, shearModulus_Pa: number): number {
  const r = material.shearModulusRange;
  if (shearModulus_Pa > r.hi_Pa) return shearModulus_Pa / r.hi_Pa - 1;
  if (shearModulus_Pa < r.lo_Pa) return shearModulus_Pa / r.lo_Pa - 1;
  return 0;
}

/** Names of all materials in the table (for error messages and listings). */
export function materialNames(): string[] {
  return MATERIALS.map((m) => m.name);
}

/**
 * Tensile strength (Pa) of the material at wire diameter d (m): log-log
 * interpolation between the table's points, clamped to the end values
 * outside their range (no extrapolation).
 */
export function tensileStrengthAt(material: Material, d: number): number {
  const pts = [...material.tensileStrength.points].sort((p, q) => p.diameter_m - q.diameter_m);
  if (pts.length === 1 || d <= pts[0].diameter_m) return pts[0].value_Pa;
  const last = pts[pts.length - 1];
  if (d >= last.diameter_m) return last.value_Pa;
  for (let i = 1; i < pts.length; i++) {
    const p = pts[i - 1];
    const q = pts[i];
    if (d <= q.diameter_m) {
      const s = Math.log(d / p.diameter_m) / Math.log(q.diameter_m / p.diameter_m);
      return Math.exp(Math.log(p.value_Pa) + s * Math.log(q.value_Pa / p.value_Pa));
    }
  }
  return last.value_Pa;
}
