/**
 * Scenario files for the virtual balance: one JSON document describing the
 * pendulum, fibre, noise, sensor, the scripted story (temperature swing,
 * creep, disturbances, period steps, dropouts) and the wire output. Validated
 * once here; errors name the field. SI units throughout.
 */
import { z } from 'zod';
import { TIME_ROLES, type ColumnRole, type ValueRole } from '../../src/domain/block.js';
import { ConfigError, readJsonFile, validateConfig } from '../../src/config/config-file.js';
import { columnRole, fibreGeometry, finite as num, nonNegative as nonneg, partSchema, positive as pos, sensorSchema } from '../../src/config/schema-parts.js';
import { inertiaFromParts, InertiaPartError } from '../../src/physics/inertia.js';
import { lookupMaterial, materialNames } from '../../src/physics/materials.js';
import { kappaRound, kappaRibbon } from '../../src/physics/torsion.js';

const fibreSchema = z.strictObject({
  name: z.string('must be a string').optional(),
  material: z.string('must be a string').optional(),
  ...fibreGeometry,
  length_m: pos(),
});

const creepSchema = z.strictObject({
  /** amplitude of θ_eq = a·ln(1 + t/t_c), rad (either sign) */
  a_rad: num(),
  /** time constant t_c, s */
  tc_s: pos(),
  /** start time, s since the run's start (default 0) */
  start_s: nonneg().default(0),
});

// an encoder counter of counter_bits wraps in two's complement
const sensor = sensorSchema({
  'split-photodiode': {
    /** total beam power on the detector, detector units (default 1) */
    power: pos().default(1),
    /** rms white noise added to each half, detector units (default 0) */
    noise: nonneg().default(0),
    /** half-size of the detector: beyond it the spot misses and both halves read dark (default 10 beam radii) */
    detector_half_size_m: pos().optional(),
    /** ADC full scale: each half is clipped to [0, full_scale] (default: no clip) */
    full_scale: pos().optional(),
  },
  psd: {
    /** rms white noise on x_m, metres (default 0) */
    noise_m: nonneg().default(0),
    /** sum signal for the a/b outputs, detector units (default 1) */
    power: pos().default(1),
  },
});

const outputSchema = z.strictObject({
  format: z.enum(['lines', 'frames'], { error: 'must be "lines" or "frames"' }).default('lines'),
  /** lines: column roles in order (default t_s plus the sensor's channels) */
  columns: z.array(columnRole).min(1, 'must list at least one column').optional(),
  /** frames: channel roles and scales (raw i32 × scale = value in the role's unit) */
  channels: z.array(z.strictObject({ role: columnRole, scale: z.number('must be a number').finite('must be finite').refine((v) => v !== 0, 'must not be 0').default(1) }))
    .min(1, 'must list at least one channel').max(16, 'at most 16 channels').optional(),
  /** significant digits of the numbers in lines output (default: the shortest text that reads back exactly) */
  digits: z.number('must be a number').int('must be an integer').min(1, 'must be ≥ 1').max(17, 'must be ≤ 17').optional(),
}).default({ format: 'lines' });

// a state label is a whole number (docs/commands.md, column role `state`)
const stateNumber = () => z.number('must be a number').int('must be an integer');

const configurationsSchema = z.strictObject({
  /** what each configuration does to the balance */
  states: z.array(z.strictObject({
    state: stateNumber(),
    /** steady torque on the pendulum in this configuration, N·m: the equilibrium sits torque/κ away */
    torque_Nm: num().default(0),
    /** the period in this configuration, ppm from the fibre's own (a gravity gradient stiffens or softens it) */
    period_ppm: num().default(0),
  })).min(1, 'must list at least one state'),
  /** switch to the next state in the list every every_s, cycling, from the first at t = 0 */
  every_s: pos().optional(),
  /** or switch at these times (the first state in the list holds until the first entry) */
  schedule: z.array(z.strictObject({ t_s: nonneg(), state: stateNumber() })).optional(),
});

