/**
 * The run's running period estimate, shared by the windowing (which cuts
 * windows in periods) and the analysis (which updates it from each good fit).
 */
export class PeriodTracker {
  private p: number | undefined;
  private readonly recent: number[] = [];
  private failures = 0;

  constructor(initial?: number) {
    this.p = initial;
  }

  /** Current estimate, seconds (undefined until the first estimate). */
  get current(): number | undefined {
    return this.p;
  }

  /** Set from the first FFT estimate (only while there is none). */
  seed(period_s: number): void {
    if (this.p === undefined && period_s > 0 && Number.isFinite(period_s)) this.p = period_s;
  }

  /**
   * Update from an accepted fit: the median of the last five fitted periods,
   * so one odd window cannot move the window length.
   */
  update(period_s: number): void {
    if (!(period_s > 0) || !Number.isFinite(period_s)) return;
    this.failures = 0;
    this.recent.push(period_s);
    if (this.recent.length > 5) this.recent.shift();
    const s = [...this.recent].sort((a, b) => a - b);
    this.p = s[s.length >> 1];
  }

  /**
   * A window was not fitted; true once RETRY_AFTER have failed in a row — the
   * estimate itself may be wrong (a first estimate from too little data, a
   * wrong period_guess_s, a fibre that changed): the caller should look again.
   */
  failed(): boolean {
    return ++this.failures >= RETRY_AFTER;
  }

  /** Replace the estimate with a fresh one found in the data (after failures). */
  reseed(period_s: number): void {
    if (!(period_s > 0) || !Number.isFinite(period_s)) return;
    this.p = period_s;
    this.recent.length = 0;
    this.failures = 0;
  }
}

/** Consecutive failed windows after which the period is looked for again. */
export const RETRY_AFTER = 5;
