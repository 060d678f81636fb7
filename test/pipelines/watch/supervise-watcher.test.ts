/**
 * A watcher that throws is restarted with its state reset (superviseWatcher,
 * as the live sink runs every watcher): the kernel each watcher leans on is
 * made to throw once — the robust trend, the CUSUM step, or the alert state
 * machine, the rest of each module passed through — and the watcher must
 * leave one `watch-error` incident naming it, go on raising its alerts and
 * complete with its input.
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { from, lastValueFrom, tap, toArray, type Observable } from 'rxjs';
import { TestScheduler } from 'rxjs/testing';
import { simulateWindowSeries } from '../../../bench/watch.js';
import { FLAG_SATURATED, type AngleBlock } from '../../../src/domain/block.js';
import type { Incident } from '../../../src/domain/events.js';
import type { WindowResult } from '../../../src/domain/window-result.js';
import { superviseWatcher } from '../../../pipelines/watch/supervise-watcher.js';
import { watchEquilibrium } from '../../../pipelines/watch/watch-equilibrium.js';
import { watchPeriod } from '../../../pipelines/watch/watch-period.js';
import { watchAmplitude } from '../../../pipelines/watch/watch-amplitude.js';
import { watchSaturation } from '../../../pipelines/watch/watch-saturation.js';
import { watchNoData } from '../../../pipelines/watch/watch-no-data.js';

/** Which kernel throws, on which of its calls (1-based), once. */
const fault = vi.hoisted(() => ({ target: '', at: 0, calls: 0 }));
const hit = (target: string): boolean => fault.target === target && ++fault.calls === fault.at;

vi.mock(import('../../../src/analysis/robust-trend.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    robustTrend: (...a: Parameters<typeof m.robustTrend>) => {
      if (hit('robustTrend')) throw new Error('injected: trend');
      return m.robustTrend(...a);
    },
  };
});
vi.mock(import('../../../src/analysis/cusum.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    cusumStep: (...a: Parameters<typeof m.cusumStep>) => {
      if (hit('cusumStep')) throw new Error('injected: cusum');
      return m.cusumStep(...a);
    },
  };
});
vi.mock(import('../../../pipelines/watch/alert-state.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    createAlertState: (o: Parameters<typeof m.createAlertState>[0]) => {
      const sm = m.createAlertState(o);
      return {
        get active() { return sm.active; },
        get raisedAt() { return sm.raisedAt; },
        clearFraction: sm.clearFraction,
        step(ev: Parameters<typeof sm.step>[0]) {
          if (hit(o.kind)) throw new Error(`injected: ${o.kind} state`);
          return sm.step(ev);
        },
      };
    },
  };
});

afterEach(() => {
  fault.target = '';
  fault.at = 0;
  fault.calls = 0;
});

const THR_H = 5e-6;
const THR = THR_H / 3600;

/** The watch-error incidents and the rest. */
function split(inc: Incident[]): { errors: Incident[]; alerts: Incident[] } {
  return { errors: inc.filter((i) => i.kind === 'watch-error'), alerts: inc.filter((i) => i.kind !== 'watch-error') };
}

/** Run a supervised watcher over windows to completion. */
async function over<T>(input: T[], name: string, make: () => (s: Observable<T>) => Observable<Incident>): Promise<{ incidents: Incident[]; completed: boolean }> {
  let completed = false;
  const incidents = await lastValueFrom(from(input).pipe(superviseWatcher(name, make), tap({ complete: () => (completed = true) }), toArray()));
  return { incidents, completed };
}

