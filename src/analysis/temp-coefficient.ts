/**
 * The period's temperature coefficient from (temp_C, period_s ± σ) pairs:
 * weighted linear regression P = α + β·(T − T̄_w) (weighted-stats.ts), σ
 * floored so one over-confident window cannot dominate, slope σ scaled by the
 * Birge ratio when the scatter exceeds the σ's. The coefficient is β/α per kelvin.
 */
import { weightedLine } from './weighted-stats.js';

/** A fitted temperature coefficient. */
export interface TempCoefficient {
  /** dP/dT relative to the period, 1/K */
  coef_per_K: number;
  coef_sigma_per_K: number;
  /** the same in ppm/K, for display */
  coef_ppm_per_K: number;
  coef_sigma_ppm_per_K: number;
  /** period at the weighted mean temperature, s */
  period_ref_s: number;
  /** weighted mean temperature, °C */
  temp_ref_C: number;
  /** temperature span of the data, K */
  temp_span_K: number;
  chi2_red: number;
  n: number;
}

/** Options of fitTempCoefficient. */
export interface TempCoefficientOptions {
  /** σ floor as a fraction of the period (default 1e-6): one over-confident window must not dominate */
  sigmaFloorRel?: number;
}

/** Weighted regression of period on temperature; null with fewer than 3 usable pairs or no temperature spread. */
export function fitTempCoefficient(temp_C: ArrayLike<number>, period_s: ArrayLike<number>, sigma_s: ArrayLike<number> | null, opts: TempCoefficientOptions = {}): TempCoefficient | null {
  const floorRel = opts.sigmaFloorRel ?? 1e-6;
  let n = 0, pAbs = 0, tMin = Infinity, tMax = -Infinity;
  for (let i = 0; i < temp_C.length; i++) {
    if (!Number.isFinite(temp_C[i]) || !Number.isFinite(period_s[i])) continue;
    pAbs += Math.abs(period_s[i]);
    n++;
    tMin = Math.min(tMin, temp_C[i]);
    tMax = Math.max(tMax, temp_C[i]);
  }
  if (n < 3 || !(tMax > tMin)) return null;
  const floor = (pAbs / n) * floorRel;
  // a missing σ counts as the floor
  const sig = Float64Array.from({ length: temp_C.length }, (_, i) => {
    const s = sigma_s ? Math.abs(sigma_s[i]) : NaN;
    return Number.isFinite(s) ? Math.max(s, floor) : floor;
  });
  const line = weightedLine(temp_C, period_s, sig);
  if (!line) return null;
  const ym = line.intercept;
  const c = line.slope / ym;
  const cs = line.slope_sigma / Math.abs(ym);
  return {
    coef_per_K: c,
    coef_sigma_per_K: cs,
    coef_ppm_per_K: c * 1e6,
    coef_sigma_ppm_per_K: cs * 1e6,
    period_ref_s: ym,
    temp_ref_C: line.xRef,
    temp_span_K: tMax - tMin,
    chi2_red: line.n > 2 ? line.chi2 / (line.n - 2) : NaN,
    n: line.n,
  };
}
