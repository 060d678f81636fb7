/** What the station says about the pendulum and fibre, as the fit's derive context and limits. */
import type { Station } from './station.js';
import type { DeriveContext } from '../analysis/derive.js';
import { inertiaFromParts } from '../physics/inertia.js';
import { lookupMaterial } from '../physics/materials.js';
import { twistLimit, type TwistLimit } from '../physics/twist.js';

/** Inertia (given, or from the parts list) and fibre geometry for κ and G. */
export function deriveContextFor(station: Station): DeriveContext {
  const p = station.pendulum;
  const I = p.inertia_kg_m2 ?? (p.parts && p.parts.length ? inertiaFromParts(p.parts) : undefined);
  const f = station.fibre;
  return {
    inertia_kg_m2: I,
    inertia_sigma_kg_m2: p.inertia_sigma_kg_m2,
    diameter_m: f.diameter_m,
    length_m: f.length_m,
    width_m: f.width_m,
    thickness_m: f.thickness_m,
  };
}

/** The fibre's elastic twist limit, when material and round geometry are known. */
export function twistLimitFor(station: Station): TwistLimit | undefined {
  const f = station.fibre;
  if (!f.material || f.diameter_m === undefined || f.length_m === undefined) return undefined;
  const m = lookupMaterial(f.material);
  if (!m) return undefined;
  try {
    return twistLimit({ diameter_m: f.diameter_m, length_m: f.length_m }, m, { tensileStrength_Pa: f.tensile_strength_Pa, shearModulus_Pa: f.shear_modulus_Pa });
  } catch {
    return undefined;
  }
}
