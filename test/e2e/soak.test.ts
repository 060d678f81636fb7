/**
 * A short soak (about 30 s): the simulator's output at 20× real time into a
 * pseudo-terminal, two replugs, two `kill -9` restarts of the built `record`,
 * alerts to a webhook on a real local server that refuses every other
 * request (test/helpers/soak.ts). The longer one is `npm run bench -- soak`.
 */
import { describe, expect, it } from 'vitest';
import { runSoak } from '../helpers/soak.js';

describe('soak', () => {
  it('accounts for every sample, delivers every alert once, keeps memory flat', async () => {
    const r = await runSoak({ duration_s: 25, replugs: 2, kills: 2, seed: 4 });
    console.log(`soak: ${r.written} due, ${r.skipped} not sent while away, ${r.stored} stored, ${r.reportedLost} reported lost; `
      + `${r.alertsStored.length} alerts, ${r.refused} refused requests; runs ${r.runs.map((x) => `${x.id}:${x.status}:${x.samples}`).join(' ')}`);
    // every sample the device had to send is stored or counted in a gap event
    expect(r.stored + r.reportedLost).toBe(r.written);
    expect(r.skipped).toBeGreaterThan(0);
    expect(r.badRecords).toBe(0);
    expect(r.runs.map((x) => x.status)).toEqual(['interrupted', 'interrupted', 'complete']);
    // each replug is a silence longer than no_data_s: raised, then cleared
    expect(r.alertsStored.filter((a) => a.includes('no-data raised')).length).toBeGreaterThanOrEqual(2);
    expect(r.alertsStored.filter((a) => a.includes('no-data cleared')).length).toBeGreaterThanOrEqual(2);
    expect(r.refused).toBeGreaterThan(0);
    // delivered exactly once each, and nothing delivered that was not stored
    for (const a of r.alertsStored) expect(r.deliveries.get(a), a).toBe(1);
    expect([...r.deliveries.keys()].sort()).toEqual([...r.alertsStored].sort());
    // memory: the last recorder (it lives through both replugs) holds no more late in its life than
    // early on, after its first fifth (start-up) (+20 %)
    const life = r.rss[r.rss.length - 1];
    const end = life[life.length - 1][0];
    const max = (xs: [number, number][]) => Math.max(...xs.map((x) => x[1]));
    const early = max(life.filter((x) => x[0] > 0.2 * end && x[0] <= 0.6 * end));
    const late = max(life.filter((x) => x[0] > 0.6 * end));
    console.log(`soak: last recorder lived ${end.toFixed(1)} s, RSS ${(early / 1e6).toFixed(1)} MB early, ${(late / 1e6).toFixed(1)} MB late`);
    expect(late).toBeLessThan(1.2 * early);
    expect(max(life)).toBeLessThan(250e6);
  }, 90_000);
});
