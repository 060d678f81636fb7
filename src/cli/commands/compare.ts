/** `fibrewatch compare RUN [--json] [--settle-periods N] [--from-s S] [--to-s S]`: each configuration against the others. */
import { withReadStore } from '../store.js';
import { buildComparison } from '../../summaries/compare-summary.js';
import { renderComparison } from '../../summaries/compare-text.js';
import { safeText } from '../../display/safe-text.js';
import { nonNegative, spanArgs } from '../span-args.js';

export async function compareCommand(run: number, opts: { db?: string; json?: boolean; settlePeriods?: string; fromS?: string; toS?: string }): Promise<void> {
  const settlePeriods = nonNegative('--settle-periods', opts.settlePeriods);
  const { from_s, to_s } = spanArgs('--from-s', opts.fromS, '--to-s', opts.toS);
  const c = await withReadStore(opts.db, (store) => buildComparison(store, run, { settlePeriods, from_s, to_s }));
  if (opts.json) {
    process.stdout.write(JSON.stringify(c, null, 2) + '\n');
    for (const n of c.notes) process.stderr.write(`fibrewatch: note: ${safeText(n)}\n`);
    return;
  }
  process.stdout.write(renderComparison(c));
}
