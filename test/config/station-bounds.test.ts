/**
 * The station file refuses nonsense: every analysis and alerts setting and the
 * reconnect delays have physical ranges (docs/commands.md, "Keys"), alert URLs
 * are http(s) only, cross-field rules the decoders would otherwise trip over
 * are checked up front, and an unknown fibre material is a warning, not a
 * refusal. A UTF-8 byte-order mark is accepted.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadStation, parseStation, StationError, stationWarnings } from '../../src/config/station.js';

const base = () => ({ station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad'] } });

function refusal(value: Record<string, unknown>): StationError {
  try {
    parseStation(value, 'st.json');
  } catch (e) {
    expect(e).toBeInstanceOf(StationError);
    return e as StationError;
  }
  throw new Error(`accepted: ${JSON.stringify(value)}`);
}

/** [section, key, a value below the range, a value above it (or undefined), the range's words]. */
const RANGES: [string, string, number, number | undefined, string, string][] = [
  ['analysis', 'window_periods', 1e-9, 1e5, '≥ 1 periods', '≤ 1000 periods'],
  ['analysis', 'step_periods', 1e-9, undefined, '≥ 0.1 periods', ''],
  ['analysis', 'samples_per_period', 2, 1e9, '≥ 8', '≤ 10000'],
  ['analysis', 'first_estimate_s', 1e-3, 1e9, '≥ 1 s', '≤ 604800 s'],
  ['analysis', 'period_guess_s', 1e-6, 1e9, '≥ 0.01 s', '≤ 1000000 s'],
  ['analysis', 'hampel_threshold', 0.1, 1e6, '≥ 1', '≤ 1000'],
  ['alerts', 'equilibrium_rate_rad_per_hour', 1e-300, 1e3, '≥ 1e-12 rad/h', '≤ 10 rad/h'],
  ['alerts', 'period_change_ppm', 1e-9, 1e9, '≥ 0.001 ppm', '≤ 1000000 ppm'],
  ['alerts', 'no_data_s', 1e-3, 1e9, '≥ 0.1 s', '≤ 604800 s'],
  ['alerts', 'horizon_h', 1e-6, 1e6, '≥ 0.01 h', '≤ 8760 h'],
  ['alerts', 'amplitude_min_rad', 1e-20, 10, '≥ 1e-12 rad', '≤ 1 rad'],
];

describe('settings outside their physical range are refused, naming the field and the range', () => {
  for (const [section, key, low, high, lowWords, highWords] of RANGES) {
    it(`${section}.${key}`, () => {
      const field = `${section}.${key}`;
      // the step must not exceed the window, so test it against a long window
      const extra = key === 'step_periods' ? { window_periods: 10 } : {};
      const lo = refusal({ ...base(), [section]: { ...extra, [key]: low } });
      expect(lo.field).toBe(field);
      expect(lo.message).toBe(`st.json: ${field}: must be ${lowWords}`);
      if (high !== undefined) expect(refusal({ ...base(), [section]: { [key]: high } }).message).toBe(`st.json: ${field}: must be ${highWords}`);
      // zero and negatives keep their plain message
      expect(refusal({ ...base(), [section]: { ...extra, [key]: 0 } }).message).toBe(`st.json: ${field}: must be > 0`);
    });
  }

  it('the defaults lie inside every range', () => {
    expect(() => parseStation(base())).not.toThrow();
  });

  it('Hampel half-width, webhook and command settings', () => {
    expect(refusal({ ...base(), analysis: { hampel_half_width: 5000 } }).message).toBe('st.json: analysis.hampel_half_width: must be ≤ 1000');
    const hook = (o: object) => ({ ...base(), alerts: { webhook: { url: 'https://alerts.example.invalid/fw', ...o } } });
    expect(refusal(hook({ timeout_s: 0.001 })).message).toBe('st.json: alerts.webhook.timeout_s: must be ≥ 0.1 s');
    expect(refusal(hook({ max_delay_s: 1e7 })).message).toBe('st.json: alerts.webhook.max_delay_s: must be ≤ 86400 s');
    expect(refusal(hook({ retries: 1e9 })).message).toBe('st.json: alerts.webhook.retries: must be ≤ 1000000');
    expect(refusal(hook({ queue_max: 1e9 })).message).toBe('st.json: alerts.webhook.queue_max: must be ≤ 1000000');
    expect(refusal({ ...base(), alerts: { command: { argv: ['/bin/true'], timeout_s: 1e5 } } }).message).toBe('st.json: alerts.command.timeout_s: must be ≤ 3600 s');
  });

  it('reconnect delays: a floor of 10 ms, and the longest not below the first', () => {
    expect(refusal({ ...base(), input: { ...base().input, reconnect: { min_delay_s: 1e-300 } } }).message).toBe('st.json: input.reconnect.min_delay_s: must be ≥ 0.01 s');
    expect(refusal({ ...base(), input: { ...base().input, reconnect: { min_delay_s: 5, max_delay_s: 1 } } }).message)
      .toBe('st.json: input.reconnect.max_delay_s: must be ≥ input.reconnect.min_delay_s');
    expect(refusal({ ...base(), input: { ...base().input, reconnect: { give_up_s: 0.5 } } }).message).toBe('st.json: input.reconnect.give_up_s: must be ≥ 1 s');
    expect(parseStation({ ...base(), input: { ...base().input, reconnect: { min_delay_s: 0.01, max_delay_s: 0.01 } } }).input.reconnect).toEqual({ min_delay_s: 0.01, max_delay_s: 0.01 });
  });
});

