/**
 * Telling an archive URL from a file path, and showing it without its
 * password. Apart from db/pg/connect.ts so that commands on a station's file
 * never load the PostgreSQL client.
 */

/** Does this --db / --to value name the archive rather than a file? */
export function isArchiveUrl(s: string): boolean {
  return /^postgres(ql)?:\/\//i.test(s.trim());
}

/** Query parameters that carry a secret. */
const SECRET_PARAMS = ['password', 'sslpassword'];

/** The URL for messages: its password (in the userinfo or a query parameter) removed. */
export function archiveLabel(url: string): string {
  let u: URL;
  try {
    u = new URL(url.trim());
  } catch {
    // not parseable: show only the scheme and host part before any '@'
    const at = url.lastIndexOf('@');
    const shown = at >= 0 ? `${url.slice(0, url.indexOf('//') + 2)}…${url.slice(at)}` : url;
    return shown.replace(/((?:ssl)?password=)[^&]*/gi, '$1***');
  }
  u.password = '';
  for (const p of SECRET_PARAMS) if (u.searchParams.has(p)) u.searchParams.set(p, '***');
  return u.toString().replace(/\?$/, '');
}
