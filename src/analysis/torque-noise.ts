/**
 * A noise budget from the angle's residual spectrum (residual-spectrum.ts):
 * log-band averages (log-bands.ts) of the angle PSD, of the same referred to
 * torque by the pendulum's response, S_τ = S_θ·|κ − I·ω² + i·D|² per bin
 * before averaging (the response changes fast near the resonance), and of
 * the fluctuation–dissipation floor for the stated damping
 * (src/physics/thermal.ts). Amplitude spectral densities are the square roots
 * of the band-mean PSDs, one-sided throughout.
 *
 * - The readout floor is the white level at high frequency: the median of the
 *   band-mean angle PSD over the bands at or above max(f_Nyquist/4, 10·f₀)
 *   (or the top tenth of the bands when that is empty), where the thermal
 *   angle noise has fallen as f⁻⁴ or faster.
 * - The thermal band is the contiguous run of bands, around the one where
 *   the thermal angle PSD stands highest over that floor, in which it stays
 *   above it.
 * - The excess over thermal is the median, over the thermal band, of measured
 *   over thermal torque ASD: 1 for a balance at its thermal limit.
 * - The first two bins are left out: the per-segment line fit removes a
 *   quarter of bin 1's power even in white noise (docs/analysis.md, "Noise budget").
 * - Where the resolution is coarser than the line width f₀/Q, the bands next
 *   to the resonance are referred to torque unreliably (the window leaks the
 *   line's residue across bins whose response differs by orders of
 *   magnitude); the median is robust to those few bands.
 */
import { inverseResponseSquared, thermalTorquePsd, type Damping } from '../physics/thermal.js';
import { bandMeans, logBands } from './log-bands.js';
import { median } from './median.js';
import type { WelchResult } from './welch-psd.js';

/** What the budget needs of the pendulum; null where unknown. */
export interface TorqueNoiseParams {
  /** undamped resonance f₀ = 1/T₀, Hz */
  resonance_Hz: number | null;
  q: number | null;
  /** torsion constant, N·m/rad (needs the inertia) */
  kappa_Nm_per_rad: number | null;
  /** moment of inertia, kg·m² */
  inertia_kg_m2: number | null;
  temperature_K: number;
  damping: Damping;
}

/** The budget's arrays (one entry per band) and figures, as `noise --json` names them. */
export interface TorqueNoise {
  frequency_Hz: number[];
  angle_asd_rad_per_rtHz: number[];
  torque_asd_Nm_per_rtHz: number[] | null;
  thermal_torque_asd_Nm_per_rtHz: number[] | null;
  readout_asd_rad_per_rtHz: number | null;
  band_Hz: [number, number] | null;
  excess_over_thermal: number | null;
}

/** Options of torqueNoise. */
export interface TorqueNoiseOptions {
  /** log bands per decade (default 20) */
  perDecade?: number;
}

/** The noise budget of a residual angle spectrum for the given pendulum. */
export function torqueNoise(spec: WelchResult, p: TorqueNoiseParams, opts: TorqueNoiseOptions = {}): TorqueNoise {
  const nBins = spec.psd.length;
  const bands = logBands(nBins, spec.df_Hz, { perDecade: opts.perDecade ?? 20, firstBin: 2 });
  const nb = bands.lo.length;
  const f = spec.frequency_Hz;
  const angle = bandMeans(spec.psd, bands);
  const out: TorqueNoise = {
    frequency_Hz: Array.from(bands.frequency_Hz),
    angle_asd_rad_per_rtHz: Array.from(angle, Math.sqrt),
    torque_asd_Nm_per_rtHz: null,
    thermal_torque_asd_Nm_per_rtHz: null,
    readout_asd_rad_per_rtHz: null,
    band_Hz: null,
    excess_over_thermal: null,
  };
  if (nb === 0) return out;

  // readout: the white level at high frequency
  const nyquist = f[nBins - 1];
  const from = Math.max(nyquist / 4, p.resonance_Hz !== null ? 10 * p.resonance_Hz : 0);
  let high: number[] = [];
  for (let b = 0; b < nb; b++) if (bands.frequency_Hz[b] >= from) high.push(angle[b]);
  if (high.length === 0) high = Array.from(angle.subarray(Math.floor(0.9 * nb)));
  const readoutPsd = median(high);
  out.readout_asd_rad_per_rtHz = Math.sqrt(readoutPsd);

  const { kappa_Nm_per_rad: kappa, inertia_kg_m2: I, q: Q } = p;
  if (kappa === null || I === null || !(kappa > 0) || !(I > 0)) return out;
  // referred to torque bin by bin; with Q unknown the damping term is left out. Band sums are
  // taken on the fly: per-bin arrays would be half a million entries each
  const Qr = Q !== null && Q > 0 ? Q : Infinity;
  const haveQ = Q !== null && Q > 0;
  const torque = new Float64Array(nb), thermal = new Float64Array(nb), thermalAngle = new Float64Array(nb);
  for (let b = 0; b < nb; b++) {
    let st = 0, sth = 0, sta = 0;
    for (let k = bands.lo[b]; k < bands.hi[b]; k++) {
      st += spec.psd[k] * inverseResponseSquared(f[k], I, kappa, Qr, p.damping);
      if (haveQ) {
        const th = thermalTorquePsd(f[k], p.temperature_K, I, kappa, Q!, p.damping);
        sth += th;
        sta += th / inverseResponseSquared(f[k], I, kappa, Q!, p.damping);
      }
    }
    const m = bands.hi[b] - bands.lo[b];
    torque[b] = st / m;
    thermal[b] = sth / m;
    thermalAngle[b] = sta / m;
  }
  out.torque_asd_Nm_per_rtHz = Array.from(torque, Math.sqrt);
  if (!haveQ) return out;
  out.thermal_torque_asd_Nm_per_rtHz = Array.from(thermal, Math.sqrt);

  // the thermal band: around the band where thermal angle noise stands highest over the readout
  const ratio = Array.from(thermalAngle, (x) => x / readoutPsd);
  let top = 0;
  for (let b = 1; b < nb; b++) if (ratio[b] > ratio[top]) top = b;
  if (!(ratio[top] > 1)) return out;
  let lo = top, hi = top;
  while (lo > 0 && ratio[lo - 1] > 1) lo--;
  while (hi < nb - 1 && ratio[hi + 1] > 1) hi++;
  out.band_Hz = [bands.frequency_Hz[lo], bands.frequency_Hz[hi]];
  const r: number[] = [];
  for (let b = lo; b <= hi; b++) r.push(out.torque_asd_Nm_per_rtHz[b] / out.thermal_torque_asd_Nm_per_rtHz[b]);
  out.excess_over_thermal = median(r);
  return out;
}
