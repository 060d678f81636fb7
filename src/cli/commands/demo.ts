/** `fibrewatch demo [--out DIR] [--hours H]`: the virtual balance through the real path. */
import { runDemo } from '../../app/demo.js';
import { safeText } from '../../display/safe-text.js';
import { renderSummary } from './show.js';

export async function demoCommand(opts: { out: string; hours: number; inProcess?: boolean; seed: number }): Promise<void> {
  const t0 = Date.now();
  process.stderr.write('fibrewatch demo — a virtual torsion balance (invented data). Real balances: mind the laser, the suspended mass and vacuum glass; see README "Safety".\n');
  // tests shorten the wall-clock budget (default about a minute)
  const wall = Number(process.env.FIBREWATCH_DEMO_WALL_S) || undefined;
  const r = await runDemo({ out: opts.out, hours: opts.hours, inProcess: opts.inProcess, seed: opts.seed, wall_s: wall });
  process.stdout.write('\n' + renderSummary(r.summary));
  const kinds = new Map<string, Set<string>>();
  for (const a of r.alerts) (kinds.get(a.kind) ?? kinds.set(a.kind, new Set()).get(a.kind)!).add(a.state!);
  const story = [...kinds].map(([k, s]) => `${k} (${[...s].join(', ')})`).join('; ');
  process.stdout.write(`\nalerts: ${safeText(story || 'none')}\n`);
  process.stdout.write(`path: ${r.mode === 'pty' ? 'pseudo-terminal + serialport' : 'in-process decoder (no pseudo-terminal)'}; took ${((Date.now() - t0) / 1000).toFixed(0)} s\n`);
  const db = safeText(r.dbPath);
  const run = r.summary.run;
  const compare = `npx fibrewatch compare ${run} --from-s ${r.compareFrom_s} --db ${db}`;
  process.stdout.write(`\nthe source masses' two positions (${compare}):\n${r.comparisonText}`);
  process.stdout.write(`\nstore:  ${db}\nreport: ${safeText(r.reportPath)}  (one file: open it in a browser)\n`);
  process.stdout.write(`look closer:\n  npx fibrewatch windows ${run} --db ${db}\n  npx fibrewatch events ${run} --db ${db}\n  npx fibrewatch noise ${run} --db ${db}\n  ${compare}\n`);
  process.stdout.write(`  npx fibrewatch serve --db ${db}   then open http://127.0.0.1:8177/runs/${run}?compare_from_s=${r.compareFrom_s}\n`);
}
