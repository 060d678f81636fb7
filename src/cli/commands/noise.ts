/** `fibrewatch noise RUN [--from-s S] [--to-s S] [--json]`: the balance's noise against its thermal limit. */
import { duration, fmt, table } from '../../display/format.js';
import { buildNoiseBudget, type NoiseBudgetReport } from '../../summaries/noise-budget.js';
import { withReadStore } from '../store.js';
import { spanArgs } from '../span-args.js';

export async function noiseCommand(run: number, opts: { db?: string; json?: boolean; fromS?: string; toS?: string }): Promise<void> {
  const span = spanArgs('--from-s', opts.fromS, '--to-s', opts.toS);
  const r = await withReadStore(opts.db, (store) => buildNoiseBudget(store, run, span));
  for (const n of r.notes) process.stderr.write(`fibrewatch: run ${run}: ${n}\n`);
  process.stdout.write(opts.json ? JSON.stringify(r.budget, null, 2) + '\n' : renderNoise(r));
}

/** Indices of about `n` entries spread evenly in log frequency. */
function picks(f: number[], n: number): number[] {
  if (f.length <= n) return f.map((_, i) => i);
  const lo = Math.log(f[0]), hi = Math.log(f[f.length - 1]);
  const out = new Set<number>();
  for (let j = 0; j < n; j++) {
    const target = lo + ((hi - lo) * j) / (n - 1);
    let best = 0;
    for (let i = 1; i < f.length; i++) if (Math.abs(Math.log(f[i]) - target) < Math.abs(Math.log(f[best]) - target)) best = i;
    out.add(best);
  }
  return [...out].sort((a, b) => a - b);
}

/** The human-readable budget: SI units, a few frequencies of the spectrum, the Allan deviations. */
export function renderNoise(r: NoiseBudgetReport): string {
  const b = r.budget;
  const row = (label: string, value: string) => `  ${label.padEnd(20)}${value}`;
  const span = b.from_s !== null && b.to_s !== null ? `${fmt(b.from_s)} s → ${fmt(b.to_s)} s (${duration(b.to_s - b.from_s)})` : '—';
  const lines = [
    `Run ${b.run} · noise budget · ${span}`,
    row('damping', `${b.damping}   temperature ${b.temperature_K.toFixed(2)} K${b.temperature_assumed ? ' (assumed)' : ''}`),
    row('resonance', `${fmt(b.resonance_Hz)} Hz   Q ${fmt(b.q)}   κ ${fmt(b.kappa_Nm_per_rad)} N·m/rad`),
    row('spectrum', r.segment_s !== null ? `Welch, ${r.segments} Hann segments of ${fmt(r.segment_s)} s at 50 % overlap, ${b.frequency_Hz.length} log bands` : '—'),
    row('readout floor', `${fmt(b.readout_asd_rad_per_rtHz)} rad/√Hz`),
    row('thermal band', b.band_Hz ? `${fmt(b.band_Hz[0])} … ${fmt(b.band_Hz[1])} Hz` : '—'),
    row('excess over thermal', b.excess_over_thermal !== null ? `${fmt(b.excess_over_thermal, 3)} (median of torque over thermal ASD in the band)` : '—'),
  ];
  let out = lines.join('\n') + '\n';
  if (b.frequency_Hz.length) {
    const t = b.torque_asd_Nm_per_rtHz, th = b.thermal_torque_asd_Nm_per_rtHz;
    out += '\n' + table(['f (Hz)', 'angle (rad/√Hz)', 'torque (N·m/√Hz)', 'thermal (N·m/√Hz)', 'torque/thermal'],
      picks(b.frequency_Hz, 10).map((i) => [
        fmt(b.frequency_Hz[i]), fmt(b.angle_asd_rad_per_rtHz[i]), fmt(t?.[i] ?? null), fmt(th?.[i] ?? null),
        t && th ? fmt(t[i] / th[i], 3) : '—',
      ]));
  }
  const eq = b.allan.equilibrium, per = b.allan.period;
  if (eq.tau_s.length || per.tau_s.length) {
    const taus = [...new Set([...eq.tau_s, ...per.tau_s])].sort((x, y) => x - y);
    out += `\nAllan deviation of the windows (overlapping; τ₀ = the window step${r.step_s !== null ? `, ${fmt(r.step_s)} s` : ''})\n`;
    out += table(['τ (s)', 'equilibrium (rad)', 'fractional period', 'terms'], taus.map((tau) => {
      const i = eq.tau_s.indexOf(tau), j = per.tau_s.indexOf(tau);
      return [fmt(tau), i >= 0 ? fmt(eq.adev_rad[i]) : '—', j >= 0 ? fmt(per.adev[j]) : '—', String(i >= 0 ? eq.n[i] : per.n[j])];
    }));
  }
  return out;
}
