/** `fibrewatch report RUN --out FILE.html`: a self-contained HTML report. */
import { writeFileSync } from 'node:fs';
import { renderReport } from '../../report/html-report.js';
import { withQueryStore } from '../store.js';

export async function reportCommand(run: number, opts: { out: string; db?: string }): Promise<void> {
  const html = withQueryStore(opts.db, (db) => renderReport(db, run));
  writeFileSync(opts.out, html);
  process.stderr.write(`wrote ${opts.out}\n`);
}
