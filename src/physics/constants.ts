/**
 * Physical constants used by the physics formulas (SI). Values are the exact
 * SI-2019 defining constants and CODATA 2018 recommended values.
 */

/** Boltzmann constant, J/K (exact since the 2019 SI redefinition). */
export const K_BOLTZMANN = 1.380649e-23;

/** Standard acceleration of gravity g_n, m/s² (exact by definition). */
export const G_STANDARD = 9.80665;
