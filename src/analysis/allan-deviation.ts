/**
 * Overlapping Allan deviation of frequency-like data (IEEE Std 1139; W. J.
 * Riley, "Handbook of Frequency Stability Analysis", NIST SP 1065, 2008,
 * eq. for σ_y(τ) with overlapping samples): for M values y_i one τ₀ apart and
 * averaging factor m,
 *   σ²(mτ₀) = 1/(2·m²·(M − 2m + 1)) · Σ_j [Σ_{i=j}^{j+m−1} (y_{i+m} − y_i)]².
 * Missing values are NaN: a term that would touch one is left out, and `n`
 * counts the terms used (common practice for data with gaps, no source).
 */

/** Allan deviations at the requested τ. */
export interface AllanDeviation {
  /** averaging times m·τ₀, s */
  tau_s: number[];
  /** overlapping Allan deviation, in the unit of y */
  adev: number[];
  /** terms (overlapping second differences) averaged at each τ */
  n: number[];
}

/** Averaging factors 1, 2, 4, … while at least two terms fit into M values. */
export function octaveFactors(M: number): number[] {
  const out: number[] = [];
  for (let m = 1; M - 2 * m + 1 >= 2; m *= 2) out.push(m);
  return out;
}

/**
 * Overlapping Allan deviation of `y` (one value per `tau0_s`, NaN for a
 * missing one) at averaging factors `factors` (default octaveFactors);
 * factors with no complete term are left out.
 */
export function overlappingAllan(y: ArrayLike<number>, tau0_s: number, factors?: readonly number[]): AllanDeviation {
  const M = y.length;
  // the mean is taken out first so the prefix sums keep the digits of small variations on a large level
  let mean = 0, valid = 0;
  for (let i = 0; i < M; i++) if (Number.isFinite(y[i])) { mean += y[i]; valid++; }
  mean = valid > 0 ? mean / valid : 0;
  const sum = new Float64Array(M + 1); // Σ of (y − mean) over [0, i)
  const bad = new Int32Array(M + 1); // missing values over [0, i)
  for (let i = 0; i < M; i++) {
    const ok = Number.isFinite(y[i]);
    sum[i + 1] = sum[i] + (ok ? y[i] - mean : 0);
    bad[i + 1] = bad[i] + (ok ? 0 : 1);
  }
  const out: AllanDeviation = { tau_s: [], adev: [], n: [] };
  for (const m of factors ?? octaveFactors(M)) {
    if (!Number.isInteger(m) || m < 1) throw new RangeError(`overlappingAllan: factors must be integers ≥ 1, got ${m}`);
    let s2 = 0, count = 0;
    for (let j = 0; j + 2 * m <= M; j++) {
      if (bad[j + 2 * m] - bad[j] > 0) continue;
      const d = (sum[j + 2 * m] - sum[j + m] - (sum[j + m] - sum[j])) / m;
      s2 += d * d;
      count++;
    }
    if (count === 0) continue;
    out.tau_s.push(m * tau0_s);
    out.adev.push(Math.sqrt(s2 / (2 * count)));
    out.n.push(count);
  }
  return out;
}
