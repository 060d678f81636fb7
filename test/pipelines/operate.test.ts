import { describe, expect, it } from 'vitest';
import { Subject, asyncScheduler, from, type Observable } from 'rxjs';
import { operate } from '../../pipelines/operate.js';

/** What an output did, in order. */
function watch<T>(o: Observable<T>) {
  const r = { values: [] as T[], errors: [] as unknown[], completed: 0 };
  const sub = o.subscribe({ next: (v) => r.values.push(v), error: (e) => r.errors.push(e), complete: () => r.completed++ });
  return { ...r, r, sub };
}

describe('operate', () => {
  it('a throw from next ends the output with that error once, unsubscribes upstream and tears down once', () => {
    const src = new Subject<number>();
    let calls = 0;
    let torn = 0;
    const o = operate<number, number>(src, (out) => ({
      next(v) {
        calls++;
        if (v === 3) throw new Error('three');
        out.next(10 * v);
      },
      complete: () => out.next(-1),
      teardown: () => torn++,
    }));
    const { r } = watch(o);
    for (let v = 1; v <= 5; v++) src.next(v);
    src.complete();
    expect(r.values).toEqual([10, 20]);
    expect(r.errors.map((e) => (e as Error).message)).toEqual(['three']);
    expect(r.completed).toBe(0);
    expect(calls).toBe(3);
    expect(torn).toBe(1);
    expect(src.observed).toBe(false);
  });

  it('a synchronous source that goes on after the throw reaches the handler no more', () => {
    let calls = 0;
    const { r } = watch(operate<number, number>(from([1, 2, 3, 4]), () => ({
      next(v) {
        calls++;
        if (v === 2) throw new RangeError('two');
      },
    })));
    expect(calls).toBe(2);
    expect(r.errors).toHaveLength(1);
    expect(r.errors[0]).toBeInstanceOf(RangeError);
  });

  it('a throw while flushing at completion is an error, not a completion', () => {
    const src = new Subject<number>();
    let torn = 0;
    const { r } = watch(operate<number, number>(src, (out) => ({
      next: (v) => out.next(v),
      complete() {
        out.next(99);
        throw new Error('flush');
      },
      teardown: () => torn++,
    })));
    src.next(1);
    src.complete();
    expect(r.values).toEqual([1, 99]);
    expect(r.errors.map((e) => (e as Error).message)).toEqual(['flush']);
    expect(r.completed).toBe(0);
    expect(torn).toBe(1);
  });

  it('out.error from outside the handlers (a timer) takes the same channel, once', async () => {
    const src = new Subject<number>();
    let torn = 0;
    const { r } = watch(operate<number, number>(src, (out) => {
      const timer = asyncScheduler.schedule(() => {
        out.error(new Error('tick'));
        out.error(new Error('second'));
        out.next(5);
      }, 1);
      return { next: (v) => out.next(v), teardown: () => { torn++; timer.unsubscribe(); } };
    }));
    src.next(1);
    await new Promise((res) => setTimeout(res, 20));
    src.next(2);
    expect(r.values).toEqual([1]);
    expect(r.errors.map((e) => (e as Error).message)).toEqual(['tick']);
    expect(torn).toBe(1);
    expect(src.observed).toBe(false);
  });

  it('passes a source error and a completion on; unsubscribing tears down once', () => {
    const a = new Subject<number>();
    let tornA = 0;
    const wa = watch(operate<number, number>(a, (out) => ({ next: (v) => out.next(v), teardown: () => tornA++ })));
    a.error(new Error('unplugged'));
    expect(wa.r.errors.map((e) => (e as Error).message)).toEqual(['unplugged']);
    expect(tornA).toBe(1);

    const b = new Subject<number>();
    let tornB = 0;
    const wb = watch(operate<number, number>(b, (out) => ({ next: (v) => out.next(v), teardown: () => tornB++ })));
    b.next(7);
    b.complete();
    expect(wb.r.values).toEqual([7]);
    expect(wb.r.completed).toBe(1);
    expect(tornB).toBe(1);

    const c = new Subject<number>();
    let tornC = 0;
    const wc = watch(operate<number, number>(c, (out) => ({ next: (v) => out.next(v), teardown: () => tornC++ })));
    wc.sub.unsubscribe();
    wc.sub.unsubscribe();
    expect(tornC).toBe(1);
    expect(c.observed).toBe(false);
  });

  it('each subscriber gets fresh state; an init that throws is an error', () => {
    const src = new Subject<number>();
    const sum = operate<number, number>(src, (out) => {
      let s = 0;
      return { next: (v) => out.next((s += v)) };
    });
    const one = watch(sum);
    src.next(1);
    const two = watch(sum);
    src.next(2);
    expect(one.r.values).toEqual([1, 3]);
    expect(two.r.values).toEqual([2]);
    const bad = watch(operate<number, number>(src, () => { throw new Error('bad option'); }));
    expect(bad.r.errors.map((e) => (e as Error).message)).toEqual(['bad option']);
  });
});
