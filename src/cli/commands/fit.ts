/** `fibrewatch fit FILE… [--station F | --columns LIST] [--json]`: each file as one window, no store. */
import { existsSync } from 'node:fs';
import { loadStation, stationFromColumns, type Station } from '../../config/station.js';
import { fitFile, type FileFit } from '../../app/fit-file.js';
import { UsageError } from '../../domain/errors.js';
import { withSigma, fmt } from '../../display/format.js';
import { safeText } from '../../display/safe-text.js';

export async function fitCommand(files: string[], opts: { station?: string; columns?: string; json?: boolean }): Promise<void> {
  if (opts.station && opts.columns) throw new UsageError('--station and --columns: give one, not both');
  let station: Station;
  if (opts.station) station = loadStation(opts.station);
  else if (opts.columns) station = stationFromColumns(opts.columns.split(',').map((c) => c.trim()));
  else throw new UsageError('fit: give --station FILE or --columns LIST (e.g. --columns t_s,angle_rad)');
  for (const f of files) if (!existsSync(f)) throw new UsageError(`${f}: no such file`);
  let failed = 0;
  for (const f of files) {
    const r = await fitFile(f, station);
    if (r.status !== 'ok') {
      failed++;
      process.stderr.write(`${safeText(f)}: not fitted: ${r.status} (${r.samples} usable samples${r.bad_records ? `, ${r.bad_records} bad records` : ''})\n`);
    }
    if (r.caution) process.stderr.write(`${safeText(f)}: CAUTION: ${safeText(r.caution)}\n`);
    process.stdout.write(opts.json ? JSON.stringify(r) + '\n' : renderFit(r));
  }
  // every file got its line; a file that could not be fitted is bad input
  if (failed) process.exitCode = 2;
}

function renderFit(r: FileFit): string {
  const l = [`${r.file}: ${r.status}, ${r.samples} samples${r.samples_masked ? ` (${r.samples_masked} masked)` : ''}${r.bad_records ? `, ${r.bad_records} bad records` : ''}`];
  if (r.status === 'ok') {
    l.push(
      `  period (damped)   ${withSigma(r.period_s, r.period_sigma_s, 's')}`,
      `  decay time τ      ${withSigma(r.decay_time_s, r.decay_time_sigma_s, 's')}`,
      `  Q                 ${withSigma(r.q, r.q_sigma)}`,
      `  amplitude         ${withSigma(r.amplitude_rad, r.amplitude_sigma_rad, 'rad')}`,
      `  equilibrium       ${withSigma(r.equilibrium_rad, r.equilibrium_sigma_rad, 'rad')} at t = ${fmt(r.t_mid_s)} s`,
      `  drift             ${withSigma(r.drift_rad_per_s, r.drift_sigma_rad_per_s, 'rad/s')}`,
      `  residual rms      ${fmt(r.residual_rms_rad)} rad   χ²_red ${fmt(r.chi2_red)}`,
    );
    if (r.kappa_Nm_per_rad !== undefined) l.push(`  κ                 ${withSigma(r.kappa_Nm_per_rad, r.kappa_sigma_Nm_per_rad, 'N·m/rad')}`);
    if (r.shear_modulus_Pa != null) l.push(`  G                 ${withSigma(r.shear_modulus_Pa / 1e9, (r.shear_modulus_sigma_Pa ?? 0) / 1e9, 'GPa')}`);
  }
  if (r.twist_limit_rad !== undefined && r.max_twist_rad !== null) l.push(`  twist             ${fmt(r.max_twist_rad)} rad of ${fmt(r.twist_limit_rad)} rad elastic limit`);
  return l.map(safeText).join('\n') + '\n';
}
