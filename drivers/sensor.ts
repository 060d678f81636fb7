/**
 * Sensor conversion: raw channel values of a block → angle in radians with
 * per-sample flags (docs/physics.md, "Reading the angle").
 *
 * - angle: angle_rad as is.
 * - encoder: θ = 2π·counts/counts_per_rev, the n-bit counter unwrapped.
 * - split photodiode (Gaussian beam, 1/e² radius w): s = (a−b)/(a+b) =
 *   erf(√2·x/w), so x = (w/√2)·erf⁻¹(s) (erf⁻¹ from @stdlib, ~5× faster per
 *   sample than our former own, bench/decode.ts); optical lever θ = ½·atan(x/D).
 * - lateral-effect PSD of half-length h: x = h·(a−b)/(a+b) or x_m directly;
 *   θ = ½·atan(x/D).
 * Saturated samples (off the split / off the detector) get FLAG_SATURATED:
 * masked, never fitted. Their angle is the limit of the linear range with the
 * swing's sign (NaN when the spot is lost altogether): the FFT period seed may
 * use that sign where most of each swing is off the split.
 */
import { FLAG_INVALID, FLAG_SATURATED, type AngleBlock, type RawBlock, type ValueRole } from '../src/domain/block.js';
import erfinv from '@stdlib/math-base-special-erfinv';
import type { SensorConfig } from '../src/config/station.js';
import { Unwrapper } from './unwrap.js';

function need(b: RawBlock, role: ValueRole, kind: string): Float64Array {
  const a = b.channels[role];
  if (!a) throw new Error(`sensor "${kind}": the block has no "${role}" channel (channels: ${Object.keys(b.channels).join(', ') || 'none'})`);
  return a;
}

/** The block with the angle and flags that `fill` writes for each of its n samples (fresh arrays). */
function converted(b: RawBlock, fill: (angle: Float64Array, flags: Uint8Array, n: number) => void): AngleBlock {
  const angle = new Float64Array(b.n);
  const flags = new Uint8Array(b.n);
  fill(angle, flags, b.n);
  return { n: b.n, t: b.t, clock: b.clock, host_ms: b.host_ms, channels: b.channels, angle, flags };
}

/** A converter for one sensor; keeps state across blocks (the encoder's wrap count). */
export function makeConverter(sensor: SensorConfig): (b: RawBlock) => AngleBlock {
  switch (sensor.kind) {
    case 'angle':
      return (b) => {
        const src = need(b, 'angle_rad', 'angle');
        return converted(b, (angle, flags, n) => {
          angle.set(src.subarray(0, n));
          for (let i = 0; i < n; i++) if (angle[i] !== angle[i]) flags[i] = FLAG_INVALID;
        });
      };
    case 'encoder': {
      const k = (2 * Math.PI) / sensor.counts_per_rev;
      const u = sensor.counter_bits !== undefined ? new Unwrapper(2 ** sensor.counter_bits) : null;
      return (b) => {
        const counts = need(b, 'counts', 'encoder');
        return converted(b, (angle, flags, n) => {
          for (let i = 0; i < n; i++) {
            const c = counts[i];
            if (c !== c) {
              angle[i] = NaN;
              flags[i] = FLAG_INVALID;
            } else angle[i] = k * (u ? u.next(c) : c);
          }
        });
      };
    }
    case 'split-photodiode': {
      const xScale = sensor.beam_radius_m / Math.SQRT2;
      const D = sensor.lever_arm_m;
      const sat = sensor.saturation;
      const clip = 0.5 * Math.atan((xScale * erfinv(sat)) / D);
      return (b) => {
        const A = need(b, 'a', 'split-photodiode');
        const B = need(b, 'b', 'split-photodiode');
        return converted(b, (angle, flags, n) => {
          for (let i = 0; i < n; i++) {
            const a = A[i];
            const bb = B[i];
            const sum = a + bb;
            if (sum !== sum) {
              angle[i] = NaN;
              flags[i] = FLAG_INVALID;
              continue;
            }
            const s = (a - bb) / sum;
            if (!(sum > 0) || !(Math.abs(s) < sat)) {
              angle[i] = sum > 0 ? Math.sign(s) * clip : NaN;
              flags[i] = FLAG_SATURATED;
              continue;
            }
            angle[i] = 0.5 * Math.atan((xScale * erfinv(s)) / D);
          }
        });
      };
    }
    case 'psd': {
      const h = sensor.half_length_m;
      const D = sensor.lever_arm_m;
      const xMax = sensor.saturation * h;
      const clip = 0.5 * Math.atan(xMax / D);
      return (b) => {
        const X = b.channels.x_m;
        const A = X ? null : need(b, 'a', 'psd');
        const B = X ? null : need(b, 'b', 'psd');
        return converted(b, (angle, flags, n) => {
          for (let i = 0; i < n; i++) {
            let x: number;
            if (X) x = X[i];
            else {
              const sum = A![i] + B![i];
              x = sum > 0 ? (h * (A![i] - B![i])) / sum : sum === sum ? Infinity : NaN;
            }
            if (x !== x) {
              angle[i] = NaN;
              flags[i] = FLAG_INVALID;
            } else if (!(Math.abs(x) < xMax)) {
              angle[i] = Math.sign(x) * clip;
              flags[i] = FLAG_SATURATED;
            } else angle[i] = 0.5 * Math.atan(x / D);
          }
        });
      };
    }
  }
}
