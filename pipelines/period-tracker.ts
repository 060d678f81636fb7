/**
 * The run's running period estimate, shared by the windowing (which cuts
 * windows in periods) and the analysis (which updates it from each good fit).
 */
export class PeriodTracker {
  private p: number | undefined;
  private readonly recent: number[] = [];

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
    this.recent.push(period_s);
    if (this.recent.length > 5) this.recent.shift();
    const s = [...this.recent].sort((a, b) => a - b);
    this.p = s[s.length >> 1];
  }
}
