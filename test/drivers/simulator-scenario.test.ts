import { readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { loadScenario, parseScenario, ScenarioError } from '../../drivers/simulator/scenario.js';
import { kappaRound, periodFromKappa } from '../../src/physics/torsion.js';

const dir = new URL('../../drivers/simulator/scenarios/', import.meta.url);
const min = { name: 'm', duration_s: 10, sample_rate_Hz: 10, inertia_kg_m2: 1e-5, kappa_Nm_per_rad: 1e-8, q: 100 };

const err = (v: unknown): string => {
  try {
    parseScenario(v, 'sc.json');
  } catch (e) {
    expect(e).toBeInstanceOf(ScenarioError);
    return (e as Error).message;
  }
  throw new Error('expected a ScenarioError');
};

describe('scenario files', () => {
  it('the shipped scenarios parse, with the periods their descriptions promise', () => {
    const files = readdirSync(dir).filter((f) => f.endsWith('.json'));
    expect(files.length).toBeGreaterThanOrEqual(3);
    const T: Record<string, number> = {};
    for (const f of files) {
      const s = loadScenario(new URL(f, dir).pathname);
      T[s.name] = periodFromKappa(s.I, s.kappa);
    }
    expect(T['tungsten-bench']).toBeGreaterThan(50);
    expect(T['tungsten-bench']).toBeLessThan(70);
    expect(T['encoder-fast']).toBeCloseTo(2, 1);
    expect(T['photodiode-saturating']).toBeCloseTo(30, 2);
  });

  it('defaults and derived values', () => {
    const s = parseScenario(min);
    expect(s.temperature_K).toBe(295);
    expect(s.thermal_noise).toBe(true);
    expect(s.sensor.kind).toBe('angle');
    expect(s.output.format).toBe('lines');
    expect(s.output.columns).toEqual(['t_s', 'angle_rad']);
    expect(s.I).toBe(1e-5);
  });

  it('κ from a fibre and the materials table, I from pendulum parts', () => {
    const s = parseScenario({
      ...min, inertia_kg_m2: undefined, kappa_Nm_per_rad: undefined,
      pendulum: { parts: [{ shape: 'point', mass_kg: 0.2, offset_m: 0.3, count: 2 }] },
      fibre: { material: 'piano wire', diameter_m: 6.35e-4, length_m: 2.5 },
    });
    expect(s.I).toBeCloseTo(0.036, 12);
    expect(s.kappa).toBeCloseTo(kappaRound(79.29e9, 6.35e-4, 2.5), 15);
    const t = parseScenario({ ...min, kappa_Nm_per_rad: undefined, fibre: { material: 'W', diameter_m: 2.5e-5, length_m: 0.8 }, temperature_swing: { amplitude_K: 1, period_s: 100 } });
    expect(t.dGdT_per_K).toBeLessThan(0); // from the table
  });

  it('errors name the field and why', () => {
    expect(err({ ...min, q: 0.2 })).toBe('sc.json: q: must be > 0.5 (underdamped)');
    expect(err({ ...min, duration_s: undefined })).toBe('sc.json: duration_s: is required');
    expect(err({ ...min, sample_rate: 5 })).toBe('sc.json: sample_rate: unknown field');
    expect(err({ ...min, sensor: { kind: 'encoder' } })).toBe('sc.json: sensor.counts_per_rev: is required');
    expect(err({ ...min, sensor: { kind: 'laser' } })).toMatch(/^sc\.json: sensor\.kind: /);
    expect(err({ ...min, inertia_kg_m2: undefined })).toBe('sc.json: inertia_kg_m2: is required (or give pendulum.parts)');
    expect(err({ ...min, kappa_Nm_per_rad: undefined, fibre: { material: 'cheese', diameter_m: 1e-4, length_m: 1 } })).toMatch(/^sc\.json: fibre\.material: unknown material "cheese"/);
    expect(err({ ...min, inertia_kg_m2: undefined, pendulum: { parts: [{ shape: 'sphere', mass_kg: 1 }] } })).toBe('sc.json: pendulum.parts[0].radius_m: is required for shape "sphere"');
    expect(err({ ...min, dropouts: [{ t_s: 1, duration_s: -1 }] })).toBe('sc.json: dropouts[0].duration_s: must be > 0');
    expect(err({ ...min, output: { format: 'frames' } })).toBe('sc.json: output.channels: is required for format "frames"');
    expect(err({ ...min, output: { columns: ['t_s', 'counts'] } })).toBe('sc.json: output.columns: sensor "angle" writes a "angle_rad" channel; list it');
    expect(err({ ...min, output: { columns: ['t_s', 'angle_rad', 'temp_C'] } })).toBe('sc.json: output.columns: "temp_C" needs temperature_channel');
    expect(err({ ...min, output: { format: 'frames', channels: [{ role: 't_us' }, { role: 'angle_rad', scale: 1e-9 }] } })).toMatch(/output\.channels\[0\]\.role: frames carry the device time/);
    expect(err({ ...min, disturbances: [{ t_s: 3 }] })).toBe('sc.json: disturbances[0]: needs kick_rad, twist_turns or creep');
    expect(err({ ...min, temperature_swing: { amplitude_K: 1, period_s: 10 } })).toMatch(/temperature_swing\.dG_dT_per_K: is required/);
  });

  it('loadScenario names the file on unreadable or bad JSON', () => {
    expect(() => loadScenario('/nonexistent/x.json')).toThrow(/\/nonexistent\/x\.json: cannot read scenario file \(ENOENT\)/);
  });
});

describe('station for a scenario', () => {
  it('every shipped scenario yields a valid station that matches its output and sensor', async () => {
    const { stationForScenario } = await import('../helpers/station-for-scenario.js');
    for (const f of readdirSync(dir).filter((x) => x.endsWith('.json'))) {
      const sc = loadScenario(new URL(f, dir).pathname);
      const st = stationForScenario(sc, { device: '/dev/null' });
      expect(st.sensor.kind).toBe(sc.sensor.kind);
      expect(st.input.format).toBe(sc.output.format);
      expect(st.pendulum.inertia_kg_m2).toBe(sc.I);
      expect(st.analysis.period_guess_s).toBeCloseTo(periodFromKappa(sc.I, sc.kappa), 9);
      const other = stationForScenario(sc, { format: sc.output.format === 'lines' ? 'frames' : 'lines' });
      expect(other.input.format).not.toBe(sc.output.format);
    }
  });
});
