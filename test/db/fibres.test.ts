import { afterEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Database } from 'better-sqlite3';
import { linearRegression, mean, sampleStandardDeviation, weightedMean } from 'simple-statistics';
import { openStore } from '../../db/open.js';
import { createRun, endRun } from '../../db/runs.js';
import { insertWindows } from '../../db/windows-store.js';
import { listFibres } from '../../db/fibres.js';
import { fibreHistory } from '../../src/summaries/fibre-history.js';
import { sqliteReadStore } from '../../db/read-store.js';
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

const T = 9.3; // period, s; windows 4 periods long stepping 1 period → overlap factor 4
const D0 = Date.UTC(2026, 4, 1);
// the swing decays at γ, so that Q = ω₀/(2γ) = 270 with ω₀² = ω_d² − γ² (internal damping, the default)
const wd = (2 * Math.PI) / T;
const GAMMA = wd / Math.sqrt(1 + 4 * 270 * 270);

function win(index: number, over: Partial<WindowResult>): WindowResult {
  const t0 = index * T;
  return {
    index, t_start_s: t0, t_mid_s: t0 + 2 * T, t_end_s: t0 + 4 * T, samples: 744, status: 'ok',
    period_s: T, period_sigma_s: 1e-5, decay_time_s: 800, decay_time_sigma_s: 30, decay_rate_per_s: 1 / 800, decay_rate_sigma_per_s: 30 / 800 ** 2, q: 270, q_sigma: 10,
    amplitude_rad: 2e-3 * Math.exp(-GAMMA * (t0 + 2 * T)), amplitude_sigma_rad: 1e-7, equilibrium_rad: 0.31, equilibrium_sigma_rad: 1e-8,
    drift_rad_per_s: 0, drift_sigma_rad_per_s: 1e-10, phase_rad: 0, residual_rms_rad: 1e-7, chi2_red: 1,
    kappa_Nm_per_rad: 1e-5, kappa_sigma_Nm_per_rad: 1e-9, shear_modulus_Pa: 1.6e11, shear_modulus_sigma_Pa: 1e8, temp_C: 21,
    ...over,
  };
}

function addRun(db: Database, fibre: string, start_ms: number, windows: WindowResult[]): number {
  const id = createRun(db, { station: 'bench-a', fibre: { name: fibre, material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8 }, startedAt_ms: start_ms, source: 'device' });
  insertWindows(db, id, windows);
  endRun(db, id, 'complete', start_ms + 3_600_000);
  return id;
}

