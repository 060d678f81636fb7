/**
 * The station file at its boundary: defaults are filled, the docs/commands.md
 * example parses, and every wrong file is refused with a StationError whose
 * message and `field` name the offending key.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadStation, parseStation, stationFromColumns, StationError } from '../../src/config/station.js';

/** The example of docs/commands.md ("The station file"), verbatim. */
const CONTRACT_EXAMPLE = {
  station: 'bench-a',
  fibre: { name: 'W25-lot7-03', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 },
  pendulum: { inertia_kg_m2: 3.6e-5 },
  input: { device: '/dev/ttyACM0', baud: 115200, format: 'lines', columns: ['t_s', 'angle_rad'] },
  sensor: { kind: 'angle' },
  analysis: { window_periods: 4, step_periods: 1 },
  alerts: { equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, no_data_s: 20 },
};

const minimal = () => ({ station: 's', fibre: { name: 'f' } });

/** Deep copy of `base` with `patch` merged in (objects merged key by key; `undefined` deletes). */
function withPatch(base: Record<string, unknown>, patch: Record<string, unknown>): Record<string, unknown> {
  const out: Record<string, unknown> = structuredClone(base);
  for (const [k, v] of Object.entries(patch)) {
    if (v === undefined) delete out[k];
    else if (v && typeof v === 'object' && !Array.isArray(v) && out[k] && typeof out[k] === 'object' && !Array.isArray(out[k])) {
      out[k] = withPatch(out[k] as Record<string, unknown>, v as Record<string, unknown>);
    } else out[k] = v;
  }
  return out;
}

/** Parse and return the StationError (fails the test if the file is accepted). */
function refusal(value: unknown): StationError {
  try {
    parseStation(value, 'st.json');
  } catch (e) {
    expect(e).toBeInstanceOf(StationError);
    return e as StationError;
  }
  throw new Error(`accepted: ${JSON.stringify(value)}`);
}

describe('defaults', () => {
  it('fills analysis, alerts, input (with reconnect), sensor and pendulum for a minimal file', () => {
    const s = parseStation(minimal());
    expect(s.sensor).toEqual({ kind: 'angle' });
    expect(s.pendulum).toEqual({ damping: 'internal' });
    expect(s.environment).toEqual({});
    expect(s.input).toEqual({ baud: 115200, format: 'lines', separator: ',', reconnect: { min_delay_s: 0.25, max_delay_s: 10 } });
    expect(s.analysis).toEqual({ window_periods: 4, step_periods: 1, samples_per_period: 40, hampel_half_width: 5, hampel_threshold: 5 });
    expect(s.alerts).toEqual({
      equilibrium_rate_rad_per_hour: 5e-6, period_change_ppm: 300, no_data_s: 20, horizon_h: 6, twist_fraction: 0.5, stderr: true,
    });
  });

  it('fills the rest of a partly given section and keeps what is given', () => {
    const s = parseStation({ ...minimal(), analysis: { window_periods: 6 }, alerts: { no_data_s: 5 }, input: { reconnect: { max_delay_s: 30 } } });
    expect(s.analysis.window_periods).toBe(6);
    expect(s.analysis.step_periods).toBe(1);
    expect(s.alerts.no_data_s).toBe(5);
    expect(s.alerts.period_change_ppm).toBe(300);
    expect(s.input.reconnect).toEqual({ min_delay_s: 0.25, max_delay_s: 30 });
    expect(s.input.baud).toBe(115200);
  });

  it('fills webhook and command defaults, channel scale and sensor saturation', () => {
    const s = parseStation({
      ...minimal(),
      input: { format: 'frames', channels: [{ role: 'a' }, { role: 'b', scale: 1e-6 }] },
      sensor: { kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 5e-4 },
      alerts: { webhook: { url: 'http://127.0.0.1:9/hook' }, command: { argv: ['notify-send'] } },
    });
    expect(s.input.channels).toEqual([{ role: 'a', scale: 1 }, { role: 'b', scale: 1e-6 }]);
    expect(s.sensor).toEqual({ kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 5e-4, saturation: 0.98 });
    expect(s.alerts.webhook).toEqual({ url: 'http://127.0.0.1:9/hook', timeout_s: 5, retries: 1000, max_delay_s: 300, queue_max: 10000 });
    expect(s.alerts.command).toEqual({ argv: ['notify-send'], timeout_s: 10 });
  });

  it('fills a pendulum part\'s offset and count', () => {
    const s = parseStation({ ...minimal(), pendulum: { parts: [{ shape: 'sphere', mass_kg: 0.01, radius_m: 0.004 }] } });
    expect(s.pendulum.parts).toEqual([{ shape: 'sphere', mass_kg: 0.01, radius_m: 0.004, offset_m: 0, count: 1 }]);
  });
});