/** The zod schema of a scenario file (fields in SI units; defaults noted per field). */
export const scenarioSchema = z.strictObject({
  name: z.string('must be a string').min(1, 'must not be empty'),
  description: z.string('must be a string').optional(),
  /** length of the run, s */
  duration_s: pos(),
  sample_rate_Hz: pos(),
  /** moment of inertia about the fibre, kg·m² (or give pendulum.parts) */
  inertia_kg_m2: pos().optional(),
  pendulum: z.strictObject({ parts: z.array(partSchema).min(1, 'must list at least one part') }).optional(),
  /** torsion constant at the reference temperature, N·m/rad (or give fibre) */
  kappa_Nm_per_rad: pos().optional(),
  fibre: fibreSchema.optional(),
  /** quality factor; the oscillator's damping is b = I·ω₀/Q either way (drivers/simulator/balance.ts) */
  q: z.number('must be a number').gt(0.5, 'must be > 0.5 (underdamped)'),
  /** what drives the thermal torque: 'viscous' (white, the default here) or 'internal' (loss angle 1/Q: 1/f) */
  damping: z.enum(['viscous', 'internal'], { error: 'must be "viscous" or "internal"' }).default('viscous'),
  /** mean temperature, K (default 295) */
  temperature_K: pos().default(295),
  /** thermal torque noise on/off (default true) */
  thermal_noise: z.boolean('must be true or false').default(true),
  /** white angle-readout noise added before the sensor model, rad rms (default 0) */
  angle_noise_rad: nonneg().default(0),
  initial: z.strictObject({
    amplitude_rad: nonneg().default(0),
    phase_rad: num().default(0),
    equilibrium_rad: num().default(0),
  }).default({ amplitude_rad: 0, phase_rad: 0, equilibrium_rad: 0 }),
  sensor: sensor.default({ kind: 'angle' }),
  temperature_swing: z.strictObject({
    amplitude_K: nonneg(),
    period_s: pos(),
    phase_rad: num().default(0),
    /** fractional change of the period per kelvin (takes precedence over dG_dT_per_K) */
    period_coefficient_per_K: num().optional(),
    /** (1/G)·dG/dT, per kelvin (default: the fibre material's, if the table has one) */
    dG_dT_per_K: num().optional(),
  }).optional(),
  creep: creepSchema.optional(),
  disturbances: z.array(z.strictObject({
    t_s: nonneg(),
    /** impulse that adds a swing of this amplitude, rad (velocity step ω₀·kick) */
    kick_rad: num().optional(),
    /** top clamp turned by this many turns: the equilibrium (and the body with it) steps by 2π·turns */
    twist_turns: num().optional(),
    /** equilibrium creep started by the disturbance (start_s defaults to t_s) */
    creep: z.strictObject({ a_rad: num(), tc_s: pos() }).optional(),
  })).default([]),
  period_steps: z.array(z.strictObject({ t_s: nonneg(), ppm: num() })).default([]),
  /** a polynomial drift of the equilibrium on top of any creep: θ_eq += rate·t + quadratic·t² */
  drift: z.strictObject({ rate_rad_per_s: num().default(0), quadratic_rad_per_s2: num().default(0) }).optional(),
  /** configurations of the apparatus (source masses moved, …): a torque and a period per state, written as a `state` channel */
  configurations: configurationsSchema.optional(),
  /** anelastic fibre: the period grows by slope × the swing's amplitude (default: none, the period is amplitude-independent) */
  anelastic: z.strictObject({ period_amplitude_slope_s_per_rad: num() }).optional(),
  dropouts: z.array(z.strictObject({ t_s: nonneg(), duration_s: pos() })).default([]),
  temperature_channel: z.strictObject({
    /** rms noise of the thermometer, K (default 0) */
    noise_K: nonneg().default(0),
  }).optional(),
  output: outputSchema,
});

/** A scenario as written in JSON, before defaults. */
export type ScenarioInput = z.input<typeof scenarioSchema>;
type Parsed = z.output<typeof scenarioSchema>;

