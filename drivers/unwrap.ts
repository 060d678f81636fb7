/**
 * Unwrapping of counters and clocks that wrap at a fixed modulus (a u32 µs
 * clock, an n-bit encoder counter, a device clock with `clock_wrap`).
 */

/** Turns wrapped readings into a continuous value; steps between readings must be < modulus/2 either way. */
export class Unwrapper {
  private last = NaN;
  /** whole wraps added so far (negative after net backward wraps) */
  private wraps = 0;

  /** @param modulus the value at which the reading wraps back to 0 (e.g. 2^32), in the reading's unit */
  constructor(readonly modulus: number) {
    if (!(modulus > 0) || !Number.isFinite(modulus)) throw new TypeError(`Unwrapper: modulus must be a finite number > 0, got ${modulus}`);
  }

  /** Next raw reading → unwrapped value (the first reading is taken as is). */
  next(raw: number): number {
    const last = this.last;
    this.last = raw;
    if (last === last) {
      const d = raw - last;
      const m = this.modulus;
      // a step beyond half the modulus is taken as the shorter way round
      if (d > m / 2 || d < -m / 2) this.wraps -= Math.round(d / m);
    }
    return raw + this.wraps * this.modulus;
  }

  /** Forget the history: the next reading starts afresh. */
  reset(): void {
    this.last = NaN;
    this.wraps = 0;
  }
}
