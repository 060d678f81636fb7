/**
 * Thin adapter over fft.js 4 for real input (docs/dependencies.md "fft.js 4"): sizes are
 * powers of two > 1, `realTransform` fills only bins 0…n/2 (interleaved
 * re/im, unnormalised, e^(−i·2πkn/N) sign), and input and output must differ.
 */
import FFT from 'fft.js';

/** Smallest power of two ≥ max(n, 2). */
export function nextPow2(n: number): number {
  if (!(n >= 0) || !Number.isFinite(n)) throw new RangeError(`nextPow2: n must be a finite number ≥ 0, got ${n}`);
  let p = 2;
  while (p < n) p *= 2;
  return p;
}

// One FFT object per size: its twiddle and bit-reversal tables cost more than
// a transform of a few thousand points, and windows repeat the same size.
const plans = new Map<number, { fft: FFT; input: Float64Array; output: Float64Array }>();
const MAX_PLANS = 16;

function plan(nfft: number): { fft: FFT; input: Float64Array; output: Float64Array } {
  let p = plans.get(nfft);
  if (!p) {
    if (plans.size >= MAX_PLANS) plans.clear();
    p = { fft: new FFT(nfft), input: new Float64Array(nfft), output: new Float64Array(2 * nfft) };
    plans.set(nfft, p);
  }
  return p;
}

/**
 * Power |X_k|² of the zero-padded DFT of `x`, bins k = 0…nfft/2
 * (frequency k/(nfft·Δt)). Unnormalised: a tone a·cos(2πk₀n/nfft) of length
 * nfft gives (a·nfft/2)² in bin k₀. `nfft` must be a power of two ≥ x.length.
 */
export function realSpectrumPower(x: Float64Array, nfft: number): Float64Array {
  if (!Number.isInteger(nfft) || nfft < 2 || (nfft & (nfft - 1)) !== 0) {
    throw new RangeError(`realSpectrumPower: nfft must be a power of two > 1, got ${nfft}`);
  }
  if (x.length > nfft) throw new RangeError(`realSpectrumPower: x.length ${x.length} exceeds nfft ${nfft}`);
  const { fft, input, output } = plan(nfft);
  input.set(x);
  input.fill(0, x.length);
  fft.realTransform(output, input);
  const half = nfft >>> 1;
  const power = new Float64Array(half + 1);
  for (let k = 0; k <= half; k++) {
    const re = output[2 * k];
    const im = output[2 * k + 1];
    power[k] = re * re + im * im;
  }
  return power;
}
