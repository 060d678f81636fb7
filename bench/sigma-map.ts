/**
 * The noise-regime map of the window uncertainties: for each cell (Q, swing
 * over the thermal rms, readout noise), the SD of the pulls of
 * non-overlapping windows' period, decay rate and equilibrium against the
 * simulated truth (goal 0.85–1.2 everywhere), and the median χ²_red.
 * Run alone: `npx tsx bench/sigma-map.ts`.
 */
import { pathToFileURL } from 'node:url';
import { regimePulls, type RegimeCell } from '../test/helpers/pipeline-run.js';

/** Pull SDs over the whole map, one line per cell, and the worst deviation from 1. */
export async function benchSigmaMap(): Promise<Record<string, number>> {
  const cells: RegimeCell[] = [];
  for (const q of [100, 2000, 1e4]) for (const a of [100, 1000, 1e4]) for (const ro of [1e-8, 3e-6]) cells.push({ q, amplitudeOverThermal: a, readout_rad: ro });
  cells.push({ q: 2000, amplitudeOverThermal: 1000, readout_rad: 1e-6, thermal: false });
  console.log('window pulls SD (non-overlapping windows, ≥ 150 per cell; goal 0.85–1.2), median χ²_red:');
  console.log('  Q       swing/θ_th  readout    period  decay  equil.  χ²_red  pulls');
  let worst = 0, lo = Infinity, hi = 0;
  for (const c of cells) {
    const r = await regimePulls(c);
    for (const v of [r.period, r.decay, r.equilibrium]) { worst = Math.max(worst, Math.abs(v - 1)); lo = Math.min(lo, v); hi = Math.max(hi, v); }
    console.log(`  ${String(c.q).padEnd(7)} ${String(c.amplitudeOverThermal).padEnd(11)} ${(c.thermal === false ? `${c.readout_rad} only` : String(c.readout_rad)).padEnd(10)} ${r.period.toFixed(2).padEnd(7)} ${r.decay.toFixed(2).padEnd(6)} ${r.equilibrium.toFixed(2).padEnd(7)} ${r.chi2_median.toFixed(2).padEnd(7)} ${r.pulls}`);
  }
  console.log(`  all cells: pulls SD from ${lo.toFixed(2)} to ${hi.toFixed(2)}`);
  return { cells: cells.length, pull_sd_min: lo, pull_sd_max: hi, pull_sd_worst_deviation: worst };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  benchSigmaMap().catch((e) => {
    console.error(e);
    process.exit(1);
  });
}
