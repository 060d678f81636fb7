/// <reference lib="dom" />
/** Reading the dashboard's JSON API from the page (same origin; the token, if any, rides in the cookie). */

/** A failed API request: the server's own message (`{ "error": … }`) with the status. */
export class ApiError extends Error {
  constructor(readonly status: number, message: string) {
    super(message);
  }
}

/** GET a path of this server as JSON. */
export async function getJson<T>(path: string): Promise<T> {
  const r = await fetch(path, { credentials: 'same-origin', headers: { accept: 'application/json' } });
  const text = await r.text();
  if (!r.ok) {
    let msg = text;
    try {
      msg = (JSON.parse(text) as { error?: string }).error ?? text;
    } catch {
      // not JSON: the text as it came
    }
    throw new ApiError(r.status, `${r.status}: ${msg}`);
  }
  return JSON.parse(text) as T;
}

/** A query string from the given parameters (empty ones left out). */
export function query(params: Record<string, string | number | undefined>): string {
  const q = new URLSearchParams();
  for (const [k, v] of Object.entries(params)) if (v !== undefined && v !== '') q.set(k, String(v));
  const s = q.toString();
  return s ? `?${s}` : '';
}
