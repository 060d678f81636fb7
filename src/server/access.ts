/**
 * Who may read the dashboard. Bound to the loopback interface it answers only
 * requests addressed to a loopback name (a web page elsewhere cannot rebind a
 * name of its own to 127.0.0.1 and read the store through the visitor's
 * browser). Any other binding needs a token: every request then carries
 * `Authorization: Bearer T`, or the cookie a page got by opening a link with
 * `?token=T` once. Tokens are compared in constant time.
 */
import { createHash, timingSafeEqual } from 'node:crypto';
import { isIP } from 'node:net';

/** Name of the cookie that keeps the token for a browser. */
const TOKEN_COOKIE = 'fibrewatch_token';
/** Shortest token accepted: 16 characters (`openssl rand -hex 16` gives 32). */
export const MIN_TOKEN_LENGTH = 16;

/** True for an address or name that stays on this machine (127.0.0.0/8, ::1, localhost). */
export function isLoopback(host: string): boolean {
  const h = host.replace(/^\[|\]$/g, '').toLowerCase();
  if (h === 'localhost' || h.endsWith('.localhost')) return true;
  if (isIP(h) === 4) return h.startsWith('127.');
  if (isIP(h) === 6) return h === '::1' || /^::ffff:127\./.test(h);
  return false;
}

/** The host part of a Host header (`127.0.0.1:8177`, `[::1]:8177`, `localhost`). */
export function hostName(header: string | undefined): string {
  if (!header) return '';
  const h = header.trim();
  if (h.startsWith('[')) return h.slice(0, h.indexOf(']') + 1);
  const i = h.lastIndexOf(':');
  return i >= 0 && h.indexOf(':') === i ? h.slice(0, i) : h;
}

const digest = (s: string): Buffer => createHash('sha256').update(s, 'utf8').digest();

/** A token check that takes the same time whatever the guess (digests of equal length, compared with timingSafeEqual). */
export function tokenMatcher(token: string): (given: string | undefined) => boolean {
  const want = digest(token);
  return (given) => given !== undefined && timingSafeEqual(digest(given), want);
}

/** The token a request carries: the bearer header, else the cookie, else `?token=`. */
export function tokenOf(headers: { authorization?: string; cookie?: string }, query: unknown): { token?: string; from?: 'header' | 'cookie' | 'query' } {
  const auth = headers.authorization;
  if (auth && /^bearer\s+/i.test(auth)) return { token: auth.replace(/^bearer\s+/i, '').trim(), from: 'header' };
  const c = cookieValue(headers.cookie, TOKEN_COOKIE);
  if (c !== undefined) return { token: c, from: 'cookie' };
  const q = (query as Record<string, unknown> | null)?.token;
  if (typeof q === 'string') return { token: q, from: 'query' };
  return {};
}

/** One cookie's value from a Cookie header (undefined when absent or not decodable). */
function cookieValue(header: string | undefined, name: string): string | undefined {
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const i = part.indexOf('=');
    if (i < 0 || part.slice(0, i).trim() !== name) continue;
    try {
      return decodeURIComponent(part.slice(i + 1).trim());
    } catch {
      return undefined;
    }
  }
  return undefined;
}

/** The Set-Cookie value that keeps the token for this browser session (not readable by scripts, not sent by other sites). */
export function tokenCookie(token: string): string {
  return `${TOKEN_COOKIE}=${encodeURIComponent(token)}; Path=/; HttpOnly; SameSite=Strict`;
}
