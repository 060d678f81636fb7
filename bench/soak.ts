/**
 * The long soak (test/helpers/soak.ts; the suite runs a 25 s one): the
 * simulator's output at 20× real time into a pseudo-terminal for 3 minutes,
 * with replugs, `kill -9` restarts of the built `record` and a webhook that
 * refuses every other request. Figures: samples due, stored and reported
 * lost (their difference must be 0), alerts stored, delivered more than once
 * or not at all, and the resident size of the last recorder (it lives
 * through every replug) early in its life (after start-up) and late. Runnable alone: `npx tsx bench/soak.ts`.
 */
import { fileURLToPath } from 'node:url';
import { runSoak } from '../test/helpers/soak.js';

/** Options of benchSoak. */
export interface SoakBenchOptions {
  /** wall time, s (default 180) */
  duration_s?: number;
  replugs?: number;
  kills?: number;
}

/** Run the long soak; returns its figures. */
export async function benchSoak(opts: SoakBenchOptions = {}): Promise<Record<string, number>> {
  const r = await runSoak({ duration_s: opts.duration_s ?? 180, replugs: opts.replugs ?? 10, kills: opts.kills ?? 3, seed: 9, log: (l) => process.stdout.write(l + '\n') });
  // the last recorder lives through every replug; its first fifth is start-up
  const life = r.rss[r.rss.length - 1];
  const end = life[life.length - 1][0];
  const max = (xs: [number, number][]) => Math.max(...xs.map((x) => x[1]));
  const dupes = [...r.deliveries.values()].filter((n) => n > 1).length;
  const missing = r.alertsStored.filter((a) => !r.deliveries.has(a)).length;
  const figures = {
    samples_due: r.written,
    samples_not_sent_while_away: r.skipped,
    samples_stored: r.stored,
    samples_reported_lost: r.reportedLost,
    samples_unaccounted: r.written - r.stored - r.reportedLost,
    runs: r.runs.length,
    alerts_stored: r.alertsStored.length,
    alerts_delivered_twice: dupes,
    alerts_not_delivered: missing,
    webhook_refusals: r.refused,
    recorder_life_s: end,
    rss_early_MB: max(life.filter((x) => x[0] > 0.2 * end && x[0] <= 0.6 * end)) / 1e6,
    rss_late_MB: max(life.filter((x) => x[0] > 0.6 * end)) / 1e6,
  };
  for (const [k, v] of Object.entries(figures)) process.stdout.write(`${k.padEnd(32)} ${v}\n`);
  return figures;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchSoak().catch((e) => {
    console.error(e);
    process.exitCode = 1;
  });
}
