/**
 * The period's temperature coefficient from (temp_C, period_s ± σ) pairs:
 * weighted linear regression P = α + β·(T − T̄_w), weights 1/σ² with σ
 * floored, slope σ from the weighted normal equations scaled by √χ²_red when
 * the scatter exceeds the σ's. The coefficient is β/α per kelvin.
 */

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
  let n = 0, sw = 0, sx = 0, sy = 0, tMin = Infinity, tMax = -Infinity, pAbs = 0;
  for (let i = 0; i < temp_C.length; i++) if (Number.isFinite(temp_C[i]) && Number.isFinite(period_s[i])) { pAbs += Math.abs(period_s[i]); n++; }
  if (n < 3) return null;
  const floor = (pAbs / n) * floorRel;
  const w = (i: number) => {
    const s = sigma_s ? sigma_s[i] : NaN;
    const ss = Number.isFinite(s) ? Math.max(Math.abs(s), floor) : floor;
    return 1 / (ss * ss);
  };
  const ok = (i: number) => Number.isFinite(temp_C[i]) && Number.isFinite(period_s[i]);
  for (let i = 0; i < temp_C.length; i++) {
    if (!ok(i)) continue;
    const wi = w(i);
    sw += wi; sx += wi * temp_C[i]; sy += wi * period_s[i];
    if (temp_C[i] < tMin) tMin = temp_C[i];
    if (temp_C[i] > tMax) tMax = temp_C[i];
  }
  const xm = sx / sw;
  const ym = sy / sw;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < temp_C.length; i++) {
    if (!ok(i)) continue;
    const wi = w(i);
    const dx = temp_C[i] - xm;
    sxx += wi * dx * dx;
    sxy += wi * dx * (period_s[i] - ym);
  }
  if (!(sxx > 0) || !(tMax > tMin)) return null;
  const beta = sxy / sxx;
  let chi2 = 0;
  for (let i = 0; i < temp_C.length; i++) {
    if (!ok(i)) continue;
    const r = period_s[i] - ym - beta * (temp_C[i] - xm);
    chi2 += w(i) * r * r;
  }
  const chi2Red = n > 2 ? chi2 / (n - 2) : NaN;
  const betaSigma = Math.sqrt(1 / sxx) * Math.sqrt(Math.max(1, Number.isFinite(chi2Red) ? chi2Red : 1));
  const c = beta / ym;
  const cs = betaSigma / Math.abs(ym);
  return {
    coef_per_K: c,
    coef_sigma_per_K: cs,
    coef_ppm_per_K: c * 1e6,
    coef_sigma_ppm_per_K: cs * 1e6,
    period_ref_s: ym,
    temp_ref_C: xm,
    temp_span_K: tMax - tMin,
    chi2_red: chi2Red,
    n,
  };
}

/** Period referred to temp_ref_C with a relative coefficient: P·(1 − c·(T − T_ref)) (first order). */
export function removeTemperature(period_s: number, temp_C: number, coef_per_K: number, temp_ref_C: number): number {
  return period_s * (1 - coef_per_K * (temp_C - temp_ref_C));
}