/** A validated scenario with the derived inertia, torsion constant and output layout. */
export type Scenario = Omit<Parsed, 'output'> & {
  /** resolved inertia, kg·m² */
  I: number;
  /** resolved torsion constant at temperature_K, N·m/rad */
  kappa: number;
  /** resolved (1/G)dG/dT or 0, per K (used only with a temperature swing) */
  dGdT_per_K: number;
  /** wire output; `columns` is resolved for lines, `channels` for frames (the other is empty) */
  output: Omit<Parsed['output'], 'columns' | 'channels'> & { columns: ColumnRole[]; channels: { role: ColumnRole; scale: number }[] };
};

/** A scenario that cannot be used: the message names the field and why. */
export class ScenarioError extends ConfigError {
  constructor(message: string, field: string) {
    super(message, field);
    this.name = 'ScenarioError';
  }
}
const scenarioError = (m: string, f: string) => new ScenarioError(m, f);

/** The raw channels a sensor kind produces (value roles). */
export function sensorRoles(kind: Scenario['sensor']['kind']): ValueRole[] {
  switch (kind) {
    case 'angle': return ['angle_rad'];
    case 'encoder': return ['counts'];
    case 'split-photodiode': return ['a', 'b'];
    case 'psd': return ['x_m'];
  }
}

/** Validate a parsed JSON value as a scenario; throws ScenarioError naming the first bad field. */
export function parseScenario(value: unknown, source = 'scenario'): Scenario {
  return resolve(validateConfig(scenarioSchema, value, source, scenarioError), source);
}

