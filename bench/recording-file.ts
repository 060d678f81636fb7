/**
 * Bench recordings: a `t_s,angle_rad` lines file of a slowly damped swing with
 * noise, written in blocks with the shared wire encoder. Invented data (fine
 * for benchmarks); quicker than the simulator for multi-day files.
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';
import { encodeLines } from '../drivers/wire-encode.js';
import { Rng } from '../src/analysis/rng.js';

/** Options of writeRecording (SI units). */
export interface RecordingSpec {
  /** length of the record, s */
  duration_s: number;
  /** sample rate, Hz (default 20) */
  rate_Hz?: number;
  /** damped period, s (default 60) */
  period_s?: number;
  /** amplitude at t = 0, rad (default 1e-3) */
  amplitude_rad?: number;
  /** amplitude 1/e time, s (default 1e6: a high-Q fibre, the swing lasts the week) */
  decay_time_s?: number;
  /** white readout noise, rad rms (default 2e-7) */
  white_rad?: number;
  /** equilibrium wander: rms of an AR(1) process with the given correlation time (default 5e-7 rad, 600 s) */
  wander_rad?: number;
  wander_tc_s?: number;
  /** random seed (default 7) */
  seed?: number;
  /** samples per block (default 65536) */
  block?: number;
}

/** Write the recording to `path`; resolves with the number of lines. */
export async function writeRecording(path: string, spec: RecordingSpec): Promise<number> {
  const rate = spec.rate_Hz ?? 20;
  const T = spec.period_s ?? 60;
  const A = spec.amplitude_rad ?? 1e-3;
  const tau = spec.decay_time_s ?? 1e6;
  const white = spec.white_rad ?? 2e-7;
  const wander = spec.wander_rad ?? 5e-7;
  const tc = spec.wander_tc_s ?? 600;
  const block = spec.block ?? 65536;
  const n = Math.round(spec.duration_s * rate);
  const rng = new Rng(spec.seed ?? 7);
  const a = Math.exp(-1 / (rate * tc));
  const drive = wander * Math.sqrt(1 - a * a);
  let eq = 0;
  const out = createWriteStream(path);
  const t = new Float64Array(block);
  const y = new Float64Array(block);
  for (let i0 = 0; i0 < n; i0 += block) {
    const m = Math.min(block, n - i0);
    for (let k = 0; k < m; k++) {
      const i = i0 + k;
      const ti = i / rate;
      eq = a * eq + drive * rng.normal();
      const v = eq + A * Math.exp(-ti / tau) * Math.cos((2 * Math.PI * ti) / T) + white * rng.normal();
      t[k] = ti;
      // a 1e-11 rad resolution keeps the text short, as an instrument's would be
      y[k] = Math.round(v * 1e11) / 1e11;
    }
    const text = encodeLines(t.subarray(0, m), { angle_rad: y.subarray(0, m) }, ['t_s', 'angle_rad']);
    if (!out.write(text)) await once(out, 'drain');
  }
  out.end();
  await once(out, 'finish');
  return n;
}
