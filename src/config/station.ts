/**
 * The station file: one JSON document describing one balance as it is set up
 * (docs/commands.md). Validated once at the boundary; everything inward receives a
 * typed, trusted `Station`.
 */
import { z } from 'zod';
import { ConfigError, readJsonFile, validateConfig } from './config-file.js';
import { columnRole, fibreGeometry, finite, nonNegative, partSchema, positive as pos, positiveInt, sensorSchema } from './schema-parts.js';

const fibreSchema = z.strictObject({
  name: z.string('must be a string').min(1, 'must not be empty'),
  material: z.string('must be a string').optional(),
  /** round fibre (diameter_m) or flat ribbon (width_m ≫ thickness_m); shear_modulus_Pa overrides the materials table */
  ...fibreGeometry,
  length_m: pos().optional(),
  /** overrides the materials table */
  tensile_strength_Pa: pos().optional(),
});

const pendulumSchema = z.strictObject({
  inertia_kg_m2: pos().optional(),
  inertia_sigma_kg_m2: nonNegative().optional(),
  /** suspended mass, for the tensile load on the fibre */
  mass_kg: pos().optional(),
  /** parts list, when the inertia is to be computed */
  parts: z.array(partSchema).optional(),
});

const channelSchema = z.strictObject({
  role: columnRole,
  /** multiply the raw i32 by this to get the role's unit */
  scale: finite().default(1),
});

const inputSchema = z.strictObject({
  device: z.string('must be a string').min(1, 'must not be empty').optional(),
  baud: positiveInt().default(115200),
  format: z.enum(['lines', 'frames'], { error: 'must be "lines" or "frames"' }).default('lines'),
  columns: z.array(columnRole).min(1, 'must list at least one column').optional(),
  separator: z.enum([',', ';', 'tab', 'spaces'], { error: 'must be one of ",", ";", "tab", "spaces"' }).default(','),
  /** period of the device clock's wrap, in seconds of that clock (lines only; frames wrap at 2^32 µs) */
  clock_wrap: pos().optional(),
  channels: z.array(channelSchema).min(1, 'must list at least one channel').max(16, 'at most 16 channels').optional(),
  reconnect: z.strictObject({
    min_delay_s: pos().default(0.25),
    max_delay_s: pos().default(10),
    /** give up after this long without the device (absent: never) */
    give_up_s: pos().optional(),
  }).prefault({}),
});

const sensor = sensorSchema({
  'split-photodiode': {
    /** |s| at or above this is off the split: flagged saturated */
    saturation: z.number('must be a number').gt(0, 'must be > 0').lt(1, 'must be < 1').default(0.98),
  },
  psd: {
    saturation: z.number('must be a number').gt(0, 'must be > 0').lte(1, 'must be ≤ 1').default(0.98),
  },
});

const analysisSchema = z.strictObject({
  window_periods: pos().default(4),
  step_periods: pos().default(1),
  /** decimate to about this many samples per period before fitting */
  samples_per_period: pos().default(40),
  /** seconds of data for the first FFT period estimate */
  first_estimate_s: pos().optional(),
  /** a prior on the period, if known (speeds the first estimate) */
  period_guess_s: pos().optional(),
  hampel_half_width: z.number('must be a number').int('must be an integer').nonnegative('must be ≥ 0').default(5),
  hampel_threshold: pos().default(5),
});

const webhookSchema = z.strictObject({
  url: z.string('must be a string').url('must be a URL'),
  timeout_s: pos().default(5),
  retries: z.number('must be a number').int('must be an integer').nonnegative('must be ≥ 0').default(1000),
  max_delay_s: pos().default(300),
  queue_max: positiveInt().default(10000),
});

const commandSchema = z.strictObject({
  argv: z.array(z.string('must be a string')).min(1, 'must name the program'),
  timeout_s: pos().default(10),
});

const alertsSchema = z.strictObject({
  equilibrium_rate_rad_per_hour: pos().default(5e-6),
  period_change_ppm: pos().default(300),
  no_data_s: pos().default(20),
  /** trailing horizon of the equilibrium creep fit */
  horizon_h: pos().default(6),
  /** amplitude below which the swing is too small to fit reliably */
  amplitude_min_rad: pos().optional(),
  /** fraction of the elastic twist limit that raises amplitude-limit */
  twist_fraction: z.number('must be a number').gt(0, 'must be > 0').lte(1, 'must be ≤ 1').default(0.5),
  stderr: z.boolean('must be true or false').default(true),
  webhook: webhookSchema.optional(),
  command: commandSchema.optional(),
});

