/**
 * The zod pieces the station file and the simulator's scenario files share,
 * so the two formats cannot drift apart: number rules with their messages,
 * the column roles, a pendulum part, and the sensor settings both describe.
 */
import { z } from 'zod';
import { TIME_ROLES, VALUE_ROLES } from '../domain/block.js';
import { PART_SHAPES } from '../physics/inertia.js';

/** A number > 0. */
export const positive = () => z.number('must be a number').positive('must be > 0');
/** A finite number. */
export const finite = () => z.number('must be a number').finite('must be finite');
/** A number ≥ 0. */
export const nonNegative = () => z.number('must be a number').nonnegative('must be ≥ 0');
/** An integer > 0. */
export const positiveInt = () => z.number('must be a number').int('must be an integer').positive('must be > 0');

const ROLES = [...TIME_ROLES, ...VALUE_ROLES, '_'] as [string, ...string[]];
/** A column role of the `lines` format or a channel role of `frames` (docs/wire.md). */
export const columnRole = z.enum(ROLES, { error: `must be one of ${ROLES.join(', ')}` });

/** One body of a pendulum's parts list (src/physics/inertia.ts computes its inertia). */
export const partSchema = z.strictObject({
  shape: z.enum(PART_SHAPES, { error: `must be one of ${PART_SHAPES.join(', ')}` }),
  mass_kg: positive(),
  /** distance of the part's centre from the fibre axis */
  offset_m: nonNegative().default(0),
  length_m: positive().optional(),
  width_m: positive().optional(),
  radius_m: positive().optional(),
  inner_radius_m: nonNegative().optional(),
  outer_radius_m: positive().optional(),
  count: positiveInt().default(1),
});

/** Width of a hardware encoder counter: up to 53 bits, the integers a double holds exactly. */
export const counterBits = z.number('must be a number').int('must be an integer').min(2, 'must be ≥ 2').max(53, 'must be ≤ 53');

/**
 * The sensor block, one of four kinds, with the settings the station and the
 * simulator both give (encoder: counts per revolution, quadrature ×4 included,
 * and an optional counter width; optical levers: the lever arm, the beam's
 * 1/e² radius or the detector's half-length) plus each format's own extras.
 */
export function sensorSchema<P extends z.ZodRawShape, Q extends z.ZodRawShape>(extra: { 'split-photodiode': P; psd: Q }) {
  return z.discriminatedUnion('kind', [
    z.strictObject({ kind: z.literal('angle') }),
    z.strictObject({ kind: z.literal('encoder'), counts_per_rev: positive(), counter_bits: counterBits.optional() }),
    z.strictObject({ kind: z.literal('split-photodiode'), lever_arm_m: positive(), beam_radius_m: positive(), ...extra['split-photodiode'] }),
    z.strictObject({ kind: z.literal('psd'), lever_arm_m: positive(), half_length_m: positive(), ...extra.psd }),
  ], { error: 'must be one of angle, encoder, split-photodiode, psd' });
}

/** Fibre geometry (round: diameter; flat ribbon: width and thickness) and an optional G override. */
export const fibreGeometry = {
  diameter_m: positive().optional(),
  width_m: positive().optional(),
  thickness_m: positive().optional(),
  /** overrides the materials table, Pa */
  shear_modulus_Pa: positive().optional(),
} as const;
