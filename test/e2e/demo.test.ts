/**
 * `fibrewatch demo` as a user runs it: the simulator in its own process
 * writing into a socat pty, `record`'s code path reading it through
 * serialport, analysis and alerts into a fresh store, and a report.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCliAsync, runCli } from '../helpers/cli.js';

let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-demo-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('demo', () => {
  it('runs the story through the pseudo-terminal and prints period, Q, κ, G, the equilibrium rate and the alerts', async () => {
    const out = join(dir, 'out');
    const r = await runCliAsync(['demo', '--out', out], { env: { FIBREWATCH_DEMO_WALL_S: '20' } });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/path: pseudo-terminal \+ serialport/);
    for (const label of ['period', 'Q', 'κ', 'G', 'equilibrium']) expect(r.stdout).toMatch(new RegExp(`^\\s+${label}\\s`, 'm'));
    // the story raises and clears each drift alert at least once
    expect(r.stdout).toMatch(/equilibrium-drift \([^)]*raised[^)]*cleared/);
    expect(r.stdout).toMatch(/period-drift \([^)]*raised[^)]*cleared/);
    const db = join(out, 'fibrewatch.db');
    expect(existsSync(db)).toBe(true);
    const html = readFileSync(join(out, 'report.html'), 'utf8');
    expect(html).toContain('<script type="application/json" id="fw-data">');
    expect(html).not.toMatch(/<(script|link)[^>]+(src|href)="https?:/);

    // the store answers the query commands
    const show = JSON.parse(runCli(['show', '1', '--db', db, '--json']).stdout);
    expect(show.samples).toBe(12 * 3600 * 10);
    // the scenario's fibre: κ = πGd⁴/(32L) with G = 161 GPa (tungsten, materials table), d = 25 µm, L = 0.4 m
    const kappa = (Math.PI * 161e9 * 2.5e-5 ** 4) / (32 * 0.4);
    expect(Math.abs(show.kappa_Nm_per_rad - kappa) / kappa).toBeLessThan(1e-3);
    expect(Math.abs(show.shear_modulus_Pa - 161e9) / 161e9).toBeLessThan(1e-3);
    const events = JSON.parse(runCli(['events', '1', '--db', db, '--json']).stdout) as { kind: string; state: string }[];
    expect(events.some((e) => e.kind === 'equilibrium-drift' && e.state === 'cleared')).toBe(true);
    // the source masses' two positions, compared over the second half: the story's 5 µrad and +25 ppm
    // (src/app/demo-story.ts) within 3σ, printed by the demo as well
    expect(r.stdout).toMatch(/fibrewatch compare 1 --from-s \d+/);
    expect(r.stdout).toMatch(/^2 − 1\s+5\.\d+ ± /m);
    expect(r.stdout).toMatch(/fibrewatch serve --db .* then open http:\/\/127\.0\.0\.1:8177\/runs\/1\?compare_from_s=\d+/);
    const from = /--from-s (\d+)/.exec(r.stdout)![1];
    const c = JSON.parse(runCli(['compare', '1', '--db', db, '--from-s', from, '--json']).stdout);
    const d = c.differences[0];
    expect(Math.abs(d.delta_equilibrium_rad - 5e-6) / d.delta_equilibrium_sigma_rad).toBeLessThan(3);
    expect(Math.abs(d.delta_period_ppm - 25) / d.delta_period_sigma_ppm).toBeLessThan(3);
    // the fibre is a little anelastic (1 s/rad) and show says so; nothing in the station file is absurd
    expect(Math.abs(show.period_amplitude_slope_s_per_rad - 1) / show.period_amplitude_slope_sigma_s_per_rad).toBeLessThan(3);
    expect(show.warnings).toEqual([]);
  }, 180_000);
});
