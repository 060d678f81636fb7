/** Test helpers over the CUSUM kernel: a whole series at once, and Siegmund's in-control run length. */
import { cusumInit, cusumOptions, cusumStatistic, cusumStep, type CusumOptions } from '../../src/analysis/cusum.js';

/** Run the CUSUM over a whole series; returns g⁺, g⁻ and the first alarm index (−1: none). */
export function cusumSeries(r: ArrayLike<number>, sigma: ArrayLike<number>, delta: number, opts: CusumOptions = {}): { up: Float64Array; down: Float64Array; firstAlarm: number } {
  const o = cusumOptions(opts);
  const up = new Float64Array(r.length);
  const down = new Float64Array(r.length);
  let s = cusumInit();
  let firstAlarm = -1;
  for (let i = 0; i < r.length; i++) {
    s = cusumStep(s, r[i], sigma[i], delta, o);
    up[i] = s.up;
    down[i] = s.down;
    if (firstAlarm < 0 && cusumStatistic(s).g > o.h) firstAlarm = i;
  }
  return { up, down, firstAlarm };
}

/** Siegmund's approximation of the in-control average run length of a one-sided CUSUM on N(0,1) with reference k and interval h (standardized units). */
export function siegmundArl0(k: number, h: number): number {
  const b = 2 * k * (h + 1.166);
  return (Math.exp(b) - b - 1) / (2 * k * k);
}
