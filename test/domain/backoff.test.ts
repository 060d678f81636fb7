import { describe, expect, it } from 'vitest';
import { nextDelay } from '../../src/domain/backoff.js';
import { rng } from '../helpers/blocks.js';

// Reference scheme: M. Brooker, "Exponential Backoff And Jitter", AWS
// Architecture Blog (2015), "equal jitter": temp = min(cap, base·2^attempt),
// sleep = temp/2 + uniform(0, temp/2); ours additionally never goes below base.
function equalJitter(attempt: number, base: number, cap: number, r: number): number {
  const temp = Math.min(cap, base * Math.pow(2, attempt));
  return temp / 2 + r * (temp / 2);
}


describe('nextDelay', () => {
  it('starts at the minimum and doubles the upper end until the cap', () => {
    const hi = (n: number) => nextDelay(n, 0.25, 10, 0.999999);
    expect(nextDelay(0, 0.25, 10, 0)).toBe(0.25);
    expect(hi(0)).toBeCloseTo(0.25, 5);
    expect(hi(1)).toBeCloseTo(0.5, 5);
    expect(hi(2)).toBeCloseTo(1, 5);
    expect(hi(5)).toBeCloseTo(8, 5);
    expect(hi(6)).toBeCloseTo(10, 5); // 16 capped at 10
    expect(hi(60)).toBeCloseTo(10, 5);
    expect(nextDelay(5000, 0.25, 10, 0.5)).toBe(7.5); // no overflow to NaN/Infinity
  });

  it('matches the equal-jitter formula above the floor and stays within [min, max]', () => {
    const rand = rng(12345);
    let lo = Infinity;
    let hi = -Infinity;
    let worst = 0;
    for (let i = 0; i < 5000; i++) {
      const attempt = Math.floor(rand() * 12);
      const r = rand();
      const d = nextDelay(attempt, 0.25, 10, r);
      lo = Math.min(lo, d);
      hi = Math.max(hi, d);
      worst = Math.max(worst, Math.abs(d - Math.max(0.25, equalJitter(attempt, 0.25, 10, r))));
    }
    expect(lo).toBeGreaterThanOrEqual(0.25);
    expect(hi).toBeLessThanOrEqual(10);
    expect(hi).toBeGreaterThan(9); // the cap is reached
    expect(worst).toBeLessThan(1e-12);
  });

  it('spreads retries: half of each capped delay is random', () => {
    expect(nextDelay(8, 0.25, 10, 0)).toBe(5);
    expect(nextDelay(8, 0.25, 10, 0.5)).toBe(7.5);
  });

  it('refuses bad arguments naming them', () => {
    expect(() => nextDelay(-1, 0.25, 10, 0)).toThrow(/attempt/);
    expect(() => nextDelay(1.5, 0.25, 10, 0)).toThrow(/attempt/);
    expect(() => nextDelay(0, 0, 10, 0)).toThrow(/min_s/);
    expect(() => nextDelay(0, 1, 0.5, 0)).toThrow(/max_s/);
    expect(() => nextDelay(0, 0.25, 10, 1)).toThrow(/rand/);
    expect(() => nextDelay(0, 0.25, 10, Number.NaN)).toThrow(TypeError);
  });
});