describe('uncertainties, damping and temperature (docs/commands.md, "Keys")', () => {
  it('accepts the hand-measured σ\'s beside their values, the damping model and the temperature', () => {
    const s = parseStation(withPatch(CONTRACT_EXAMPLE, {
      fibre: { diameter_sigma_m: 2.5e-7, length_sigma_m: 1e-3 },
      pendulum: { inertia_sigma_kg_m2: 2e-7, damping: 'viscous', mass_kg: 0.05 },
      environment: { temperature_K: 293.2 },
    }));
    expect(s.fibre).toMatchObject({ diameter_sigma_m: 2.5e-7, length_sigma_m: 1e-3 });
    expect(s.pendulum).toMatchObject({ inertia_sigma_kg_m2: 2e-7, damping: 'viscous', mass_kg: 0.05 });
    expect(s.environment.temperature_K).toBe(293.2);
    const r = parseStation({ ...minimal(), fibre: { name: 'r', width_m: 1e-3, width_sigma_m: 1e-5, thickness_m: 2e-5, thickness_sigma_m: 5e-7, length_m: 0.5 } });
    expect(r.fibre).toMatchObject({ width_sigma_m: 1e-5, thickness_sigma_m: 5e-7 });
  });
  it('an absent temperature stays absent, so outputs can say it was assumed', () => {
    expect(parseStation(CONTRACT_EXAMPLE).environment.temperature_K).toBeUndefined();
  });
});

describe('the docs/commands.md example', () => {
  it('parses and keeps every value it gives', () => {
    const s = parseStation(CONTRACT_EXAMPLE);
    expect(s.station).toBe('bench-a');
    expect(s.fibre).toEqual(CONTRACT_EXAMPLE.fibre);
    expect(s.pendulum.inertia_kg_m2).toBe(3.6e-5);
    expect(s.input).toMatchObject(CONTRACT_EXAMPLE.input);
    expect(s.sensor).toEqual({ kind: 'angle' });
    expect(s.analysis).toMatchObject(CONTRACT_EXAMPLE.analysis);
    expect(s.alerts).toMatchObject(CONTRACT_EXAMPLE.alerts);
  });

  it('is idempotent: parsing the parsed station gives the same station', () => {
    const s = parseStation(CONTRACT_EXAMPLE);
    expect(parseStation(JSON.parse(JSON.stringify(s)))).toEqual(s);
  });

  it('accepts every sensor kind with its parameters', () => {
    const cases: [Record<string, unknown>, Record<string, unknown>][] = [
      [{ kind: 'encoder', counts_per_rev: 4096, counter_bits: 16 }, { columns: ['t_s', 'counts'] }],
      [{ kind: 'encoder', counts_per_rev: 10000 }, { columns: ['t_us', 'counts'] }],
      [{ kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 5e-4, saturation: 0.9 }, { columns: ['t_ms', 'a', 'b'] }],
      [{ kind: 'psd', lever_arm_m: 1, half_length_m: 0.005 }, { columns: ['t_s', 'x_m', 'temp_C'] }],
      // a PSD read as its two electrode currents
      [{ kind: 'psd', lever_arm_m: 1, half_length_m: 0.005 }, { columns: ['t_s', 'a', 'b'] }],
    ];
    for (const [sensor, input] of cases) {
      const s = parseStation(withPatch(CONTRACT_EXAMPLE, { sensor, input }));
      expect(s.sensor).toMatchObject(sensor);
    }
  });

  it('accepts a ribbon with both width and thickness', () => {
    const s = parseStation(withPatch(CONTRACT_EXAMPLE, { fibre: { diameter_m: undefined, width_m: 1e-4, thickness_m: 1e-5 } }));
    expect(s.fibre.width_m).toBe(1e-4);
    expect(s.fibre.thickness_m).toBe(1e-5);
  });

  it('accepts step_periods equal to window_periods (windows that just touch)', () => {
    expect(parseStation(withPatch(CONTRACT_EXAMPLE, { analysis: { window_periods: 3, step_periods: 3 } })).analysis.step_periods).toBe(3);
  });
});

