/** Reading a store from a test while another process writes it. */
import Database from 'better-sqlite3';

/** Samples committed so far over all runs (a short read-only look, so the writer is not held up). */
export function samplesIn(db: string): number {
  const d = new Database(db, { readonly: true, fileMustExist: true });
  try {
    return (d.prepare('SELECT COALESCE(SUM(samples), 0) AS n FROM runs').get() as { n: number }).n;
  } finally {
    d.close();
  }
}
