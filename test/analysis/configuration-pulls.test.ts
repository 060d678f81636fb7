/**
 * Monte-Carlo check of `compare`'s numerics on the virtual balance through the
 * real pipeline: an A/B deflection run (source masses switched every 2 h on a
 * fibre creeping quadratically, thermal torque noise of internal damping)
 * recovers Δθ and Δperiod within 3σ, with σ's that match the scatter over
 * seeds. 10 seeds here (a few seconds); the 50-seed figure, 0.85–1.2, is
 * `npm run bench -- compare`. Truth: the simulator's deflection τ/κ and its
 * period factor (drivers/simulator/balance.ts).
 */
import { describe, expect, it } from 'vitest';
import { deflectionRun, DEFLECTION, pullStats } from '../helpers/configuration-mc.js';

describe('compare on simulated A/B deflection runs', () => {
  it('Δθ and Δperiod within 3σ in every seed; the pulls scatter about as much as they should', async () => {
    const runs = [];
    for (let seed = 1; seed <= 10; seed++) runs.push(await deflectionRun(seed));
    for (const r of runs) {
      expect(Math.abs(r.pull_equilibrium), `seed ${r.seed}: Δθ ${r.delta_rad} ± ${r.delta_sigma_rad}`).toBeLessThan(3);
      expect(Math.abs(r.pull_period), `seed ${r.seed}: Δperiod ${r.delta_ppm} ± ${r.delta_sigma_ppm} ppm`).toBeLessThan(3);
      // a quadratic creep needs at least a quadratic drift (or the creep law)
      expect(r.model).not.toMatch(/order [01] /);
    }
    const e = pullStats(runs.map((r) => r.pull_equilibrium)), p = pullStats(runs.map((r) => r.pull_period));
    // 10 pulls: their SD scatters by about ±25 %, hence the loose band
    expect(e.sd).toBeGreaterThan(0.55);
    expect(e.sd).toBeLessThan(1.5);
    expect(p.sd).toBeGreaterThan(0.55);
    expect(p.sd).toBeLessThan(1.5);
    // the resolution a user gets: Δθ to about 0.1 % and Δperiod to about 1 % here
    expect(Math.max(...runs.map((r) => r.delta_sigma_rad)) / DEFLECTION.delta_rad).toBeLessThan(3e-3);
    expect(Math.max(...runs.map((r) => r.delta_sigma_ppm)) / DEFLECTION.delta_ppm).toBeLessThan(0.05);
  }, 60_000);
});