/** [what is wrong, the patch onto the CONTRACT example, the field named, a word of the reason]. */
const REFUSED: [string, Record<string, unknown>, string, RegExp][] = [
  ['negative diameter', { fibre: { diameter_m: -2.5e-5 } }, 'fibre.diameter_m', /> 0/],
  ['zero diameter', { fibre: { diameter_m: 0 } }, 'fibre.diameter_m', /> 0/],
  ['zero length', { fibre: { length_m: 0 } }, 'fibre.length_m', /> 0/],
  ['diameter as a string', { fibre: { diameter_m: '25e-6' } }, 'fibre.diameter_m', /number/],
  ['empty fibre name', { fibre: { name: '' } }, 'fibre.name', /empty/],
  ['fibre name a number', { fibre: { name: 7 } }, 'fibre.name', /string/],
  ['negative inertia', { pendulum: { inertia_kg_m2: -1 } }, 'pendulum.inertia_kg_m2', /> 0/],
  ['station name a number', { station: 3 }, 'station', /string/],
  ['baud not an integer', { input: { baud: 9600.5 } }, 'input.baud', /integer/],
  ['baud as a string', { input: { baud: '115200' } }, 'input.baud', /number/],
  ['unknown format', { input: { format: 'csv' } }, 'input.format', /lines/],
  ['unknown column role', { input: { columns: ['t_s', 'angle_deg'] } }, 'input.columns[1]', /must be one of/],
  ['columns not a list', { input: { columns: 't_s,angle_rad' } }, 'input.columns', /./],
  ['empty column list', { input: { columns: [] } }, 'input.columns', /at least one/],
  ['columns lacking angle_rad for an angle sensor', { input: { columns: ['t_s', 'x_m'] } }, 'input.columns', /angle_rad/],
  ['a column listed twice', { input: { columns: ['t_s', 'angle_rad', 'angle_rad'] } }, 'input.columns', /twice/],
  ['reconnect delay zero', { input: { reconnect: { min_delay_s: 0 } } }, 'input.reconnect.min_delay_s', /> 0/],
  ['unknown sensor kind', { sensor: { kind: 'laser' } }, 'sensor.kind', /angle, encoder, split-photodiode, psd/],
  ['encoder without counts_per_rev', { sensor: { kind: 'encoder' }, input: { columns: ['t_s', 'counts'] } }, 'sensor.counts_per_rev', /required/],
  ['encoder with counter_bits 1', { sensor: { kind: 'encoder', counts_per_rev: 100, counter_bits: 1 }, input: { columns: ['t_s', 'counts'] } }, 'sensor.counter_bits', /≥ 2/],
  ['encoder with counter_bits 64', { sensor: { kind: 'encoder', counts_per_rev: 100, counter_bits: 64 }, input: { columns: ['t_s', 'counts'] } }, 'sensor.counter_bits', /≤ 53/],
  ['encoder columns lacking counts', { sensor: { kind: 'encoder', counts_per_rev: 100 } }, 'input.columns', /counts/],
  ['split photodiode without beam radius', { sensor: { kind: 'split-photodiode', lever_arm_m: 0.3 }, input: { columns: ['t_s', 'a', 'b'] } }, 'sensor.beam_radius_m', /required/],
  ['split photodiode saturation 1', { sensor: { kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 1e-3, saturation: 1 }, input: { columns: ['t_s', 'a', 'b'] } }, 'sensor.saturation', /< 1/],
  ['split photodiode columns lacking b', { sensor: { kind: 'split-photodiode', lever_arm_m: 0.3, beam_radius_m: 1e-3 }, input: { columns: ['t_s', 'a'] } }, 'input.columns', /"b"/],
  ['psd without half length', { sensor: { kind: 'psd', lever_arm_m: 1 }, input: { columns: ['t_s', 'x_m'] } }, 'sensor.half_length_m', /required/],
  ['psd with a negative lever arm', { sensor: { kind: 'psd', lever_arm_m: -1, half_length_m: 0.005 }, input: { columns: ['t_s', 'x_m'] } }, 'sensor.lever_arm_m', /> 0/],
  ['psd columns lacking x_m', { sensor: { kind: 'psd', lever_arm_m: 1, half_length_m: 0.005 } }, 'input.columns', /x_m/],
  ['an angle sensor with a parameter it does not take', { sensor: { kind: 'angle', lever_arm_m: 1 } }, 'sensor.lever_arm_m', /unknown/],
  ['frames without channels', { input: { format: 'frames', columns: undefined } }, 'input.channels', /required.*frames/],
  ['frames channels lacking the angle', { input: { format: 'frames', columns: undefined, channels: [{ role: 'temp_C', scale: 1e-4 }] } }, 'input.channels', /angle_rad/],
  ['a channel with a string scale', { input: { format: 'frames', columns: undefined, channels: [{ role: 'angle_rad', scale: '1e-9' }] } }, 'input.channels[0].scale', /number/],
  ['a channel without a role', { input: { format: 'frames', columns: undefined, channels: [{ scale: 1e-9 }] } }, 'input.channels[0].role', /./],
  ['seventeen channels', { input: { format: 'frames', columns: undefined, channels: Array.from({ length: 17 }, () => ({ role: '_' })) } }, 'input.channels', /16/],
  ['clock_wrap with frames', { input: { format: 'frames', columns: undefined, channels: [{ role: 'angle_rad', scale: 1e-9 }], clock_wrap: 65.536 } }, 'input.clock_wrap', /lines/],
  ['step_periods > window_periods', { analysis: { window_periods: 2, step_periods: 3 } }, 'analysis.step_periods', /window_periods/],
  ['zero window_periods', { analysis: { window_periods: 0 } }, 'analysis.window_periods', /> 0/],
  ['hampel half width not an integer', { analysis: { hampel_half_width: 2.5 } }, 'analysis.hampel_half_width', /integer/],
  ['ribbon with width only', { fibre: { diameter_m: undefined, width_m: 1e-4 } }, 'fibre.thickness_m', /both width_m and thickness_m/],
  ['ribbon with thickness only', { fibre: { diameter_m: undefined, thickness_m: 1e-5 } }, 'fibre.width_m', /both width_m and thickness_m/],
  ['round and ribbon at once', { fibre: { width_m: 1e-4, thickness_m: 1e-5 } }, 'fibre.width_m', /either/],
  ['webhook url not a URL', { alerts: { webhook: { url: 'not a url' } } }, 'alerts.webhook.url', /URL/],
  ['webhook without url', { alerts: { webhook: { timeout_s: 3 } } }, 'alerts.webhook.url', /required/],
  ['webhook retries negative', { alerts: { webhook: { url: 'http://127.0.0.1:1/', retries: -1 } } }, 'alerts.webhook.retries', /≥ 0/],
  ['command with an empty argv', { alerts: { command: { argv: [] } } }, 'alerts.command.argv', /program/],
  ['stderr as a string', { alerts: { stderr: 'yes' } }, 'alerts.stderr', /true or false/],
  ['twist fraction above 1', { alerts: { twist_fraction: 1.5 } }, 'alerts.twist_fraction', /≤ 1/],
  ['negative alert threshold', { alerts: { period_change_ppm: -300 } }, 'alerts.period_change_ppm', /> 0/],
  ['unknown top-level key', { stations: 'bench-b' }, 'stations', /unknown field/],
  ['unknown key in fibre (a unit typo)', { fibre: { diameter_um: 25 } }, 'fibre.diameter_um', /unknown field/],
  ['unknown key in analysis', { analysis: { window: 4 } }, 'analysis.window', /unknown field/],
  ['unknown key in alerts', { alerts: { no_data: 20 } }, 'alerts.no_data', /unknown field/],
  ['unknown key in a channel', { input: { format: 'frames', columns: undefined, channels: [{ role: 'angle_rad', gain: 2 }] } }, 'input.channels[0].gain', /unknown field/],
  ['missing station', { station: undefined }, 'station', /is required/],
  ['missing fibre', { fibre: undefined }, 'fibre', /is required/],
  ['missing fibre name', { fibre: { name: undefined } }, 'fibre.name', /is required/],
  ['fibre a string', { fibre: 'W25' }, 'fibre', /./],
  ['part without mass', { pendulum: { parts: [{ shape: 'disc', radius_m: 0.01 }] } }, 'pendulum.parts[0].mass_kg', /required/],
  ['part of an unknown shape', { pendulum: { parts: [{ shape: 'cone', mass_kg: 0.01 }] } }, 'pendulum.parts[0].shape', /sphere/],
  ['negative diameter σ', { fibre: { diameter_sigma_m: -1e-7 } }, 'fibre.diameter_sigma_m', /≥ 0/],
  ['length σ without a length', { fibre: { length_m: undefined, length_sigma_m: 1e-3 } }, 'fibre.length_sigma_m', /needs fibre\.length_m/],
  ['width σ on a round fibre', { fibre: { width_sigma_m: 1e-6 } }, 'fibre.width_sigma_m', /needs fibre\.width_m/],
  ['inertia σ without an inertia', { pendulum: { inertia_kg_m2: undefined, inertia_sigma_kg_m2: 1e-7 } }, 'pendulum.inertia_sigma_kg_m2', /needs pendulum\.inertia_kg_m2/],
  ['unknown damping model', { pendulum: { damping: 'structural' } }, 'pendulum.damping', /"internal" or "viscous"/],
  ['temperature zero', { environment: { temperature_K: 0 } }, 'environment.temperature_K', /> 0/],
  ['unknown key in environment', { environment: { temperature_C: 22 } }, 'environment.temperature_C', /unknown field/],
];

