import { describe, expect, it } from 'vitest';
import { setTimeout as sleep } from 'node:timers/promises';
import { DeliveryQueue, type AttemptOutcome, type DeliveryQueueOptions } from '../../src/alerts/delivery-queue.js';
import { nextDelay } from '../../src/domain/backoff.js';

const ok: AttemptOutcome = { ok: true };
const transient = (reason = 'down'): AttemptOutcome => ({ ok: false, permanent: false, reason });

function queue(attempt: DeliveryQueueOptions<number>['attempt'], o: Partial<DeliveryQueueOptions<number>> = {}) {
  return new DeliveryQueue<number>({ capacity: 100, retries: 1000, minDelay_s: 0.01, maxDelay_s: 0.02, attempt, ...o });
}

describe('DeliveryQueue', () => {
  it('delivers one at a time, in order; a permanent failure is not retried, a transient one is', async () => {
    const seen: number[] = [];
    let active = 0;
    let most = 0;
    let failedOnce = false;
    const failed: [number, boolean][] = [];
    const q = queue(async (n) => {
      active++;
      most = Math.max(most, active);
      seen.push(n);
      await sleep(5);
      active--;
      if (n === 2) return { ok: false, permanent: true, reason: 'refused' };
      if (n === 3 && !failedOnce) { failedOnce = true; return transient(); }
      return ok;
    }, { hooks: { failed: (n, _r, _a, permanent) => failed.push([n, permanent]) } });
    for (let i = 0; i < 6; i++) q.send(i);
    expect(await q.close(2000)).toEqual({ delivered: 5, failed: 1, dropped: 0, pending: 0 });
    expect(seen).toEqual([0, 1, 2, 3, 3, 4, 5]);
    expect(most).toBe(1);
    expect(failed).toEqual([[2, true]]);
  });

  it('drops the oldest when full, counts it, and tells the next delivery how many were lost', async () => {
    let up = false;
    const got: [number, number][] = [];
    const q = queue(async (n, droppedBefore) => {
      if (!up) return transient();
      got.push([n, droppedBefore]);
      return ok;
    }, { capacity: 3 });
    for (let i = 0; i < 8; i++) q.send(i); // 0 in flight is pushed out too: 0–4 dropped, 5–7 kept
    expect(q.stats()).toEqual({ delivered: 0, failed: 0, dropped: 5, pending: 3 });
    up = true;
    expect(await q.close(2000)).toEqual({ delivered: 3, failed: 0, dropped: 5, pending: 0 });
    expect(got).toEqual([[5, 5], [6, 0], [7, 0]]);
  });

  it('an item pushed out while in flight that arrives after all is delivered, not dropped', async () => {
    const got: [number, number][] = [];
    let release: () => void = () => {};
    const q = queue(async (n, droppedBefore) => {
      if (n === 0) await new Promise<void>((r) => (release = r));
      got.push([n, droppedBefore]);
      return ok;
    }, { capacity: 2 });
    q.send(0);
    q.send(1);
    q.send(2); // pushes 0 out while it is in flight
    expect(q.stats().dropped).toBe(1);
    release();
    expect(await q.close(2000)).toEqual({ delivered: 3, failed: 0, dropped: 0, pending: 0 });
    expect(got).toEqual([[0, 0], [1, 0], [2, 0]]);
  });

  it('gives up after `retries`, waiting the shared backoff between attempts', async () => {
    const times: number[] = [];
    const draws = [0, 0.999, 0, 0.999];
    let k = 0;
    const given: [number, number][] = [];
    const q = queue(async () => { times.push(performance.now()); return transient(); }, {
      retries: 4, minDelay_s: 0.02, maxDelay_s: 0.08, random: () => draws[k++ % draws.length],
      hooks: { failed: (n, _r, attempts) => given.push([n, attempts]) },
    });
    q.send(7);
    expect(await q.close(5000)).toEqual({ delivered: 0, failed: 1, dropped: 0, pending: 0 });
    expect(given).toEqual([[7, 5]]);
    expect(times).toHaveLength(5);
    expect(k).toBe(4); // one jitter draw per retry
    // each wait lasts at least the delay src/domain/backoff.ts gives for that retry and draw
    // (less 2 ms: timers count whole milliseconds from the start of the event-loop turn)
    for (let i = 1; i < times.length; i++) {
      expect(times[i] - times[i - 1]).toBeGreaterThanOrEqual(Math.floor(1000 * nextDelay(i - 1, 0.02, 0.08, draws[i - 1])) - 2);
    }
  });

  it('close() cuts a backoff wait short, keeps its grace while items finish, gives up without progress and keeps the rest pending', async () => {
    let calls = 0;
    const q = queue(async () => { calls++; return transient(); }, { minDelay_s: 30, maxDelay_s: 60 });
    q.send(1);
    q.send(2);
    await sleep(20);
    expect(calls).toBe(1); // waiting 30 s or more before the next try
    const t0 = performance.now();
    expect(await q.close(200)).toEqual({ delivered: 0, failed: 0, dropped: 0, pending: 2 });
    expect(performance.now() - t0).toBeLessThan(5000);
    expect(calls).toBe(2); // the last try happened at once on close

    const slow = queue(async () => { await sleep(60); return ok; });
    for (let i = 0; i < 8; i++) slow.send(i);
    // 8 × 60 ms is well past a 150 ms grace, but each item finishes within it
    expect(await slow.close(150)).toEqual({ delivered: 8, failed: 0, dropped: 0, pending: 0 });
  });

  it('close() aborts the attempt in flight through its signal; send() after close is refused', async () => {
    const refused: number[] = [];
    const q = queue((_n, _d, signal) => new Promise<AttemptOutcome>((resolve) => {
      signal.addEventListener('abort', () => resolve(transient(String((signal.reason as Error).message))));
    }), { hooks: { refused: (n) => refused.push(n) } });
    q.send(1);
    expect(await q.close(100)).toEqual({ delivered: 0, failed: 0, dropped: 0, pending: 1 });
    q.send(2);
    expect(refused).toEqual([2]);
    expect(q.stats().pending).toBe(1);
  });

  it('a throwing hook or attempt breaks neither send() nor the loop; bad options name the field', async () => {
    const reasons: string[] = [];
    const q = queue(async (n) => { if (n === 0) throw new Error('boom'); return ok; }, {
      retries: 0, capacity: 1,
      hooks: { failed: (_n, r) => { reasons.push(r); throw new Error('hook'); }, dropped: () => { throw new Error('hook'); }, delivered: () => { throw new Error('hook'); } },
    });
    expect(() => q.send(0)).not.toThrow();
    await sleep(10);
    // 2 pushes 1 (in flight) out of the queue of one, with a throwing `dropped` hook; 1 then arrives after all
    expect(() => { q.send(1); q.send(2); }).not.toThrow();
    expect(await q.close(1000)).toEqual({ delivered: 2, failed: 1, dropped: 0, pending: 0 });
    expect(reasons).toEqual(['boom']);
    expect(() => queue(async () => ok, { capacity: 0 })).toThrow(/capacity/);
    expect(() => queue(async () => ok, { minDelay_s: 0 })).toThrow(/minDelay_s/);
    expect(() => queue(async () => ok, { maxDelay_s: 0.001 })).toThrow(/maxDelay_s/);
    expect(() => queue(async () => ok, { retries: -1 })).toThrow(/retries/);
  });
});