describe('a watcher that throws', () => {
  it('equilibrium: the robust trend throws early; the creep is still raised after its onset', async () => {
    const onset = 6 * 3600 + 1234;
    const tc = 12 * 3600;
    const ws = simulateWindowSeries({ seed: 2, hours: 18, temp_swing_K: 2, creep: { t0_s: onset, a_rad: 2 * THR * tc, t_c_s: tc } });
    fault.target = 'robustTrend';
    fault.at = 5;
    const r = await over(ws, 'watch-equilibrium', () => watchEquilibrium({ threshold_rad_per_hour: THR_H }));
    expect(r.completed).toBe(true);
    const { errors, alerts } = split(r.incidents);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatchObject({ severity: 'warning', data: { stage: 'watch-equilibrium', message: 'injected: trend', faults: 1 } });
    expect(errors[0].message).toMatch(/^watch-equilibrium failed at t = \d+\.\d\d s: injected: trend; the watcher is restarted with its state reset/);
    expect(errors[0].t!).toBeLessThan(onset);
    const raised = alerts.filter((i) => i.state === 'raised');
    expect(raised).toHaveLength(1);
    expect(raised[0].kind).toBe('equilibrium-drift');
    expect(raised[0].t! - onset).toBeGreaterThan(0);
    expect(raised[0].t! - onset).toBeLessThan(3 * 3600);
  });

  it('period: the CUSUM step throws after the baseline; a fresh baseline is taken and the 500 ppm step is raised', async () => {
    const tStep = 3 * 3600 + 7;
    const ws = simulateWindowSeries({ seed: 12, hours: 5, temp_swing_K: 2, period_step: { t_s: tStep, ppm: 500 } });
    fault.target = 'cusumStep';
    fault.at = 10;
    const r = await over(ws, 'watch-period', () => watchPeriod({ periodChange_ppm: 300 }));
    expect(r.completed).toBe(true);
    const { errors, alerts } = split(r.incidents);
    expect(errors).toHaveLength(1);
    expect(errors[0]).toMatchObject({ data: { stage: 'watch-period', message: 'injected: cusum' } });
    const raised = alerts.filter((i) => i.state === 'raised');
    expect(raised).toHaveLength(1);
    const first = ws.findIndex((w) => w.t_end_s > tStep);
    const at = ws.findIndex((w) => w.t_mid_s === raised[0].t);
    expect(at - first).toBeGreaterThanOrEqual(0);
    expect(at - first).toBeLessThanOrEqual(2);
  });

  it('amplitude: a fault before the alert changes nothing else; a fault while raised raises it again', async () => {
    const base = simulateWindowSeries({ seed: 21, hours: 2 });
    const ws: WindowResult[] = base.map((w) => ({ ...w, amplitude_rad: w.t_mid_s < 5400 ? 1e-4 * Math.exp(-w.t_mid_s / 1200) : 1e-4 }));
    const make = () => watchAmplitude({ min_rad: 1e-5 });
    const plain = await lastValueFrom(from(ws).pipe(make(), toArray()));
    expect(plain.map((i) => i.state)).toEqual(['raised', 'updated', 'cleared']);

    fault.target = 'amplitude-low';
    fault.at = 5;
    const early = await over(ws, 'watch-amplitude', make);
    expect(early.completed).toBe(true);
    expect(split(early.incidents).errors).toHaveLength(1);
    expect(split(early.incidents).errors[0]).toMatchObject({ t: ws[4].t_mid_s, data: { stage: 'watch-amplitude', message: 'injected: amplitude-low state' } });
    expect(split(early.incidents).alerts).toEqual(plain);

    fault.calls = 0;
    const raisedAt = ws.findIndex((w) => w.t_mid_s === plain[0].t);
    fault.at = raisedAt + 10; // ten windows into the alert
    const late = await over(ws, 'watch-amplitude', make);
    const { errors, alerts } = split(late.incidents);
    expect(errors).toHaveLength(1);
    expect(errors[0].message).toContain('an alert it had raised may be raised again');
    // the fresh watcher knows nothing of the first alert: it raises anew at the next window, and clears as before
    expect(alerts.map((i) => i.state)).toEqual(['raised', 'raised', 'updated', 'cleared']);
    expect(alerts[1].t).toBe(ws[raisedAt + 10].t_mid_s);
    // cleared when it was without the fault, as the end of the alert the fresh watcher raised
    expect(alerts.at(-1)).toMatchObject({ t: plain.at(-1)!.t, message: plain.at(-1)!.message, data: { raised_t: alerts[1].t } });
  });

  it('saturation: the alert state throws on an early block; the saturated stretch is still raised and cleared', async () => {
    const blk = (sec: number, sat: number): AngleBlock => {
      const n = 100;
      const flags = new Uint8Array(n);
      for (let i = 0; i < sat; i++) flags[i] = FLAG_SATURATED;
      return { n, t: Float64Array.from({ length: n }, (_, i) => sec + i / n), clock: 'device', host_ms: 0, channels: {}, angle: new Float64Array(n), flags };
    };
    const blocks: AngleBlock[] = [];
    for (let s = 0; s < 300; s++) blocks.push(blk(s, s >= 100 && s < 110 ? 50 : 0));
    const make = () => watchSaturation({ interval_s: 60, maxFraction: 0.01 });
    const plain = await lastValueFrom(from(blocks).pipe(make(), toArray()));
    expect(plain.map((i) => i.state)).toEqual(['raised', 'cleared']);
    fault.target = 'saturation';
    fault.at = 20;
    const r = await over(blocks, 'watch-saturation', make);
    expect(r.completed).toBe(true);
    const { errors, alerts } = split(r.incidents);
    expect(errors).toHaveLength(1);
    // the block's last sample time: 19.99 s
    expect(errors[0]).toMatchObject({ t: 19.99, data: { stage: 'watch-saturation', message: 'injected: saturation state' } });
    expect(alerts).toEqual(plain);
  });

  it('no-data: the alert state throws on a timer tick; silence counts from the restart, raised and cleared', () => {
    const block = (t0: number): AngleBlock => ({ n: 10, t: Float64Array.from({ length: 10 }, (_, i) => t0 + i * 0.01), clock: 'device', host_ms: 0, channels: {}, angle: new Float64Array(10), flags: new Uint8Array(10) });
    fault.target = 'no-data';
    fault.at = 4; // the check at 4 s
    const ts = new TestScheduler((a, b) => expect(a).toEqual(b));
    const got: { at: number; inc: Incident }[] = [];
    let completed = false;
    ts.run(({ cold, flush }) => {
      const src = cold('a 999ms b 999ms c 17999ms d 999ms e 3999ms |', { a: block(0), b: block(1), c: block(2), d: block(20), e: block(21) }) as Observable<AngleBlock>;
      src.pipe(superviseWatcher('watch-no-data', () => watchNoData({ noData_s: 5, scheduler: ts, updateEvery_s: 6, wall_ms: () => 1.7e12 })))
        .subscribe({ next: (inc) => got.push({ at: ts.now(), inc }), complete: () => (completed = true) });
      flush();
    });
    expect(completed).toBe(true);
    expect(got.map((g) => [g.at, g.inc.kind, g.inc.state])).toEqual([
      [4000, 'watch-error', undefined],
      // the fresh watcher starts its clock at 4 s: 5 s of silence at 9 s (without the fault: at 7 s)
      [9000, 'no-data', 'raised'], [15000, 'no-data', 'updated'], [20000, 'no-data', 'cleared'],
    ]);
    expect(got[0].inc).toMatchObject({ data: { stage: 'watch-no-data', message: 'injected: no-data state' } });
    expect(got[0].inc.t).toBeUndefined();
  });
});
