/** `fibrewatch report RUN --out FILE.html`: a self-contained HTML report. */
import { writeFileSync } from 'node:fs';
import { renderReport } from '../../report/html-report.js';
import { RuntimeError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { withReadStore } from '../store.js';

export async function reportCommand(run: number, opts: { out: string; db?: string }): Promise<void> {
  const html = await withReadStore(opts.db, (store) => renderReport(store, run));
  try {
    writeFileSync(opts.out, html);
  } catch (e) {
    throw new RuntimeError(`--out ${opts.out}: cannot write (${(e as NodeJS.ErrnoException).code ?? (e as Error).message})`);
  }
  process.stderr.write(`wrote ${safeText(opts.out)}\n`);
}
