/** What the station says about the pendulum and fibre: the fit's derive context, the run's systematic uncertainties, the limits. */
import type { Station } from './station.js';
import type { DeriveContext } from '../analysis/derive.js';
import type { Systematics } from '../analysis/systematics.js';
import { inertiaFromParts } from '../physics/inertia.js';
import { suspendedWeight } from '../physics/load.js';
import { lookupMaterial } from '../physics/materials.js';
import { twistLimit, type TwistLimit } from '../physics/twist.js';

/** Temperature assumed for thermal-noise figures when the station gives none and no temp_C channel is recorded, K. */
export const ASSUMED_TEMPERATURE_K = 295;

/**
 * Nominal inertia (given, or from the parts list), fibre geometry, tension and damping model
 * for each window's κ and G. Deliberately without the hand-measured σ's: those are
 * systematic for the run (systematicsFor) and must not be averaged down over windows.
 */
export function deriveContextFor(station: Station): DeriveContext {
  const p = station.pendulum;
  const I = p.inertia_kg_m2 ?? (p.parts && p.parts.length ? inertiaFromParts(p.parts) : undefined);
  const f = station.fibre;
  return {
    inertia_kg_m2: I,
    diameter_m: f.diameter_m,
    length_m: f.length_m,
    width_m: f.width_m,
    thickness_m: f.thickness_m,
    tension_N: p.mass_kg === undefined ? undefined : suspendedWeight(p.mass_kg),
    damping: p.damping,
  };
}

/** The hand-measured standard uncertainties, systematic for every window of a run. */
export function systematicsFor(station: Station): Systematics {
  const f = station.fibre;
  return {
    inertia_sigma_kg_m2: station.pendulum.inertia_sigma_kg_m2,
    diameter_sigma_m: f.diameter_sigma_m,
    length_sigma_m: f.length_sigma_m,
    width_sigma_m: f.width_sigma_m,
    thickness_sigma_m: f.thickness_sigma_m,
  };
}

/** The station's temperature for thermal-noise figures, and whether it was assumed (no `environment.temperature_K`). */
export function temperatureFor(station: Station): { temperature_K: number; assumed: boolean } {
  const T = station.environment.temperature_K;
  return T === undefined ? { temperature_K: ASSUMED_TEMPERATURE_K, assumed: true } : { temperature_K: T, assumed: false };
}

/** The fibre's elastic twist limit (combined with the load's tension), when material and round geometry are known. */
export function twistLimitFor(station: Station): TwistLimit | undefined {
  const f = station.fibre;
  if (!f.material || f.diameter_m === undefined || f.length_m === undefined) return undefined;
  const m = lookupMaterial(f.material);
  if (!m) return undefined;
  const mass = station.pendulum.mass_kg;
  try {
    return twistLimit({ diameter_m: f.diameter_m, length_m: f.length_m }, m, {
      tensileStrength_Pa: f.tensile_strength_Pa, shearModulus_Pa: f.shear_modulus_Pa,
      tension_N: mass === undefined ? undefined : suspendedWeight(mass),
    });
  } catch {
    return undefined;
  }
}

/** The angle step of a counting sensor, rad (the Hampel filter's floor on its scale); undefined for an analogue one. */
export function quantumFor(station: Station): number | undefined {
  return station.sensor.kind === 'encoder' ? (2 * Math.PI) / station.sensor.counts_per_rev : undefined;
}
