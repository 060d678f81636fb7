/** `fibrewatch check [RUN] [--db PATH] [--mark] [--json]`: verify the store; exit 1 when anything is wrong. */
import { checkStore, type StoreCheck, type StoreProblem } from '../../../db/check-store.js';
import { getRun } from '../../../db/runs.js';
import { insertEvents, listEvents } from '../../../db/events-store.js';
import { RuntimeError } from '../../domain/errors.js';
import { safeText } from '../../display/safe-text.js';
import { dbPath, openForQuery, openForWrite } from '../store.js';

export async function checkCommand(run: number | undefined, opts: { db?: string; mark?: boolean; json?: boolean }): Promise<void> {
  const db = openForQuery(opts.db);
  let found: StoreCheck;
  try {
    if (run !== undefined && !getRun(db, run)) throw new RuntimeError(`run ${run}: no such run in this store`);
    // problems are printed as they are found: a long check shows them at once
    found = checkStore(db, { runId: run, onProblem: opts.json ? undefined : (p) => process.stdout.write(`${safeText(p.message)}\n`) });
  } finally {
    db.close();
  }
  const marked = opts.mark ? markCorrupt(opts.db, found) : 0;
  if (opts.json) {
    process.stdout.write(JSON.stringify({ store: dbPath(opts.db), run: run ?? null, ...found, events_stored: marked }, null, 2) + '\n');
  } else {
    process.stdout.write(summary(found, run, marked));
  }
  if (found.problems.length > 0) process.exitCode = 1;
}

function summary(c: StoreCheck, run: number | undefined, marked: number): string {
  const what = run === undefined ? `${c.runs} run${c.runs === 1 ? '' : 's'}` : `run ${run}`;
  const chunks = `${c.chunks} chunk${c.chunks === 1 ? '' : 's'} (${c.chunks_verified} verified, ${c.chunks_unverified} unverified: written before checksums, ${c.chunks_corrupt} corrupt)`;
  const verdict = c.problems.length === 0 ? 'no problems' : `${c.problems.length} problem${c.problems.length === 1 ? '' : 's'}`;
  const mark = marked ? `; stored ${marked} corrupt-chunk event${marked === 1 ? '' : 's'}` : '';
  return `checked ${what}: SQLite integrity ${c.integrity_ok ? 'ok' : 'NOT ok'}; ${chunks}; ${c.samples_checked} samples intact; ${verdict}${mark}\n`;
}

/**
 * Store one corrupt-chunk event per bad chunk not already marked, so `events`, `show`
 * and the report carry the fault. Only when SQLite found the file itself sound:
 * writing into a damaged file can damage it further.
 */
function markCorrupt(opt: string | undefined, c: StoreCheck): number {
  const bad = c.problems.filter((p): p is StoreProblem & { run: number; channel: string; seq: number } =>
    (p.kind === 'checksum' || p.kind === 'undecodable') && p.run !== null && p.channel !== null && p.seq !== null);
  if (bad.length === 0) return 0;
  if (!c.integrity_ok) {
    process.stderr.write('fibrewatch: --mark: nothing stored, SQLite found the file itself damaged (copy what can be read out with `export` first)\n');
    return 0;
  }
  const db = openForWrite(opt);
  let stored = 0;
  try {
    const byRun = new Map<number, typeof bad>();
    for (const p of bad) (byRun.get(p.run) ?? byRun.set(p.run, []).get(p.run)!).push(p);
    for (const [runId, ps] of byRun) {
      const r = getRun(db, runId);
      if (!r) continue;
      const seen = new Set(listEvents(db, runId).filter((e) => e.kind === 'corrupt-chunk').map((e) => `${e.data?.channel}/${e.data?.seq}`));
      const rows = ps.filter((p) => !seen.has(`${p.channel}/${p.seq}`)).map((p) => {
        // a damaged row's own times may be garbage too
        const t_s = p.t0_s !== null && Number.isFinite(p.t0_s) && p.t0_s >= 0 && p.t0_s < 1e10 ? p.t0_s : 0;
        return {
          t_s, t_ms: r.started_at_ms + t_s * 1000, kind: 'corrupt-chunk', severity: 'alarm', message: p.message,
          value: p.samples, data: { unit: 'samples', channel: p.channel, seq: p.seq, t1_s: p.t1_s, problem: p.kind },
        };
      });
      insertEvents(db, runId, rows);
      stored += rows.length;
    }
  } finally {
    db.close();
  }
  return stored;
}