export const stationSchema = z.strictObject({
  station: z.string('must be a string').min(1, 'must not be empty'),
  fibre: fibreSchema,
  pendulum: pendulumSchema.prefault({}),
  input: inputSchema.prefault({}),
  sensor: sensor.default({ kind: 'angle' }),
  analysis: analysisSchema.prefault({}),
  alerts: alertsSchema.prefault({}),
});

export type Station = z.output<typeof stationSchema>;
export type SensorConfig = Station['sensor'];
export type AnalysisConfig = Station['analysis'];
export type AlertsConfig = Station['alerts'];

/** A station file that cannot be used: the message names the field (`fibre.diameter_m: must be > 0`). */
export class StationError extends ConfigError {
  constructor(message: string, field: string) {
    super(message, field);
    this.name = 'StationError';
  }
}
const stationError = (m: string, f: string) => new StationError(m, f);

/** Validate a parsed JSON value as a station; throws StationError naming the first bad field. */
export function parseStation(value: unknown, source = 'station'): Station {
  return crossCheck(validateConfig(stationSchema, value, source, stationError), source);
}

/** Rules that span fields. */
function crossCheck(s: Station, source: string): Station {
  const fail = (field: string, msg: string): never => {
    throw new StationError(`${source}: ${field}: ${msg}`, field);
  };
  if (s.input.format === 'frames' && !s.input.channels) fail('input.channels', 'is required for format "frames"');
  if (s.input.clock_wrap !== undefined && s.input.format === 'frames') fail('input.clock_wrap', 'applies to "lines" only (frames wrap at 2^32 µs)');
  if (s.analysis.step_periods > s.analysis.window_periods) fail('analysis.step_periods', 'must be ≤ analysis.window_periods');
  const roles = s.input.format === 'frames' ? s.input.channels?.map((c) => c.role) : s.input.columns;
  if (roles) {
    const need: Record<string, string[]> = {
      angle: ['angle_rad'], encoder: ['counts'], 'split-photodiode': ['a', 'b'], psd: ['x_m'],
    };
    const psdFromHalves = s.sensor.kind === 'psd' && roles.includes('a') && roles.includes('b');
    for (const r of psdFromHalves ? [] : need[s.sensor.kind]) {
      if (!roles.includes(r)) fail(s.input.format === 'frames' ? 'input.channels' : 'input.columns', `sensor "${s.sensor.kind}" needs a "${r}" ${s.input.format === 'frames' ? 'channel' : 'column'}`);
    }
    const seen = new Set<string>();
    for (const r of roles) {
      if (r !== '_' && seen.has(r)) fail(s.input.format === 'frames' ? 'input.channels' : 'input.columns', `"${r}" is listed twice`);
      seen.add(r);
    }
  }
  if ((s.fibre.width_m === undefined) !== (s.fibre.thickness_m === undefined)) {
    fail(s.fibre.width_m === undefined ? 'fibre.width_m' : 'fibre.thickness_m', 'a ribbon needs both width_m and thickness_m');
  }
  if (s.fibre.diameter_m !== undefined && s.fibre.width_m !== undefined) fail('fibre.width_m', 'give either diameter_m (round) or width_m/thickness_m (ribbon), not both');
  return s;
}

/** Read and validate a station file; JSON syntax errors also name the file and position. */
export function loadStation(path: string): Station {
  return parseStation(readJsonFile(path, 'station file', stationError), path);
}

/** Station defaults for a bare recording with only a column list (`fit --columns`). */
export function stationFromColumns(columns: string[], name = 'ad-hoc'): Station {
  return parseStation({ station: name, fibre: { name: 'unknown' }, input: { columns }, sensor: sensorForColumns(columns) }, '--columns');
}

function sensorForColumns(columns: string[]): { kind: string } {
  if (columns.includes('angle_rad')) return { kind: 'angle' };
  if (columns.includes('counts')) throw new StationError('--columns: a "counts" column needs a station file (counts_per_rev)', 'columns');
  throw new StationError('--columns: without a station file the columns must include angle_rad', 'columns');
}