describe('fibres', () => {
  it('lists fibres with run counts and first/last run', () => {
    const db = openStore(tmpFile());
    addRun(db, 'F1', D0 + 86_400_000, []);
    addRun(db, 'F1', D0, []);
    createRun(db, { station: 'bench-b', fibre: { name: 'R1', width_m: 1e-3, thickness_m: 2e-5 }, startedAt_ms: D0, source: 'file' });
    db.prepare("INSERT INTO fibres (name) VALUES ('unused')").run();
    expect(listFibres(db)).toEqual([
      { name: 'F1', material: 'tungsten', diameter_m: 2.5e-5, length_m: 0.8, width_m: null, thickness_m: null, runs: 2,
        first_run: '2026-05-01T00:00:00.000Z', last_run: '2026-05-02T00:00:00.000Z' },
      { name: 'R1', material: null, diameter_m: null, length_m: null, width_m: 1e-3, thickness_m: 2e-5, runs: 1,
        first_run: '2026-05-01T00:00:00.000Z', last_run: '2026-05-01T00:00:00.000Z' },
      { name: 'unused', material: null, diameter_m: null, length_m: null, width_m: null, thickness_m: null, runs: 0, first_run: null, last_run: null },
    ]);
    db.close();
  });

  it('summarises each run from its ok windows and says whether κ moved', async () => {
    const db = openStore(tmpFile());
    const n = 20;
    // run 1: κ alternating ±0.3σ (scatter below the stated σ), periods with unequal σ, a creeping equilibrium
    const w1 = Array.from({ length: n }, (_, i) => win(i, {
      kappa_Nm_per_rad: 1e-5 + (i % 2 ? 0.3e-9 : -0.3e-9),
      period_s: T + (i % 3) * 1e-6,
      period_sigma_s: (1 + (i % 4)) * 1e-5,
      equilibrium_rad: 0.31 + 2e-9 * (i * T + 2 * T) + (i % 2 ? 1e-9 : -1e-9),
      q: 260 + i,
    }));
    w1.push(win(n, { status: 'no-convergence', kappa_Nm_per_rad: 5, period_s: 99, q: 1e6 })); // must be ignored
    const r1 = addRun(db, 'F1', D0, w1);
    // run 2: κ up by 1σ of one window — well within the combined uncertainty of the means
    const r2 = addRun(db, 'F1', D0 + 86_400_000, Array.from({ length: n }, (_, i) => win(i, { kappa_Nm_per_rad: 1e-5 + 1e-9 })));
    // run 3: no fitted window
    const r3 = addRun(db, 'F1', D0 + 2 * 86_400_000, [win(0, { status: 'too-few-samples' })]);
    // run 4: κ scattered ±3σ (scatter dominates) and shifted by +1e-7, far beyond the uncertainty
    const k4 = Array.from({ length: n }, (_, i) => 1.01e-5 + (i % 2 ? 3e-9 : -3e-9));
    const r4 = addRun(db, 'F1', D0 + 3 * 86_400_000, k4.map((k, i) => win(i, { kappa_Nm_per_rad: k })));
    addRun(db, 'OTHER', D0, [win(0, { kappa_Nm_per_rad: 1 })]);

    const h = await fibreHistory(sqliteReadStore(db, 'test'), 'F1');
    expect(h.map((r) => r.run)).toEqual([r1, r2, r3, r4]);
    const [a, b, c, d] = h;
    expect(a).toMatchObject({ station: 'bench-a', started_at: '2026-05-01T00:00:00.000Z', status: 'complete', windows: n + 1, windows_ok: n });

    const overlap = Math.sqrt(4); // √(window length / step): windows of 4 periods stepping 1 (run summary)
    // κ: equal σ → plain mean; scatter below σ → σ_mean = σ/√n, times the overlap factor
    expect(a.kappa_Nm_per_rad!).toBeCloseTo(mean(w1.slice(0, n).map((w) => w.kappa_Nm_per_rad!)), 18);
    expect(a.kappa_sigma_Nm_per_rad!).toBeCloseTo(overlap * 1e-9 / Math.sqrt(n), 18);
    // period: inverse-variance weighted mean (checked against simple-statistics)
    const p = w1.slice(0, n);
    expect(a.period_s!).toBeCloseTo(weightedMean(p.map((w) => w.period_s!), p.map((w) => 1 / w.period_sigma_s! ** 2)), 12);
    // Q from the amplitudes' decay over the run (docs/analysis.md, "The run's Q"), not from the windows' own Q
    expect(a.q! / 270).toBeCloseTo(1, 6);
    // creep: slope of equilibrium against t_mid, equal σ → least squares (checked against simple-statistics)
    const lr = linearRegression(p.map((w) => [w.t_mid_s, w.equilibrium_rad!]));
    expect(a.equilibrium_rate_rad_per_s!).toBeCloseTo(lr.m, 15);
    expect(a.equilibrium_rate_rad_per_s!).toBeCloseTo(2e-9, 10);
    expect(a.equilibrium_rate_sigma_rad_per_s!).toBeGreaterThan(0);
    expect(a.shear_modulus_Pa).toBeCloseTo(1.6e11, 0);
    expect(a.temp_C).toBeCloseTo(21, 12);
    expect(a.kappa_moved).toBeNull(); // first run: nothing to compare with

    expect(b.kappa_moved).toBe(false);
    expect(c).toMatchObject({ windows: 1, windows_ok: 0, kappa_Nm_per_rad: null, period_s: null, q: null, kappa_moved: null });
    // run 4 compares with run 2 (the last run with a κ). Scatter above σ: σ_mean from the scatter (Birge ratio)
    expect(d.kappa_sigma_Nm_per_rad!).toBeCloseTo(overlap * sampleStandardDeviation(k4) / Math.sqrt(n), 18);
    expect(d.kappa_moved).toBe(true);
    // the rule: |κ_i − κ_{i−1}| > 2·sqrt(σ_i² + σ_{i−1}²)
    expect(Math.abs(d.kappa_Nm_per_rad! - b.kappa_Nm_per_rad!)).toBeGreaterThan(2 * Math.hypot(d.kappa_sigma_Nm_per_rad!, b.kappa_sigma_Nm_per_rad!));
    expect(await fibreHistory(sqliteReadStore(db, 'test'), 'no-such-fibre')).toEqual([]);
    db.close();
  });
});
