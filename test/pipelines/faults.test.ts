/**
 * A fault in any stage of the assembled pipeline (pipelines/pipeline.ts) does
 * not end it: the kernel of one stage is made to throw once at a chosen block
 * (spy on the kernel class, or the kernel module mocked with the rest passed
 * through), and the stream must go on to the end, cut no window across the
 * fault, go on fitting windows after it and report one `internal-error`
 * incident naming the stage.
 */
import { afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { Subject } from 'rxjs';
import { blocks, normals } from '../helpers/blocks.js';
import type { AngleBlock } from '../../src/domain/block.js';
import type { Incident } from '../../src/domain/events.js';
import type { WindowResult } from '../../src/domain/window-result.js';
import type { AnalysisConfig } from '../../src/config/station.js';
import { FIT_STATUS } from '../../src/analysis/fit-status.js';
import { HoleFiller } from '../../src/analysis/hole-filler.js';
import { HampelDetector } from '../../src/analysis/hampel.js';
import { Decimator } from '../../src/analysis/decimate.js';
import { BlockBuffer } from '../../src/analysis/block-buffer.js';
import { analysisPipeline } from '../../pipelines/pipeline.js';

// the window analysis, passed through except for one window chosen per test
const analyseFault = vi.hoisted(() => ({ at_s: Infinity, thrown: false }));
vi.mock(import('../../src/analysis/window-analysis.js'), async (importOriginal) => {
  const m = await importOriginal();
  return {
    ...m,
    analyseWindow: (w, o) => {
      if (!analyseFault.thrown && w.t_start_s >= analyseFault.at_s) {
        analyseFault.thrown = true;
        throw new Error('injected: the fit blew up');
      }
      return m.analyseWindow(w, o);
    },
  };
});

// an invented balance: 20 s period, slow decay, 10 Hz for 1600 s, 1 µrad readout noise; blocks of 20 s
const P = 20, FS = 10, DURATION = 1600, BLOCK = 200;
/** the fault is injected at the block that starts at this time */
const TF = 800;
const ANALYSIS: AnalysisConfig = { window_periods: 4, step_periods: 1, samples_per_period: 40, period_guess_s: P, hampel_half_width: 5, hampel_threshold: 5 };

function signal(gap?: [number, number]): AngleBlock[] {
  const g = normals(7);
  const t: number[] = [], y: number[] = [];
  for (let i = 0; i < DURATION * FS; i++) {
    const ti = i / FS;
    if (gap && ti >= gap[0] && ti < gap[1]) continue;
    t.push(ti);
    y.push(1e-4 + 1e-3 * Math.exp(-ti / 20_000) * Math.cos((2 * Math.PI * ti) / P + 0.4) + 1e-6 * g());
  }
  return blocks(Float64Array.from(t), Float64Array.from(y), new Uint8Array(t.length), [BLOCK]);
}

interface Run {
  windows: WindowResult[];
  incidents: Incident[];
  cleanedSamples: number;
  cleanedLastT: number;
  completed: boolean;
  errors: unknown[];
}

function run(bs: AngleBlock[], onIncident?: (inc: Incident) => void): Run {
  const src = new Subject<AngleBlock>();
  const r: Run = { windows: [], incidents: [], cleanedSamples: 0, cleanedLastT: NaN, completed: false, errors: [] };
  const p = analysisPipeline(src, {
    analysis: ANALYSIS,
    onIncident: (inc) => {
      onIncident?.(inc);
      r.incidents.push(inc);
    },
  });
  p.cleaned$.subscribe({
    next: (b) => {
      r.cleanedSamples += b.n;
      if (b.n) r.cleanedLastT = b.t[b.n - 1];
    },
    error: (e) => r.errors.push(e),
  });
  p.windows$.subscribe({ next: (w) => r.windows.push(w), error: (e) => r.errors.push(e), complete: () => (r.completed = true) });
  for (const b of bs) src.next(b);
  src.complete();
  return r;
}

/** Make `method` of a kernel class throw once, on the first call `when` picks; otherwise the real method runs. */
function failOnce<T extends object>(proto: T, method: keyof T & string, when: (self: T, args: unknown[]) => boolean, message: string): void {
  const real = proto[method] as (...a: unknown[]) => unknown;
  let thrown = false;
  vi.spyOn(proto, method as never).mockImplementation(function (this: T, ...args: unknown[]) {
    if (!thrown && when(this, args)) {
      thrown = true;
      throw new Error(message);
    }
    return real.apply(this, args);
  } as never);
}

const realTimeAt = BlockBuffer.prototype.timeAt;
let reference: Run;
const input = signal();
const lastT = input[input.length - 1].t[BLOCK - 1];

beforeAll(() => {
  reference = run(input);
});
afterEach(() => {
  vi.restoreAllMocks();
  analyseFault.at_s = Infinity;
  analyseFault.thrown = false;
});

/** What every stage's fault must leave: the run goes on, nothing straddles the fault, one incident. */
function expectRecovered(r: Run, stage: string, message: string): void {
  expect(r.errors).toEqual([]);
  expect(r.completed).toBe(true);
  // later blocks still flow, to the end
  expect(r.cleanedLastT).toBe(lastT);
  // one internal-error incident, naming the stage and the message
  const faults = r.incidents.filter((i) => i.kind === 'internal-error');
  expect(faults).toHaveLength(1);
  expect(faults[0]).toMatchObject({ severity: 'warning', data: { stage, message, faults: 1 } });
  expect(faults[0].message).toContain(`${stage} failed`);
  expect(faults[0].message).toContain(message);
  expect(Math.abs(faults[0].t! - TF)).toBeLessThan(BLOCK / FS);
  // the restart is no gap in the data: none reported
  expect(r.incidents.filter((i) => i.kind === 'gap')).toEqual([]);
  // window numbers run on without a hole or a repeat (the store keys windows by them)
  expect(r.windows.map((w) => w.index)).toEqual(r.windows.map((_, i) => i));
  // no window spans the lost block [TF, TF + 20 s)
  for (const w of r.windows) expect(w.t_start_s < TF + 1 && w.t_end_s > TF + BLOCK / FS - 1, `window ${w.index} ${w.t_start_s}–${w.t_end_s}`).toBe(false);
  // windows after the fault are cut and fitted: the model's 20 s period
  const after = r.windows.filter((w) => w.t_start_s > TF);
  expect(after.length).toBeGreaterThanOrEqual((DURATION - TF - BLOCK / FS) / P - ANALYSIS.window_periods - 1);
  for (const w of after) {
    expect(w.status, `window ${w.index}`).toBe('ok');
    expect(Math.abs(w.period_s! - P) / P).toBeLessThan(1e-4);
  }
  // windows done before the fault are the ones a run without it gives
  const before = r.windows.filter((w) => w.t_end_s < TF - 2 * P);
  expect(before.length).toBeGreaterThan(30);
  expect(before).toEqual(reference.windows.slice(0, before.length));
}

describe('a fault in one pipeline stage', () => {
  it('the reference run: every window fitted, no incident', () => {
    expect(reference.completed).toBe(true);
    expect(reference.incidents).toEqual([]);
    expect(reference.cleanedSamples).toBe(DURATION * FS);
    expect(reference.windows.length).toBeGreaterThan(70);
    expect(reference.windows.every((w) => w.status === 'ok')).toBe(true);
  });

  it('fill holes: HoleFiller throws on the block at 800 s', () => {
    failOnce(HoleFiller.prototype, 'process', (_, a) => (a[0] as Float64Array)[0] === TF, 'injected: hole filler');
    const r = run(input);
    expectRecovered(r, 'fill-holes', 'injected: hole filler');
    expect(r.cleanedSamples).toBe(DURATION * FS - BLOCK);
  });

  it('clean: the Hampel detector throws at the sample at 800 s', () => {
    let calls = 0;
    failOnce(HampelDetector.prototype, 'push', () => ++calls === TF * FS + 1, 'injected: despiker');
    const r = run(input);
    expectRecovered(r, 'clean', 'injected: despiker');
    // lost: the failing block and the samples the despiker still held before it
    expect(r.cleanedSamples).toBeLessThan(DURATION * FS - BLOCK);
    expect(r.cleanedSamples).toBeGreaterThan(DURATION * FS - BLOCK - 2 * (ANALYSIS.hampel_half_width + 1));
  });

  it('gap events: the incident sink throws on the gap at 800 s', () => {
    // a real 30 s outage in the data, whose report fails
    const gappy = signal([TF - 30, TF]);
    let thrown = false;
    const r = run(gappy, (inc) => {
      if (inc.kind === 'gap' && !thrown) {
        thrown = true;
        throw new Error('injected: event store');
      }
    });
    expect(r.errors).toEqual([]);
    expect(r.completed).toBe(true);
    expect(r.cleanedLastT).toBe(lastT);
    const faults = r.incidents.filter((i) => i.kind === 'internal-error');
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatchObject({ data: { stage: 'gap-events', message: 'injected: event store' } });
    expect(r.windows.map((w) => w.index)).toEqual(r.windows.map((_, i) => i));
    // the block that failed held the gap; nothing spans it, nor the restart after it
    for (const w of r.windows) expect(w.t_end_s < TF - 30 || w.t_start_s >= TF, `window ${w.index} ${w.t_start_s}–${w.t_end_s}`).toBe(true);
    const after = r.windows.filter((w) => w.t_start_s > TF);
    expect(after.length).toBeGreaterThanOrEqual((DURATION - TF - BLOCK / FS) / P - ANALYSIS.window_periods - 1);
    for (const w of after) {
      expect(w.status, `window ${w.index}`).toBe('ok');
      expect(Math.abs(w.period_s! - P) / P).toBeLessThan(1e-4);
    }
  });

  it('condition: the decimator throws on the block reaching 800 s', () => {
    failOnce(Decimator.prototype, 'process', (_, a) => (a[0] as Float64Array)[(a[3] as number | undefined) ?? 0] >= TF, 'injected: decimator');
    const r = run(input);
    expectRecovered(r, 'condition', 'injected: decimator');
    expect(r.cleanedSamples).toBe(DURATION * FS);
  });

  it('windows: the window buffer throws on the block reaching 800 s', () => {
    // timeAt is what the windowing asks of its buffer (the other stages' buffers do not)
    failOnce(BlockBuffer.prototype, 'timeAt', (self, a) => realTimeAt.call(self, a[0] as number) >= TF, 'injected: window buffer');
    const r = run(input);
    expectRecovered(r, 'windows', 'injected: window buffer');
    expect(r.cleanedSamples).toBe(DURATION * FS);
  });

  it('analyse: a window whose analysis throws is kept with status internal-error, the others as without the fault', () => {
    analyseFault.at_s = TF;
    const r = run(input);
    expect(r.errors).toEqual([]);
    expect(r.completed).toBe(true);
    expect(r.windows.length).toBe(reference.windows.length);
    expect(r.windows.map((w) => w.index)).toEqual(r.windows.map((_, i) => i));
    const bad = r.windows.filter((w) => w.status !== 'ok');
    expect(bad).toHaveLength(1);
    const k = bad[0].index;
    expect(bad[0]).toMatchObject({ status: FIT_STATUS.internalError, t_start_s: reference.windows[k].t_start_s, period_s: null, amplitude_rad: null });
    expect(bad[0].t_start_s).toBeGreaterThanOrEqual(TF);
    expect(r.windows.slice(0, k)).toEqual(reference.windows.slice(0, k));
    // later windows are fitted as before; they are cut a little differently, as the failed window gave the running period nothing
    for (const w of r.windows.slice(k + 1)) {
      expect(w.status).toBe('ok');
      expect(Math.abs(w.period_s! - P) / P).toBeLessThan(1e-4);
    }
    const faults = r.incidents.filter((i) => i.kind === 'internal-error');
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatchObject({ data: { stage: 'analyse', message: 'injected: the fit blew up', window: k }, t: bad[0].t_mid_s });
    expect(faults[0].message).toContain(`window ${k} is stored unfitted`);
  });
});
