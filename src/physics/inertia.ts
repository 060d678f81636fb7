/**
 * Moments of inertia about the fibre axis (vertical) of the bodies a torsion
 * pendulum is built from. Each function gives the inertia about an axis
 * through the body's own centre of mass parallel to the fibre; `parallelAxis`
 * moves it out to the fibre. Standard rigid-body results (any mechanics
 * textbook's table of moments of inertia). SI: kg, m, kg·m².
 */

/** Point mass m at distance r from the axis: I = m·r². */
export function pointMass(m: number, r: number): number {
  return m * r * r;
}

/** Thin rod of length L lying horizontally, about its centre (axis ⟂ rod): I = m·L²/12. */
export function thinRod(m: number, L: number): number {
  return (m * L * L) / 12;
}

/**
 * Rectangular bar lying horizontally with sides a (length) and b (width) in
 * the horizontal plane, about the vertical axis through its centre:
 * I = m·(a² + b²)/12 (the vertical height does not enter).
 */
export function rectangularBar(m: number, a: number, b: number): number {
  return (m * (a * a + b * b)) / 12;
}

/** Disc or solid cylinder about its own symmetry axis (axis ∥ fibre): I = m·R²/2. */
export function discAxial(m: number, R: number): number {
  return (m * R * R) / 2;
}

/**
 * Solid cylinder (or disc) lying with its symmetry axis ⟂ fibre, about a
 * vertical diameter through its centre: I = m·(R²/4 + L²/12).
 */
export function cylinderTransverse(m: number, R: number, L: number): number {
  return m * ((R * R) / 4 + (L * L) / 12);
}

/** Thin ring of radius R about its symmetry axis (axis ∥ fibre): I = m·R². */
export function thinRing(m: number, R: number): number {
  return m * R * R;
}

/**
 * Thick annulus or hollow cylinder, radii Ri < Ro, about its symmetry axis
 * (axis ∥ fibre): I = m·(Ri² + Ro²)/2. Ri = 0 gives the disc, Ri → Ro the ring.
 */
export function annulus(m: number, Ri: number, Ro: number): number {
  return (m * (Ri * Ri + Ro * Ro)) / 2;
}

/** Solid sphere of radius R about a diameter: I = 2·m·R²/5. */
export function solidSphere(m: number, R: number): number {
  return (2 * m * R * R) / 5;
}

/** Parallel-axis (Steiner) shift: I = I_cm + m·d² for an axis at distance d from the centre of mass. */
export function parallelAxis(Icm: number, m: number, d: number): number {
  return Icm + m * d * d;
}

/** The shapes a parts list may name. */
export const PART_SHAPES = ['point', 'rod', 'bar', 'disc', 'cylinder', 'ring', 'sphere'] as const;

/** One body of a pendulum's parts list (SI); the station file and the simulator's scenarios validate it. */
export interface InertiaPart {
  shape: (typeof PART_SHAPES)[number];
  mass_kg: number;
  /** distance of the part's centre from the fibre axis (default 0) */
  offset_m?: number;
  length_m?: number;
  width_m?: number;
  radius_m?: number;
  inner_radius_m?: number;
  outer_radius_m?: number;
  /** identical copies (default 1) */
  count?: number;
}

/** A part that cannot be evaluated: names the part index and the missing/bad field. */
export class InertiaPartError extends Error {
  constructor(message: string, readonly field: string) {
    super(message);
    this.name = 'InertiaPartError';
  }
}

/**
 * Inertia of one part about its own centre (axis ∥ fibre), by shape:
 * - point: 0 (all of it is in the offset term);
 * - rod: thin rod, horizontal, needs length_m: m·L²/12;
 * - bar: horizontal rectangular bar, needs length_m and width_m: m·(L² + w²)/12;
 * - disc: coaxial with the fibre, needs radius_m (or outer_radius_m, with optional inner_radius_m): m·R²/2 or m·(Ri² + Ro²)/2;
 * - cylinder: solid cylinder lying with its axis ⟂ fibre, needs radius_m and length_m: m·(R²/4 + L²/12);
 * - ring: coaxial, thin (radius_m: m·R²) or thick (outer_radius_m, inner_radius_m: m·(Ri² + Ro²)/2);
 * - sphere: needs radius_m: 2·m·R²/5.
 */
export function partInertiaCm(p: InertiaPart, where = 'part'): number {
  const need = (v: number | undefined, name: string): number => {
    if (v === undefined) throw new InertiaPartError(`${where}.${name}: is required for shape "${p.shape}"`, `${where}.${name}`);
    return v;
  };
  const m = p.mass_kg;
  // an annulus needs inner ≤ outer; an inner radius alone describes nothing
  if (p.shape === 'disc' || p.shape === 'ring') {
    if (p.inner_radius_m !== undefined && p.outer_radius_m === undefined) {
      throw new InertiaPartError(`${where}.outer_radius_m: is required with inner_radius_m for shape "${p.shape}"`, `${where}.outer_radius_m`);
    }
    if (p.inner_radius_m !== undefined && p.outer_radius_m !== undefined && p.inner_radius_m > p.outer_radius_m) {
      throw new InertiaPartError(`${where}.inner_radius_m: must be ≤ outer_radius_m (${p.inner_radius_m} m > ${p.outer_radius_m} m)`, `${where}.inner_radius_m`);
    }
  }
  switch (p.shape) {
    case 'point':
      return 0;
    case 'rod':
      return thinRod(m, need(p.length_m, 'length_m'));
    case 'bar':
      return rectangularBar(m, need(p.length_m, 'length_m'), need(p.width_m, 'width_m'));
    case 'disc':
      if (p.outer_radius_m !== undefined) return annulus(m, p.inner_radius_m ?? 0, p.outer_radius_m);
      return discAxial(m, need(p.radius_m, 'radius_m'));
    case 'cylinder':
      return cylinderTransverse(m, need(p.radius_m, 'radius_m'), need(p.length_m, 'length_m'));
    case 'ring': {
      if (p.outer_radius_m !== undefined) {
        return annulus(m, p.inner_radius_m ?? p.outer_radius_m, p.outer_radius_m);
      }
      return thinRing(m, need(p.radius_m, 'radius_m'));
    }
    case 'sphere':
      return solidSphere(m, need(p.radius_m, 'radius_m'));
  }
}

/**
 * Total inertia (kg·m²) about the fibre axis of a parts list: for each part,
 * count × (I_cm + m·offset²) — `count` identical copies, each with its centre
 * at `offset_m` from the axis (e.g. two masses at ±r: count 2, offset r).
 */
export function inertiaFromParts(parts: readonly InertiaPart[]): number {
  let total = 0;
  parts.forEach((p, i) => {
    const where = `pendulum.parts[${i}]`;
    const count = p.count ?? 1;
    total += count * parallelAxis(partInertiaCm(p, where), p.mass_kg, p.offset_m ?? 0);
  });
  return total;
}
