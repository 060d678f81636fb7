/** `fibrewatch fibres` and `fibrewatch fibre NAME`: fibres and their history across runs. */
import { listFibres } from '../../../db/fibres.js';
import { fibreHistory } from '../../summaries/fibre-history.js';
import { RuntimeError } from '../../domain/errors.js';
import { fmt, isoShort, table, withSigma } from '../../display/format.js';
import { safeText } from '../../display/safe-text.js';
import { withReadStore } from '../store.js';
import { dominantSource } from '../../summaries/budget-text.js';
import type { FibreHistoryRow } from '../../summaries/fibre-history.js';

/** Which source dominates the σ of κ and of G ("κ: inertia, G: diameter"); the budgets are in `fibre --json`. */
function dominance(r: FibreHistoryRow): string {
  const k = dominantSource(r.kappa_sigma_budget), g = dominantSource(r.shear_modulus_sigma_budget);
  return [k && `κ: ${k}`, g && `G: ${g}`].filter(Boolean).join(', ') || '—';
}

/** Cross-section for display: the diameter of a round fibre, width × thickness of a ribbon, in µm. */
function size(f: { diameter_m: number | null; width_m: number | null; thickness_m: number | null }): string {
  if (f.diameter_m !== null) return fmt(f.diameter_m * 1e6);
  if (f.width_m !== null && f.thickness_m !== null) return `${fmt(f.width_m * 1e6)} × ${fmt(f.thickness_m * 1e6)}`;
  return '—';
}

export async function fibresCommand(opts: { db?: string; json?: boolean }): Promise<void> {
  await withReadStore(opts.db, async (store) => {
    const fs = await store.listFibres();
    if (opts.json) return void process.stdout.write(JSON.stringify(fs, null, 2) + '\n');
    if (!fs.length) return void process.stderr.write('no fibres in this store\n');
    process.stdout.write(table(
      ['fibre', 'material', 'd or w × t (µm)', 'L (m)', 'runs', 'first run (UTC)', 'last run (UTC)'],
      fs.map((f) => [f.name, f.material ?? '', size(f), fmt(f.length_m), String(f.runs), isoShort(f.first_run, ''), isoShort(f.last_run, '')]),
    ));
  });
}

export async function fibreCommand(name: string, opts: { db?: string; json?: boolean }): Promise<void> {
  await withReadStore(opts.db, async (store) => {
    if (!(await store.listFibres()).some((f) => f.name === name)) throw new RuntimeError(`fibre "${name}": not in this store (see \`fibrewatch fibres\`)`);
    const rows = await fibreHistory(store, name);
    if (opts.json) return void process.stdout.write(JSON.stringify(rows, null, 2) + '\n');
    process.stdout.write(`fibre ${safeText(name)}: ${rows.length} run${rows.length === 1 ? '' : 's'}\n`);
    process.stdout.write(table(
      ['run', 'started (UTC)', 'status', 'period (s)', 'Q', 'κ (N·m/rad)', 'G (GPa)', 'creep (rad/h)', 'dT/dA (s/rad)', 'κ moved?', 'Q moved?', 'σ mostly from'],
      rows.map((r) => [
        String(r.run), isoShort(r.started_at), r.status, withSigma(r.period_s, r.period_sigma_s), withSigma(r.q, r.q_sigma),
        withSigma(r.kappa_Nm_per_rad, r.kappa_sigma_Nm_per_rad),
        r.shear_modulus_Pa === null ? '—' : withSigma(r.shear_modulus_Pa / 1e9, (r.shear_modulus_sigma_Pa ?? 0) / 1e9),
        r.equilibrium_rate_rad_per_s === null ? '—' : withSigma(r.equilibrium_rate_rad_per_s * 3600, (r.equilibrium_rate_sigma_rad_per_s ?? 0) * 3600),
        withSigma(r.period_amplitude_slope_s_per_rad, r.period_amplitude_slope_sigma_s_per_rad),
        r.kappa_moved === null ? '—' : r.kappa_moved ? 'yes' : 'no',
        r.q_moved === null ? '—' : r.q_moved ? 'yes' : 'no',
        dominance(r),
      ]),
    ));
    // what moved and why, and each run's warnings, one line each
    for (const r of rows) {
      for (const f of r.flags) process.stdout.write(safeText(`run ${r.run}: ${f.kind}: ${f.message}`) + '\n');
      for (const w of r.warnings) process.stdout.write(safeText(`run ${r.run}: warning: ${w.kind}: ${w.message}`) + '\n');
    }
  });
}
