/** Telling a full disk from other failures of the store. */

/** True for SQLite's "database or disk is full" (SQLITE_FULL) and the OS's ENOSPC / EDQUOT. */
export function isStoreFull(e: unknown): boolean {
  const code = (e as { code?: unknown } | null)?.code;
  if (code === 'SQLITE_FULL' || code === 'ENOSPC' || code === 'EDQUOT') return true;
  return /database or disk is full|no space left on device/i.test(String((e as Error | null)?.message ?? ''));
}
