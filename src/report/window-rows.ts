/** Window rows as `windows --json` gives them, for the dashboard's API and the report. */
import type { WindowResult } from '../domain/window-result.js';

/** The fit fields plus `t_mid` (ISO 8601 UTC), in docs/commands.md's order (the same rows as `windows --json`). */
export function windowRows(ws: WindowResult[], startedAt_ms: number): Record<string, unknown>[] {
  return ws.map((w) => ({ ...w, t_mid: new Date(startedAt_ms + w.t_mid_s * 1000).toISOString() }));
}
