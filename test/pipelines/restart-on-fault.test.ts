import { describe, expect, it } from 'vitest';
import { Subject, type Observable } from 'rxjs';
import { operate } from '../../pipelines/operate.js';
import { faultMessage, restartOnFault, type StageFault } from '../../pipelines/restart-on-fault.js';
import { faultIncident, isReportedFault } from '../../pipelines/fault-incident.js';

/** A stage with state: the running sum, throwing on the values in `bad` (and on `flushBad` at completion). */
const runningSum = (bad: Set<number>, flushBad = false) => (source: Observable<number>) =>
  operate<number, number>(source, (out) => {
    let s = 0;
    return {
      next(v) {
        if (bad.has(v)) {
          bad.delete(v); // throws once per listed value
          throw new Error(`bad value ${v}`);
        }
        out.next((s += v));
      },
      complete() {
        if (flushBad) throw new Error('flush failed');
        out.next(-s);
      },
    };
  });

describe('restartOnFault', () => {
  it('replaces a failing stage by a fresh one, reports once, marks the first output after, completes', () => {
    const src = new Subject<number>();
    const faults: StageFault<number>[] = [];
    const got: number[] = [];
    let completed = false;
    let errored = false;
    src.pipe(restartOnFault(() => runningSum(new Set([3])), { stage: 'sum', onFault: (f) => void faults.push(f), markRestart: (v) => v + 1000 }))
      .subscribe({ next: (v) => got.push(v), complete: () => (completed = true), error: () => (errored = true) });
    for (const v of [1, 2, 3, 4, 5]) src.next(v);
    src.complete();
    // 1, 3; 3 throws and is lost with the old sum; the fresh stage sums 4, 9 (first output marked); flush −9
    expect(got).toEqual([1, 3, 1004, 9, -9]);
    expect(faults).toHaveLength(1);
    expect(faults[0]).toMatchObject({ stage: 'sum', message: 'bad value 3', input: 3, faults: 1 });
    expect(completed).toBe(true);
    expect(errored).toBe(false);
  });

  it('counts the faults of a stage that keeps failing, one report per fault', () => {
    const bad = new Set([2, 4, 6]); // shared: each value throws once
    const src = new Subject<number>();
    const faults: number[] = [];
    const got: number[] = [];
    src.pipe(restartOnFault(() => runningSum(bad), { stage: 'sum', onFault: (f) => void faults.push(f.faults) })).subscribe((v) => got.push(v));
    for (let v = 1; v <= 7; v++) src.next(v);
    expect(got).toEqual([1, 3, 5, 7]);
    expect(faults).toEqual([1, 2, 3]);
  });

  it('a value returned by onFault is emitted; a fault while flushing reports and completes', () => {
    const src = new Subject<number>();
    const got: number[] = [];
    let completed = false;
    src.pipe(restartOnFault(() => runningSum(new Set(), true), { stage: 'sum', onFault: (f) => (f.input === undefined ? -777 : undefined) }))
      .subscribe({ next: (v) => got.push(v), complete: () => (completed = true) });
    src.next(5);
    src.complete();
    expect(got).toEqual([5, -777]);
    expect(completed).toBe(true);
  });

  it('a source error is not a fault of the stage: it passes on, nothing restarts', () => {
    const src = new Subject<number>();
    let builds = 0;
    let reported = 0;
    let err: unknown;
    src.pipe(restartOnFault(() => { builds++; return runningSum(new Set()); }, { stage: 'sum', onFault: () => void reported++ }))
      .subscribe({ error: (e) => (err = e) });
    src.next(1);
    src.error(new Error('unplugged'));
    expect((err as Error).message).toBe('unplugged');
    expect(builds).toBe(1);
    expect(reported).toBe(0);
  });

  it('unsubscribing tears the current instance and the source down', () => {
    const src = new Subject<number>();
    const sub = src.pipe(restartOnFault(() => runningSum(new Set([1])), { stage: 'sum', onFault: () => undefined })).subscribe();
    src.next(1);
    src.next(2);
    sub.unsubscribe();
    expect(src.observed).toBe(false);
  });
});

describe('fault incidents', () => {
  it('reports faults 1…10, then 100, 1000, …; messages are one short line', () => {
    const reported = Array.from({ length: 2000 }, (_, i) => i + 1).filter(isReportedFault);
    expect(reported).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 100, 1000]);
    const long = new Error(`line one\nline two ${'x'.repeat(400)}`);
    expect(faultMessage(long)).toMatch(/^line one line two x+$/);
    expect(faultMessage(long)).toHaveLength(200);
    expect(faultMessage('plain')).toBe('plain');
    const inc = faultIncident({ stage: 'clean', message: 'boom', faults: 10 }, { kind: 'internal-error', t: 12.5, consequence: 'restarted' })!;
    expect(inc).toMatchObject({ kind: 'internal-error', severity: 'warning', t: 12.5, data: { stage: 'clean', message: 'boom', faults: 10 } });
    expect(inc.message).toBe('clean failed at t = 12.50 s: boom; restarted (fault 10 of this stage; from now on only the 100th, 1000th, … are reported)');
    expect(faultIncident({ stage: 'clean', message: 'boom', faults: 11 }, { kind: 'internal-error', consequence: 'restarted' })).toBeNull();
  });
});
