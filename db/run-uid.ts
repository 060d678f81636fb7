/**
 * A run's `uid`: the name a station gives a run when it begins, unique across
 * stations, so that the lab archive (docs/archive.md) can tell which station
 * run each of its runs is whatever the archive numbers it.
 */
import { createHash, randomUUID } from 'node:crypto';

/** A fresh uid for a new run: a random (version 4) UUID. */
export function newRunUid(): string {
  return randomUUID();
}

/** Our own namespace for name-based uids (a random UUID drawn once for fibrewatch). */
const NAMESPACE = Buffer.from('4c1f6a0e9b2d4e57a8c3d5f60b7e1a92', 'hex');

/**
 * The uid of a run stored before runs had one: a name-based (version 5, SHA-1)
 * UUID of what identifies the run in its store, so that upgrading the same
 * store twice — in place, or in a read-only copy in memory — gives the same
 * uid every time (RFC 4122, section 4.3).
 */
export function legacyRunUid(r: { id: number; station: string; started_at_ms: number; source: string; source_path: string | null }): string {
  const name = `fibrewatch-run\u0000${r.station}\u0000${r.id}\u0000${r.started_at_ms}\u0000${r.source}\u0000${r.source_path ?? ''}`;
  const h = createHash('sha1').update(NAMESPACE).update(name, 'utf8').digest();
  h[6] = (h[6] & 0x0f) | 0x50;
  h[8] = (h[8] & 0x3f) | 0x80;
  const x = h.subarray(0, 16).toString('hex');
  return `${x.slice(0, 8)}-${x.slice(8, 12)}-${x.slice(12, 16)}-${x.slice(16, 20)}-${x.slice(20)}`;
}
