/**
 * Two-sided CUSUM (E. S. Page, "Continuous inspection schemes", Biometrika 41
 * (1954) 100–115) on period residuals, written in units of the shift to
 * detect δ (the alert's period_change_ppm):
 *
 *   x_n = r_n/δ  (residual from the baseline, temperature removed),
 *   w_n = min(1, (s_floor/s_n)²)  with s_n = max(σ_n/δ, s_floor),
 *   g⁺ = min(cap, max(0, g⁺ + w_n·(min(x_n, clip) − k))),   g⁻ likewise with −x_n,
 *   alarm when max(g⁺, g⁻) > h.
 *
 * Why a CUSUM and not a trend test: a period change is usually a step (a
 * bumped suspension, a mass that moved), and a CUSUM is the quickest detector
 * of a step for a given false-alarm rate (Lorden 1971, from memory).
 *
 * Why these constants (defaults): windows 4 periods long stepping 1 smear a
 * step over 4 windows (fractions f, f+¼, f+½ … of the new value). k = ¼ and
 * h = 0.625 detect a step of 5/3·δ (500 ppm against 300 ppm) within 3 windows
 * of the first window that contains it, whatever its phase (0 + 0.167 + 0.583
 * > 0.625), and a step of δ within 4. clip = 0.85 keeps a single wild window
 * below h (0.85 − ¼ = 0.6 < 0.625), so one bad fit cannot alarm alone.
 * s_floor = ¼: the windows' own σ (≈ 10 ppm, ≈ 0.03 δ) is far below it, so
 * ordinary windows weigh 1 and the scheme is a plain CUSUM in units of δ;
 * windows with σ above the floor count less. Were the scatter as large as
 * the floor, the standardized scheme has k_z = 1, h_z = 2.5 and Siegmund's
 * approximation ARL₀ ≈ (e^{2k(h+1.166)} − 2k(h+1.166) − 1)/(2k²) ≈ 760 windows
 * per side (D. Siegmund, "Sequential Analysis", 1985, from memory); at the
 * realistic 0.03 δ it is astronomically long.
 */

/** Tuning of the CUSUM, all in units of the shift δ. */
export interface CusumOptions {
  /** reference value k (default 0.25) */
  k?: number;
  /** decision interval h (default 0.625) */
  h?: number;
  /** largest x counted from one window (default 0.85) */
  clip?: number;
  /** σ floor s_floor (default 0.25) */
  sigmaFloor?: number;
  /** g is held at or below cap so that it falls back quickly once the change ends (default 2·h) */
  cap?: number;
}

/** CUSUM state after a step. */
export interface CusumState {
  up: number;
  down: number;
  /** windows since each side last was 0 */
  upRun: number;
  downRun: number;
}

/** Defaults filled in. */
export function cusumOptions(o: CusumOptions = {}): Required<CusumOptions> {
  const h = o.h ?? 0.625;
  const r = { k: o.k ?? 0.25, h, clip: o.clip ?? 0.85, sigmaFloor: o.sigmaFloor ?? 0.25, cap: o.cap ?? 2 * h };
  for (const [name, v] of Object.entries(r)) if (!(v > 0)) throw new RangeError(`cusum: ${name} must be > 0, got ${v}`);
  return r;
}

/** A fresh CUSUM state. */
export function cusumInit(): CusumState {
  return { up: 0, down: 0, upRun: 0, downRun: 0 };
}

/**
 * One CUSUM step (pure): residual r and its σ in the same unit as the shift δ
 * (e.g. relative period, δ = 300e-6). Returns the new state.
 */
export function cusumStep(s: CusumState, r: number, sigma: number, delta: number, o: Required<CusumOptions>): CusumState {
  const x = r / delta;
  const sn = Math.max(Number.isFinite(sigma) ? Math.abs(sigma) / delta : Infinity, o.sigmaFloor);
  const w = Math.min(1, (o.sigmaFloor / sn) ** 2);
  const up = Math.min(o.cap, Math.max(0, s.up + w * (Math.min(x, o.clip) - o.k)));
  const down = Math.min(o.cap, Math.max(0, s.down + w * (Math.min(-x, o.clip) - o.k)));
  return { up, down, upRun: up > 0 ? s.upRun + 1 : 0, downRun: down > 0 ? s.downRun + 1 : 0 };
}

/** The decision statistic max(g⁺, g⁻) and the side (+1 up, −1 down). */
export function cusumStatistic(s: CusumState): { g: number; side: 1 | -1 } {
  return s.up >= s.down ? { g: s.up, side: 1 } : { g: s.down, side: -1 };
}
