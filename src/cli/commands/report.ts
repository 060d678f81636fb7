/** `fibrewatch report RUN --out FILE.html [--compare-from-s S] [--compare-to-s S]`: a self-contained HTML report. */
import { writeFileSync } from 'node:fs';
import { renderReport } from '../../report/html-report.js';
import { RuntimeError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { withReadStore } from '../store.js';
import { spanArgs } from '../span-args.js';

export async function reportCommand(run: number, opts: { out: string; db?: string; compareFromS?: string; compareToS?: string }): Promise<void> {
  const compare = spanArgs('--compare-from-s', opts.compareFromS, '--compare-to-s', opts.compareToS);
  const html = await withReadStore(opts.db, (store) => renderReport(store, run, { compare }));
  try {
    writeFileSync(opts.out, html);
  } catch (e) {
    throw new RuntimeError(`--out ${opts.out}: cannot write (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  process.stderr.write(`wrote ${safeText(opts.out)}\n`);
}
