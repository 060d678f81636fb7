/**
 * The residual spectrum: the fitted swing comes out, short holes are filled
 * and long ones split the stretch, bad samples are left out, and the result
 * is the Welch estimate of what is left.
 */
import { describe, expect, it } from 'vitest';
import { FLAG_INVALID, FLAG_SATURATED } from '../../src/domain/block.js';
import { ResidualSpectrum } from '../../src/analysis/residual-spectrum.js';
import { SwingModel, type SwingWindow } from '../../src/analysis/swing-model.js';
import { WelchPsd } from '../../src/analysis/welch-psd.js';
import { normals } from '../helpers/blocks.js';

const dt = 0.1;
/** One long window covering [0, span): a swing of 1 mrad at 0.1 Hz, no decay. */
const oneWindow = (span: number): SwingWindow => ({ t_start_s: 0, t_mid_s: span / 2, t_end_s: span, amplitude_rad: 1e-3, decay_time_s: null, period_s: 10, phase_rad: 0.2 });
const swing = (w: SwingWindow, t: number) => w.amplitude_rad! * Math.cos((2 * Math.PI * (t - w.t_mid_s)) / w.period_s! + w.phase_rad!);

describe('residual spectrum', () => {
  it('removes the swing exactly: what is left is the noise, with the Welch spectrum of the noise alone', () => {
    const n = 20000;
    const w = oneWindow(n * dt);
    const g = normals(3);
    const noise = Float64Array.from({ length: n }, () => 1e-7 * g());
    const t = Float64Array.from({ length: n }, (_, i) => i * dt);
    const v = Float64Array.from(t, (x, i) => 0.01 + swing(w, x) + noise[i]);
    const rs = new ResidualSpectrum(new SwingModel([w]), { dt_s: dt, segment: 1024 });
    for (let i = 0; i < n; i += 4096) rs.push(t.subarray(i, i + 4096), v.subarray(i, i + 4096), new Uint8Array(Math.min(4096, n - i)));
    const ref = new WelchPsd({ segment: 1024, dt_s: dt });
    ref.push(noise);
    const a = rs.result()!, b = ref.result()!;
    expect(a.segments).toBe(b.segments);
    // the equilibrium (0.01 rad) is a constant: gone with each segment's line fit; the rest agrees to rounding
    for (let k = 1; k < a.psd.length; k += 7) expect(a.psd[k] / b.psd[k]).toBeCloseTo(1, 6);
    expect(rs.stats).toEqual({ used: n, filled: 0, dropped: 0, stretches: 1 });
  });

  it('fills a hole of ≤ 5 intervals with a line and splits the stretch at a longer one or at bad samples', () => {
    const n = 6000;
    const w = oneWindow(n * dt);
    const keep = (i: number) => !(i >= 1000 && i < 1004) && !(i >= 3000 && i < 3010);
    const idx = Array.from({ length: n }, (_, i) => i).filter(keep);
    const t = Float64Array.from(idx, (i) => i * dt);
    const v = Float64Array.from(t, (x) => swing(w, x) + 1e-6 * x); // a slow ramp: filled values lie on it
    const flags = new Uint8Array(t.length);
    flags[idx.indexOf(5000)] = FLAG_SATURATED;
    flags[idx.indexOf(5001)] = FLAG_INVALID;
    const rs = new ResidualSpectrum(new SwingModel([w]), { dt_s: dt, segment: 256 });
    rs.push(t, v, flags);
    // 4 lost at 1000 (filled), 10 lost at 3000 (a split), 2 flagged at 5000 (filled)
    expect(rs.stats).toEqual({ used: idx.length - 2 + 4 + 2, filled: 6, dropped: 2, stretches: 2 });
  });

  it('samples outside every window are left out and split the stretch', () => {
    const w1: SwingWindow = { ...oneWindow(100), t_start_s: 0, t_mid_s: 50, t_end_s: 100 };
    const w2: SwingWindow = { ...oneWindow(100), t_start_s: 150, t_mid_s: 200, t_end_s: 250 };
    const t = Float64Array.from({ length: 2500 }, (_, i) => i * dt);
    const rs = new ResidualSpectrum(new SwingModel([w1, w2]), { dt_s: dt, segment: 64 });
    rs.push(t, new Float64Array(t.length), new Uint8Array(t.length));
    expect(rs.stats.dropped).toBe(500); // 100 ≤ t < 150
    expect(rs.stats.stretches).toBe(2);
  });
});
