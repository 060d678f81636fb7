import { describe, expect, it } from 'vitest';
import { Subject, tap, type Observable } from 'rxjs';
import { TestScheduler } from 'rxjs/testing';
import { watchNoData } from '../../../pipelines/watch/watch-no-data.js';
import type { AngleBlock } from '../../../src/domain/block.js';
import type { Incident } from '../../../src/domain/events.js';

const block = (t0: number, n = 10): AngleBlock => {
  const t = Float64Array.from({ length: n }, (_, i) => t0 + i * 0.01);
  return { n, t, clock: 'device', host_ms: 0, channels: {}, angle: new Float64Array(n), flags: new Uint8Array(n) };
};

describe('watchNoData', () => {
  it('virtual time: raised within no_data_s + 1 s of the last block, cleared when data returns', () => {
    const ts = new TestScheduler((a, b) => expect(a).toEqual(b));
    const got: { at: number; inc: Incident }[] = [];
    ts.run(({ cold, flush }) => {
      // blocks at 0, 1 s, 2 s; silence; blocks at 20 s, 21 s; then 4 s more and complete
      const src = cold('a 999ms b 999ms c 17999ms d 999ms e 3999ms |', { a: block(0), b: block(1), c: block(2), d: block(20), e: block(21) }) as Observable<AngleBlock>;
      src.pipe(watchNoData({ noData_s: 5, scheduler: ts, updateEvery_s: 6, wall_ms: () => 1.7e12 }), tap((inc) => got.push({ at: ts.now(), inc }))).subscribe();
      flush();
    });
    expect(got.map((g) => [g.at, g.inc.state])).toEqual([[7000, 'raised'], [13000, 'updated'], [19000, 'updated'], [20000, 'cleared']]);
    const [raised, , , cleared] = got.map((g) => g.inc);
    expect(raised).toMatchObject({ kind: 'no-data', severity: 'alarm', value: 5, threshold: 5, host_ms: 1.7e12, message: 'no data for 5.0 s (limit 5 s)' });
    expect(raised.t).toBeUndefined();
    expect(raised.data).toMatchObject({ last_sample_t: 2.09 });
    expect(cleared.message).toBe('data back after 18.0 s without a block');
    expect(cleared.severity).toBe('info');
  });

  it('virtual time: silence from the start counts from subscription; no alert while blocks keep coming', () => {
    const ts = new TestScheduler((a, b) => expect(a).toEqual(b));
    ts.run(({ cold, expectObservable }) => {
      const steady = cold('a 1999ms a 1999ms a 1999ms a 1999ms |', { a: block(0) }) as Observable<AngleBlock>;
      expectObservable(steady.pipe(watchNoData({ noData_s: 3, scheduler: ts }))).toBe('8000ms |');
    });
    const got: number[] = [];
    const ts2 = new TestScheduler((a, b) => expect(a).toEqual(b));
    ts2.run(({ cold, flush }) => {
      (cold('10s |') as Observable<AngleBlock>).pipe(watchNoData({ noData_s: 3, scheduler: ts2, check_s: 0.5 }), tap(() => got.push(ts2.now()))).subscribe();
      flush();
    });
    expect(got).toEqual([3000]);
  });

  it('virtual time: unsubscribing stops the timer; a source error passes through', () => {
    const ts = new TestScheduler((a, b) => expect(a).toEqual(b));
    let lastCheck = 0;
    ts.run(({ cold, expectObservable }) => {
      // a leaked timer would keep checking (and, the flush never ending, hang the test)
      const silent = cold('a 30s |', { a: block(0) }) as Observable<AngleBlock>;
      const now = () => { lastCheck = Math.max(lastCheck, ts.now()); return ts.now(); };
      expectObservable(silent.pipe(watchNoData({ noData_s: 5, scheduler: ts, now, wall_ms: () => 0 })), '^ 2999ms !').toBe('');
      const failing = cold('a 999ms #', { a: block(0) }, new Error('port gone')) as Observable<AngleBlock>;
      expectObservable(failing.pipe(watchNoData({ noData_s: 5, scheduler: ts }))).toBe('1000ms #', undefined, new Error('port gone'));
    });
    expect(lastCheck).toBeLessThanOrEqual(3000);
  });

  it('real timers: raised within no_data_s + 1 s, cleared by the next block', async () => {
    const src = new Subject<AngleBlock>();
    const got: { at: number; inc: Incident }[] = [];
    const start = Date.now();
    const sub = src.pipe(watchNoData({ noData_s: 0.4 })).subscribe((inc) => got.push({ at: Date.now() - start, inc }));
    src.next(block(0));
    await new Promise((r) => setTimeout(r, 250));
    expect(got).toEqual([]);
    src.next(block(0.25));
    const lastBlock = Date.now() - start;
    await new Promise((r) => setTimeout(r, 900));
    expect(got.map((g) => g.inc.state)).toEqual(['raised']);
    expect(got[0].at - lastBlock).toBeGreaterThanOrEqual(390);
    expect(got[0].at - lastBlock).toBeLessThanOrEqual(1400);
    src.next(block(1.4));
    expect(got.map((g) => g.inc.state)).toEqual(['raised', 'cleared']);
    sub.unsubscribe();
    expect(() => watchNoData({ noData_s: 0 })).toThrow(/noData_s must be > 0/);
  });
});
