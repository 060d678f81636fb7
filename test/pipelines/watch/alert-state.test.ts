import { describe, expect, it } from 'vitest';
import { createAlertState, type AlertEvaluation } from '../../../pipelines/watch/alert-state.js';

const ev = (t: number, stat: number, extra: Partial<AlertEvaluation> = {}): AlertEvaluation => ({
  t, stat, statThreshold: 1, value: stat * 10, threshold: 10,
  message: (s) => `${s}: value ${stat * 10} units (threshold 10 units)`, data: { unit: 'units' }, ...extra,
});

describe('createAlertState', () => {
  it('raises once, updates at most every updateEvery_s with new numbers, clears with hysteresis', () => {
    const a = createAlertState({ kind: 'period-drift', severity: 'warning', updateEvery_s: 600, clearFraction: 0.7, clearAfter: 3 });
    const out = [];
    const stats = [0.2, 0.5, 1.2, 1.5, 1.1, 0.9, 0.8, 0.69, 0.5, 0.75, 0.6, 0.5, 0.4, 0.3, 1.0];
    for (let i = 0; i < stats.length; i++) {
      const inc = a.step(ev(i * 60 + (i >= 12 ? 600 : 0), stats[i]));
      if (inc) out.push({ i, state: inc.state, severity: inc.severity, msg: inc.message, value: inc.value, data: inc.data });
    }
    // raised at i = 2; no update before 600 s; the ok run at 7–8 is broken by 0.75 (≥ 0.7) at 9; cleared at 12 after 10, 11, 12
    expect(out.map((o) => [o.i, o.state])).toEqual([[2, 'raised'], [12, 'cleared'], [14, 'raised']]);
    expect(out[0].msg).toBe('raised: value 12 units (threshold 10 units)');
    expect(out[0].value).toBe(12);
    expect(out[1].severity).toBe('info');
    expect(out[1].data).toMatchObject({ unit: 'units', raised_t: 120, duration_s: 12 * 60 + 600 - 120 });
    expect(a.active).toBe(true);
  });

  it('sends updated while the condition persists, spaced by updateEvery_s', () => {
    const a = createAlertState({ kind: 'no-data', severity: 'alarm', updateEvery_s: 300 });
    const states: string[] = [];
    for (let t = 0; t <= 1000; t += 60) {
      const inc = a.step(ev(t, 2));
      if (inc) states.push(`${t}:${inc.state}`);
    }
    expect(states).toEqual(['0:raised', '300:updated', '600:updated', '900:updated']);
  });

  it('a non-significant excess does not raise; raiseAfter needs consecutive evaluations', () => {
    const a = createAlertState({ kind: 'equilibrium-drift', severity: 'warning', raiseAfter: 2 });
    expect(a.step(ev(0, 3, { significant: false }))).toBeNull();
    expect(a.step(ev(60, 3))).toBeNull();
    expect(a.step(ev(120, 0.5))).toBeNull();
    expect(a.step(ev(180, 3))).toBeNull();
    expect(a.step(ev(240, 3))?.state).toBe('raised');
    expect(a.raisedAt).toBe(240);
  });

  it('does not flap on a statistic hovering around the threshold', () => {
    const a = createAlertState({ kind: 'saturation', severity: 'warning', updateEvery_s: 1e9 });
    let n = 0;
    for (let i = 0; i < 200; i++) if (a.step(ev(i, i % 2 ? 1.05 : 0.95))) n++;
    expect(n).toBe(1);
  });

  it('rejects bad options', () => {
    expect(() => createAlertState({ kind: 'gap', severity: 'info', clearFraction: 1.5 })).toThrow(/clearFraction must be in \(0, 1\]/);
    expect(() => createAlertState({ kind: 'gap', severity: 'info', clearAfter: 0 })).toThrow(/clearAfter/);
  });
});