/** Cross-field rules and derived quantities. */
function resolve(s: Parsed, source: string): Scenario {
  const fail = (field: string, msg: string): never => {
    throw new ScenarioError(`${source}: ${field}: ${msg}`, field);
  };
  // inertia
  let I: number;
  if (s.inertia_kg_m2 !== undefined && s.pendulum) fail('pendulum', 'give either inertia_kg_m2 or pendulum.parts, not both');
  if (s.inertia_kg_m2 !== undefined) I = s.inertia_kg_m2;
  else if (s.pendulum) {
    try {
      I = inertiaFromParts(s.pendulum.parts);
    } catch (e) {
      if (e instanceof InertiaPartError) fail(e.field, e.message.slice(e.field.length + 2));
      throw e;
    }
  } else I = fail('inertia_kg_m2', 'is required (or give pendulum.parts)');
  // torsion constant
  const material = s.fibre?.material !== undefined ? lookupMaterial(s.fibre.material) : undefined;
  if (s.fibre?.material !== undefined && !material && s.fibre.shear_modulus_Pa === undefined) {
    fail('fibre.material', `unknown material "${s.fibre.material}" (known: ${materialNames().join(', ')}; or give fibre.shear_modulus_Pa)`);
  }
  let kappa: number;
  if (s.kappa_Nm_per_rad !== undefined) kappa = s.kappa_Nm_per_rad;
  else if (s.fibre) {
    const G = s.fibre.shear_modulus_Pa ?? material?.shearModulus.value ?? fail('fibre.material', 'is required (or fibre.shear_modulus_Pa) to compute κ');
    if (s.fibre.diameter_m !== undefined) {
      if (s.fibre.width_m !== undefined) fail('fibre.width_m', 'give either diameter_m (round) or width_m/thickness_m (ribbon), not both');
      kappa = kappaRound(G, s.fibre.diameter_m, s.fibre.length_m);
    } else if (s.fibre.width_m !== undefined && s.fibre.thickness_m !== undefined) {
      kappa = kappaRibbon(G, s.fibre.width_m, s.fibre.thickness_m, s.fibre.length_m);
    } else kappa = fail('fibre.diameter_m', 'is required (or width_m and thickness_m for a ribbon)');
  } else kappa = fail('kappa_Nm_per_rad', 'is required (or give fibre)');
  // temperature coefficient
  let dGdT = 0;
  if (s.temperature_swing && s.temperature_swing.period_coefficient_per_K === undefined) {
    dGdT = s.temperature_swing.dG_dT_per_K ?? material?.dGdT_per_K?.value
      ?? fail('temperature_swing.dG_dT_per_K', 'is required (or period_coefficient_per_K) when the material table has no value');
  }
  for (const [i, d] of s.disturbances.entries()) {
    if (d.kick_rad === undefined && d.twist_turns === undefined && d.creep === undefined) fail(`disturbances[${i}]`, 'needs kick_rad, twist_turns or creep');
  }
  if (s.configurations) {
    const cf = s.configurations;
    const known = new Set<number>();
    cf.states.forEach((st, i) => {
      if (known.has(st.state)) fail(`configurations.states[${i}].state`, `${st.state} is listed twice`);
      known.add(st.state);
    });
    if ((cf.every_s === undefined) === (cf.schedule === undefined)) fail('configurations', 'give either every_s or schedule');
    cf.schedule?.forEach((e, i) => {
      if (!known.has(e.state)) fail(`configurations.schedule[${i}].state`, `${e.state} is not among configurations.states`);
      if (i > 0 && e.t_s < cf.schedule![i - 1].t_s) fail(`configurations.schedule[${i}].t_s`, 'must not be before the entry above it');
    });
  }
  // output layout
  const own = sensorRoles(s.sensor.kind);
  const psdHalves = (roles: string[]) => s.sensor.kind === 'psd' && roles.includes('a') && roles.includes('b');
  let columns: ColumnRole[] = [];
  let channels: { role: ColumnRole; scale: number }[] = [];
  const extra: ValueRole[] = [...(s.temperature_channel ? ['temp_C' as const] : []), ...(s.configurations ? ['state' as const] : [])];
  if (s.output.format === 'lines') {
    columns = (s.output.columns as ColumnRole[] | undefined) ?? ['t_s', ...own, ...extra];
    if (s.output.channels) fail('output.channels', 'applies to format "frames" only (use output.columns)');
    checkRoles(columns, 'output.columns');
  } else {
    if (!s.output.channels) fail('output.channels', 'is required for format "frames"');
    channels = s.output.channels!.map((c) => ({ role: c.role as ColumnRole, scale: c.scale }));
    if (s.output.columns) fail('output.columns', 'applies to format "lines" only (use output.channels)');
    checkRoles(channels.map((c) => c.role), 'output.channels');
    const timeIdx = channels.findIndex((c) => (TIME_ROLES as readonly string[]).includes(c.role));
    if (timeIdx >= 0) fail(`output.channels[${timeIdx}].role`, 'frames carry the device time in their header; a time role is not a channel');
  }
  function checkRoles(roles: ColumnRole[], field: string): void {
    const seen = new Set<string>();
    for (const r of roles) {
      if (r !== '_' && seen.has(r)) fail(field, `"${r}" is listed twice`);
      seen.add(r);
    }
    const needs = psdHalves(roles) ? [] : own;
    for (const r of needs) if (!roles.includes(r)) fail(field, `sensor "${s.sensor.kind}" writes a "${r}" channel; list it`);
    if (roles.includes('temp_C') && !s.temperature_channel) fail(field, '"temp_C" needs temperature_channel');
    if (roles.includes('state') && !s.configurations) fail(field, '"state" needs configurations');
    for (const r of roles) {
      if (r === '_' || (TIME_ROLES as readonly string[]).includes(r)) continue;
      if (!own.includes(r as ValueRole) && r !== 'temp_C' && r !== 'state' && !(psdHalves(roles) && (r === 'a' || r === 'b'))) {
        fail(field, `"${r}" is not produced by sensor "${s.sensor.kind}"`);
      }
    }
  }
  return { ...s, I, kappa, dGdT_per_K: dGdT, output: { ...s.output, columns, channels } };
}

/** Read and validate a scenario file; errors name the file and the field. */
export function loadScenario(path: string): Scenario {
  return parseScenario(readJsonFile(path, 'scenario file', scenarioError), path);
}