describe('alert URLs', () => {
  it('http and https are accepted', () => {
    for (const url of ['http://127.0.0.1:8080/hook', 'https://alerts.example.invalid/fw?k=1', 'HTTPS://EXAMPLE.INVALID/']) {
      expect(parseStation({ ...base(), alerts: { webhook: { url } } }).alerts.webhook!.url).toBe(url);
    }
  });

  it('file:, javascript:, data:, ftp: and non-URLs are refused', () => {
    for (const url of ['file:///etc/passwd', 'javascript:alert(1)', 'data:text/plain,hi', 'ftp://example.invalid/', 'gopher://x/']) {
      const e = refusal({ ...base(), alerts: { webhook: { url } } });
      expect(e.field).toBe('alerts.webhook.url');
      expect(e.message).toBe('st.json: alerts.webhook.url: must be an http:// or https:// URL');
    }
    expect(refusal({ ...base(), alerts: { webhook: { url: 'not a url' } } }).message).toBe('st.json: alerts.webhook.url: must be a URL');
  });
});

describe('rules the decoders and the inertia would otherwise meet only at run time', () => {
  it('one time column at most; no time role among frames channels', () => {
    expect(refusal({ ...base(), input: { columns: ['t_ms', 'angle_rad', 't_us'] } }).message).toBe('st.json: input.columns: more than one time column ("t_ms", "t_us"): give one');
    expect(refusal({ ...base(), input: { format: 'frames', channels: [{ role: 'angle_rad', scale: 1e-9 }, { role: 't_s' }] } }).message)
      .toBe('st.json: input.channels: "t_s": frames carry their time in the frame header, not in a channel');
  });

  it('a parts list that cannot give an inertia names the part and field', () => {
    const parts = (p: object) => ({ ...base(), pendulum: { parts: [{ shape: 'sphere', mass_kg: 0.01, radius_m: 0.004 }, p] } });
    expect(refusal(parts({ shape: 'ring', mass_kg: 0.05, inner_radius_m: 0.03, outer_radius_m: 0.02 })).field).toBe('pendulum.parts[1].inner_radius_m');
    expect(refusal(parts({ shape: 'disc', mass_kg: 0.05, inner_radius_m: 0.03, outer_radius_m: 0.02 })).message)
      .toBe('st.json: pendulum.parts[1].inner_radius_m: must be ≤ outer_radius_m (0.03 m > 0.02 m)');
    expect(refusal(parts({ shape: 'rod', mass_kg: 0.05 })).message).toBe('st.json: pendulum.parts[1].length_m: is required for shape "rod"');
    // equal radii: a thin ring, accepted
    expect(() => parseStation(parts({ shape: 'ring', mass_kg: 0.05, inner_radius_m: 0.02, outer_radius_m: 0.02 }))).not.toThrow();
    // a given inertia wins over the parts, so the parts are not evaluated
    expect(() => parseStation({ ...parts({ shape: 'rod', mass_kg: 0.05 }), pendulum: { inertia_kg_m2: 1e-5, parts: [{ shape: 'rod', mass_kg: 0.05 }] } })).not.toThrow();
  });
});

describe('files', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'fw-station-bounds-'));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('an unknown fibre material: accepted, with one warning naming the field', () => {
    const p = join(dir, 'unknown-material.json');
    writeFileSync(p, JSON.stringify({ ...base(), fibre: { name: 'f', material: 'unobtainium', diameter_m: 2e-5, length_m: 0.5 } }));
    const warned: string[] = [];
    const s = loadStation(p, (m) => warned.push(m));
    expect(s.fibre.material).toBe('unobtainium');
    expect(warned).toHaveLength(1);
    expect(warned[0]).toMatch(new RegExp(`^${p.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}: fibre\\.material: "unobtainium" is not in the materials table \\(music wire, tungsten, .*\\): no twist limit and no handbook check for this fibre$`));
    // known names and aliases say nothing
    for (const material of ['tungsten', 'Fused Silica', 'BeCu']) expect(stationWarnings(parseStation({ ...base(), fibre: { name: 'f', material } }))).toEqual([]);
  });

  it('a UTF-8 byte-order mark before the JSON is accepted', () => {
    const p = join(dir, 'bom.json');
    writeFileSync(p, Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from(JSON.stringify(base()))]));
    expect(loadStation(p, () => {}).station).toBe('s');
  });
});