describe('refused station files name the field', () => {
  for (const [what, patch, field, why] of REFUSED) {
    it(`${what} → ${field}`, () => {
      const e = refusal(withPatch(CONTRACT_EXAMPLE, patch));
      expect(e.field).toBe(field);
      // one line: "source: field: reason"
      expect(e.message).not.toContain('\n');
      expect(e.message.startsWith(`st.json: ${field}: `)).toBe(true);
      expect(e.message.slice(`st.json: ${field}: `.length)).toMatch(why);
    });
  }

  it('refuses a value that is not an object at all', () => {
    for (const v of [null, 42, 'bench-a', []]) {
      const e = refusal(v);
      expect(e.message).toMatch(/^st\.json: /);
    }
  });

  it('refuses NaN and Infinity as numbers', () => {
    expect(refusal(withPatch(CONTRACT_EXAMPLE, { fibre: { length_m: Infinity } })).field).toBe('fibre.length_m');
    expect(refusal(withPatch(CONTRACT_EXAMPLE, { fibre: { length_m: NaN } })).field).toBe('fibre.length_m');
    expect(refusal(withPatch(CONTRACT_EXAMPLE, { input: { format: 'frames', columns: undefined, channels: [{ role: 'angle_rad', scale: Infinity }] } })).field)
      .toBe('input.channels[0].scale');
  });
});

