/**
 * The station file: one JSON document describing one balance as it is set up
 * (docs/commands.md). Validated once at the boundary; everything inward receives a
 * typed, trusted `Station`.
 */
import { z } from 'zod';
import { ConfigError, readJsonFile, validateConfig } from './config-file.js';
import { columnRole, fibreGeometry, finite, nonNegative, partSchema, positive as pos, positiveInt, sensorSchema } from './schema-parts.js';
import { TIME_ROLES } from '../domain/block.js';
import { inertiaFromParts, InertiaPartError } from '../physics/inertia.js';
import { lookupMaterial, materialNames } from '../physics/materials.js';

/**
 * A number > 0 within [lo, hi] (docs/commands.md, "Keys", gives each range and
 * why): values outside a physical range are slips that would hang or flood a run.
 */
const within = (lo: number, hi: number, unit = '') => {
  const u = unit ? ` ${unit}` : '';
  return pos().min(lo, `must be ≥ ${lo}${u}`).max(hi, `must be ≤ ${hi}${u}`);
};
/** Alert deliveries go to web servers only: a file: or javascript: URL is a slip or an attack. */
const httpUrl = () =>
  z.string('must be a string').url('must be a URL').refine((u) => URL.canParse(u) && /^https?:$/i.test(new URL(u).protocol), 'must be an http:// or https:// URL');

const fibreSchema = z.strictObject({
  name: z.string('must be a string').min(1, 'must not be empty'),
  material: z.string('must be a string').optional(),
  /** round fibre (diameter_m) or flat ribbon (width_m ≫ thickness_m); shear_modulus_Pa overrides the materials table */
  ...fibreGeometry,
  length_m: pos().optional(),
  /** standard uncertainties of the hand-measured dimensions: systematic for a run, they enter its G once */
  diameter_sigma_m: nonNegative().optional(),
  length_sigma_m: nonNegative().optional(),
  width_sigma_m: nonNegative().optional(),
  thickness_sigma_m: nonNegative().optional(),
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
  /** what damps the swing: the fibre's internal friction (a constant loss angle) or gas (viscous) */
  damping: z.enum(['internal', 'viscous'], { error: 'must be "internal" or "viscous"' }).default('internal'),
});

const environmentSchema = z.strictObject({
  /** for thermal-noise figures when no temp_C channel is recorded; absent: 295 K, reported as assumed */
  temperature_K: pos().optional(),
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
    min_delay_s: within(0.01, 3600, 's').default(0.25),
    max_delay_s: within(0.01, 86400, 's').default(10),
    /** give up after this long without the device (absent: never) */
    give_up_s: within(1, 1e8, 's').optional(),
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
  window_periods: within(1, 1000, 'periods').default(4),
  step_periods: within(0.1, 1000, 'periods').default(1),
  /** decimate to about this many samples per period before fitting */
  samples_per_period: within(8, 10000).default(40),
  /** seconds of data for the first FFT period estimate */
  first_estimate_s: within(1, 604800, 's').optional(),
  /** a prior on the period, if known (speeds the first estimate) */
  period_guess_s: within(0.01, 1e6, 's').optional(),
  hampel_half_width: z.number('must be a number').int('must be an integer').nonnegative('must be ≥ 0').max(1000, 'must be ≤ 1000').default(5),
  hampel_threshold: within(1, 1000).default(5),
});

const webhookSchema = z.strictObject({
  url: httpUrl(),
  timeout_s: within(0.1, 600, 's').default(5),
  retries: z.number('must be a number').int('must be an integer').nonnegative('must be ≥ 0').max(1e6, 'must be ≤ 1000000').default(1000),
  max_delay_s: within(0.1, 86400, 's').default(300),
  queue_max: positiveInt().max(1e6, 'must be ≤ 1000000').default(10000),
});

const commandSchema = z.strictObject({
  argv: z.array(z.string('must be a string')).min(1, 'must name the program'),
  timeout_s: within(0.1, 3600, 's').default(10),
});

const alertsSchema = z.strictObject({
  equilibrium_rate_rad_per_hour: within(1e-12, 10, 'rad/h').default(5e-6),
  period_change_ppm: within(0.001, 1e6, 'ppm').default(300),
  no_data_s: within(0.1, 604800, 's').default(20),
  /** trailing horizon of the equilibrium creep fit */
  horizon_h: within(0.01, 8760, 'h').default(6),
  /** amplitude below which the swing is too small to fit reliably */
  amplitude_min_rad: within(1e-12, 1, 'rad').optional(),
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
  environment: environmentSchema.prefault({}),
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
  if (s.input.reconnect.max_delay_s < s.input.reconnect.min_delay_s) fail('input.reconnect.max_delay_s', 'must be ≥ input.reconnect.min_delay_s');
  // the decoders would refuse these only when the run starts, with a stack: name the field now
  const times = (s.input.format === 'frames' ? (s.input.channels ?? []).map((c) => c.role) : (s.input.columns ?? [])).filter((r) => (TIME_ROLES as readonly string[]).includes(r));
  if (s.input.format === 'frames' && times.length) fail('input.channels', `"${times[0]}": frames carry their time in the frame header, not in a channel`);
  if (times.length > 1) fail('input.columns', `more than one time column (${times.map((r) => `"${r}"`).join(', ')}): give one`);
  if (s.pendulum.parts?.length && s.pendulum.inertia_kg_m2 === undefined) {
    try {
      inertiaFromParts(s.pendulum.parts);
    } catch (e) {
      if (e instanceof InertiaPartError) fail(e.field, e.message.slice(e.field.length + 2));
      throw e;
    }
  }
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
  // an uncertainty without the value it belongs to is a slip in the file, not something to ignore
  for (const [sigma, value] of [['diameter_sigma_m', 'diameter_m'], ['length_sigma_m', 'length_m'], ['width_sigma_m', 'width_m'], ['thickness_sigma_m', 'thickness_m']] as const) {
    if (s.fibre[sigma] !== undefined && s.fibre[value] === undefined) fail(`fibre.${sigma}`, `needs fibre.${value}`);
  }
  if (s.pendulum.inertia_sigma_kg_m2 !== undefined && s.pendulum.inertia_kg_m2 === undefined && !s.pendulum.parts?.length) {
    fail('pendulum.inertia_sigma_kg_m2', 'needs pendulum.inertia_kg_m2 or pendulum.parts');
  }
  return s;
}

/** What a usable station file may still deserve a word about (one line each, naming the field). */
export function stationWarnings(s: Station, source = 'station'): string[] {
  const w: string[] = [];
  if (s.fibre.material !== undefined && !lookupMaterial(s.fibre.material)) {
    // JSON quoting shows any control character in the name as an escape
    w.push(`${source}: fibre.material: ${JSON.stringify(s.fibre.material)} is not in the materials table (${materialNames().join(', ')}): no twist limit and no handbook check for this fibre`);
  }
  return w;
}

/**
 * Read and validate a station file; JSON syntax errors also name the file and
 * position. Warnings (stationWarnings) go to `onWarning`, by default one line
 * each on stderr.
 */
export function loadStation(path: string, onWarning: (message: string) => void = (m) => process.stderr.write(`fibrewatch: warning: ${m}\n`)): Station {
  const s = parseStation(readJsonFile(path, 'station file', stationError), path);
  for (const m of stationWarnings(s, path)) onWarning(m);
  return s;
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
