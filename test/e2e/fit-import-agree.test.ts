/**
 * `fit` and `import` judge the same data alike (a reproduced fault: `fit`
 * said decay-unphysical where `import` said ok): both use one window
 * analysis with the same noise model and the same acceptance checks, on
 * their final σ's.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Rng } from '../../src/analysis/rng.js';
import { encodeLines } from '../../drivers/wire-encode.js';
import { runCli } from '../helpers/cli.js';

let dir: string;
beforeEach(() => { dir = mkdtempSync(join(tmpdir(), 'fw-agree-')); });
afterEach(() => rmSync(dir, { recursive: true, force: true }));

/** 8 periods of a 20 s swing at 10 Hz, one window's worth of data for both commands. */
function record(name: string, angle: (t: number, g: Rng) => number): string {
  const g = new Rng(7);
  const t = Float64Array.from({ length: 1600 }, (_, i) => i / 10);
  const a = Float64Array.from(t, (ti) => angle(ti, g));
  const path = join(dir, `${name}.csv`);
  writeFileSync(path, encodeLines(t, { angle_rad: a }, ['t_s', 'angle_rad']));
  return path;
}

describe('fit and import agree', () => {
  it('on a good swing, a growing swing, a constant and a random walk', () => {
    const station = join(dir, 'station.json');
    writeFileSync(station, JSON.stringify({
      station: 'agree', fibre: { name: 'agree-fibre' }, pendulum: { inertia_kg_m2: 1e-6 },
      input: { columns: ['t_s', 'angle_rad'] }, analysis: { window_periods: 8, step_periods: 8 },
    }));
    let walk = 0;
    const cases: [string, (t: number, g: Rng) => number, boolean][] = [
      ['good', (t, g) => 1e-3 * Math.exp(-t / 2000) * Math.cos((2 * Math.PI * t) / 20) + 1e-6 * g.normal(), true],
      ['growing', (t, g) => 1e-3 * Math.exp(t / 300) * Math.cos((2 * Math.PI * t) / 20) + 1e-6 * g.normal(), false],
      ['constant', () => 0.0123, false],
      ['walk', (_t, g) => (walk += 1e-6 * g.normal()), false],
    ];
    for (const [name, f, good] of cases) {
      const file = record(name, f);
      const fit = runCli(['fit', file, '--station', station, '--json']);
      const fitStatus = JSON.parse(fit.stdout.trim()).status as string;
      const db = join(dir, `${name}.db`);
      const imp = runCli(['import', file, '--station', station, '--db', db, '--started-at', '2026-01-01T00:00:00Z', '--json']);
      const run = imp.status === 0 ? String(JSON.parse(imp.stdout).run) : null;
      const statuses = run ? (JSON.parse(runCli(['windows', run, '--db', db, '--json']).stdout) as { status: string }[]).map((w) => w.status) : [];
      expect(fitStatus === 'ok', `${name}: fit ${fitStatus}`).toBe(good);
      if (good) expect(statuses, name).toContain('ok');
      else expect(statuses.filter((s) => s === 'ok'), `${name}: import ${statuses.join(', ')}`).toEqual([]);
    }
  });
});