describe('loadStation', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'fw-station-'));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('reads a file and names the file in errors', () => {
    const good = join(dir, 'good.json');
    writeFileSync(good, JSON.stringify(CONTRACT_EXAMPLE, null, 2));
    expect(loadStation(good).station).toBe('bench-a');

    const bad = join(dir, 'bad.json');
    writeFileSync(bad, JSON.stringify(withPatch(CONTRACT_EXAMPLE, { fibre: { diameter_m: -1 } })));
    expect(() => loadStation(bad)).toThrow(`${bad}: fibre.diameter_m: must be > 0`);
  });

  it('refuses a file that is not JSON, and one that is not there, naming the file', () => {
    const broken = join(dir, 'broken.json');
    writeFileSync(broken, '{ "station": "bench-a", ');
    expect(() => loadStation(broken)).toThrow(StationError);
    expect(() => loadStation(broken)).toThrow(new RegExp(`^${broken.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: not valid JSON`));
    expect(() => loadStation(join(dir, 'absent.json'))).toThrow(/absent\.json: cannot read station file \(ENOENT\)/);
  });
});

describe('stationFromColumns', () => {
  it('makes an angle station from a column list', () => {
    const s = stationFromColumns(['t_s', 'angle_rad', 'temp_C']);
    expect(s.sensor.kind).toBe('angle');
    expect(s.input.columns).toEqual(['t_s', 'angle_rad', 'temp_C']);
  });

  it('refuses columns it cannot interpret without a station file', () => {
    expect(() => stationFromColumns(['t_s', 'counts'])).toThrow(/counts_per_rev/);
    expect(() => stationFromColumns(['t_s', 'x_m'])).toThrow(/angle_rad/);
    expect(() => stationFromColumns(['t_s', 'angle_deg'])).toThrow(/angle_rad/);
    expect(() => stationFromColumns(['t_s', 'angle_rad', 'temp_F'])).toThrow(/^--columns: input\.columns\[2\]: must be one of/);
  });
});
