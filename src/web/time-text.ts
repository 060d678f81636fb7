/// <reference lib="dom" />
/** Times for people on the dashboard: ISO 8601 UTC to the second, with the browser's local time beside where it helps. */

const pad = (n: number, w = 2) => String(n).padStart(w, '0');

/** `2026-03-01 10:00:00 UTC` for a time in ms since the epoch. */
export function utcText(ms: number): string {
  if (!Number.isFinite(ms)) return '—';
  return new Date(ms).toISOString().replace('T', ' ').replace(/\.\d+Z$/, ' UTC');
}

/** The browser's local clock time, `11:00:00` (with the date when it differs from the UTC date). */
export function localText(ms: number): string {
  if (!Number.isFinite(ms)) return '';
  const d = new Date(ms);
  const day = `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}`;
  const time = `${pad(d.getHours())}:${pad(d.getMinutes())}:${pad(d.getSeconds())}`;
  return day === new Date(ms).toISOString().slice(0, 10) ? `${time} local` : `${day} ${time} local`;
}

/** UTC with local time in brackets: `2026-03-01 10:00:00 UTC (11:00:00 local)`; '—' for none. */
export function whenText(iso: string | null | undefined, missing = '—'): string {
  if (!iso) return missing;
  const ms = Date.parse(iso);
  return `${utcText(ms)} (${localText(ms)})`;
}
