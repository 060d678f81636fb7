import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openStore } from '../../db/open.js';
import { createRun, listRuns } from '../../db/runs.js';
import { insertWindows, listWindows } from '../../db/windows-store.js';
import type { WindowResult } from '../../src/domain/window-result.js';

const dirs: string[] = [];
function tmpFile(): string {
  const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
  dirs.push(d);
  return join(d, 'store.db');
}
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

function win(index: number, over: Partial<WindowResult> = {}): WindowResult {
  return {
    index, t_start_s: index * 9.3, t_mid_s: index * 9.3 + 18.6, t_end_s: index * 9.3 + 37.2, samples: 744, status: 'ok',
    period_s: 9.3001 + index * 1e-6, period_sigma_s: 2e-5, decay_time_s: 812, decay_time_sigma_s: 40, decay_rate_per_s: 1 / 812, decay_rate_sigma_per_s: 40 / 812 ** 2, q: 274.3, q_sigma: 13,
    amplitude_rad: 1.9e-3, amplitude_sigma_rad: 2e-7, equilibrium_rad: 0.3101, equilibrium_sigma_rad: 3e-8,
    drift_rad_per_s: 1.2e-9, drift_sigma_rad_per_s: 4e-10, phase_rad: -1.1, residual_rms_rad: 1.1e-7, chi2_red: 1.04,
    kappa_Nm_per_rad: 1.6433e-5, kappa_sigma_Nm_per_rad: 2e-9, shear_modulus_Pa: 1.61e11, shear_modulus_sigma_Pa: 2e8, temp_C: 21.4,
    ...over,
  };
}

describe('windows', () => {
  it('round-trips every WindowResult field, rejected windows included', () => {
    const db = openStore(tmpFile());
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: 0, source: 'simulator' });
    const rows = [
      win(0),
      win(1, { status: 'too-few-samples', period_s: null, period_sigma_s: null, kappa_Nm_per_rad: null, temp_C: null }),
      win(2),
    ];
    insertWindows(db, run, [rows[2], rows[0], rows[1]]);
    expect(listWindows(db, run)).toEqual(rows);
    expect(listRuns(db)[0].windows).toBe(3);
    // re-storing an index replaces it
    insertWindows(db, run, [win(1)]);
    expect(listWindows(db, run)[1].status).toBe('ok');
    expect(listWindows(db, run)).toHaveLength(3);
    db.close();
  });

  it('stores non-finite numbers as null and refuses a bad index', () => {
    const db = openStore(tmpFile());
    const run = createRun(db, { station: 's', fibre: { name: 'f' }, startedAt_ms: 0, source: 'simulator' });
    insertWindows(db, run, [win(0, { chi2_red: Infinity, q: NaN })]);
    expect(listWindows(db, run)[0]).toMatchObject({ chi2_red: null, q: null });
    expect(() => insertWindows(db, run, [win(-1)])).toThrow(/rows\[0\]\.index/);
    db.close();
  });
});
