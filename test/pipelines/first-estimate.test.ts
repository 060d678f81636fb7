/**
 * The first period estimate rests on several cycles, and a run of failed
 * windows looks for the period again. Reproduced fault: a 7 s swing estimated
 * as 1.3–1.6 s from the 8 s of data after a gap, after which every window of
 * the run failed.
 */
import { describe, expect, it } from 'vitest';
import { Subject, lastValueFrom, toArray } from 'rxjs';
import type { AngleBlock } from '../../src/domain/block.js';
import { analysisPipeline } from '../../pipelines/pipeline.js';
import { parseStation } from '../../src/config/station.js';
import { Rng } from '../../src/analysis/rng.js';

async function run(stretches: [number, number][], analysis: Record<string, unknown> = {}) {
  const st = parseStation({ station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad'] }, analysis });
  const blocks$ = new Subject<AngleBlock>();
  const estimates: number[] = [];
  const p = analysisPipeline(blocks$, { analysis: st.analysis, onFirstEstimate: (period) => estimates.push(period) });
  const out = lastValueFrom(p.windows$.pipe(toArray()));
  const g = new Rng(1);
  for (const [t0, seconds] of stretches) {
    for (let s = 0; s < seconds; s += 100) {
      const m = Math.min(1000, Math.round((seconds - s) * 10));
      const t = Float64Array.from({ length: m }, (_, i) => t0 + s + i / 10);
      const angle = Float64Array.from(t, (ti) => 1e-3 * Math.cos((2 * Math.PI * ti) / 7) + 1e-6 * g.normal());
      blocks$.next({ n: m, t, angle, flags: new Uint8Array(m), channels: {}, clock: 'device', host_ms: 0 });
    }
  }
  blocks$.complete();
  return { windows: await out, estimates };
}

describe('first period estimate', () => {
  it('is not taken from 8 s after a gap: the longest stretch, with ≥ 4 cycles, gives the 7 s swing', async () => {
    const { windows, estimates } = await run([[0, 590], [600, 8], [700, 3600]]);
    expect(estimates).toHaveLength(1);
    expect(estimates[0]).toBeCloseTo(7, 2);
    expect(windows.filter((w) => w.status === 'ok').length / windows.length).toBeGreaterThan(0.95);
  });

  it('a wrong period_guess_s (1.29 s for a 7 s swing) is corrected after a few failed windows', async () => {
    const { windows } = await run([[0, 3600]], { period_guess_s: 1.29 });
    const first = windows.findIndex((w) => w.status === 'ok');
    expect(first).toBeGreaterThanOrEqual(0);
    expect(windows[first].t_mid_s).toBeLessThan(300);
    expect(windows[first].period_s!).toBeCloseTo(7, 3);
    expect(windows.filter((w) => w.status === 'ok').length / windows.length).toBeGreaterThan(0.9);
  });
});
