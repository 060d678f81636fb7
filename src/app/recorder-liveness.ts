/**
 * Is the recorder of a run still 'recording' alive? A run left open by a
 * crash must be closed as interrupted; one whose recorder is still writing
 * must not be touched (docs/commands.md, `record`).
 */
import { hostname } from 'node:os';
import type { OpenRun, RecorderInfo } from '../../db/runs.js';

/** A heartbeat older than this (UTC ms) is stale: the recorder beats about once a second. */
export const HEARTBEAT_STALE_MS = 15_000;

/** This process, as the recorder of a run. */
export function thisRecorder(): RecorderInfo {
  return { pid: process.pid, host: hostname() };
}

/** Does a process with this pid exist on this host? */
export function pidAlive(pid: number): boolean {
  try {
    process.kill(pid, 0); // signal 0: existence check only
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM'; // there, but someone else's
  }
}

/**
 * True when the run's recorder is alive: a fresh heartbeat and, on this host,
 * a live pid (a pid alone may have been reused since a crash; a heartbeat
 * alone may come from a process that just died). On another host the pid
 * cannot be checked, so a fresh heartbeat is taken as alive.
 */
export function recorderAlive(r: OpenRun, now_ms: number, host = hostname()): boolean {
  if (r.pid === null || r.heartbeat_ms === null) return false;
  if (!(now_ms - r.heartbeat_ms < HEARTBEAT_STALE_MS)) return false;
  if (r.host !== host) return true;
  return pidAlive(r.pid);
}
