/**
 * The password file PostgreSQL's own clients read (~/.pgpass, or the file
 * named by PGPASSFILE): lines `hostname:port:database:username:password`,
 * `*` matching anything in the first four fields, `\:` and `\\` escaping, the
 * first matching line winning, and the file ignored unless only its owner may
 * read it — as the PostgreSQL manual describes it ("The Password File").
 * node-postgres reads it too but warns that it will stop; this is ours.
 */
import { readFileSync, statSync } from 'node:fs';
import { homedir } from 'node:os';
import { join } from 'node:path';

/** Where a connection goes, for matching against the file. */
export interface PgpassTarget {
  host: string;
  port: number;
  database: string;
  user: string;
}

/** Split one line at unescaped colons, unescaping `\:` and `\\`. */
function fields(line: string): string[] {
  const out: string[] = [];
  let cur = '';
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (c === '\\' && i + 1 < line.length) cur += line[++i];
    else if (c === ':') {
      out.push(cur);
      cur = '';
    } else cur += c;
  }
  out.push(cur);
  return out;
}

/** The password for `t` from the file's text, or undefined. A socket path as host matches `localhost`. */
export function findPgpass(text: string, t: PgpassTarget): string | undefined {
  const host = t.host.startsWith('/') ? 'localhost' : t.host;
  const want = [host, String(t.port), t.database, t.user];
  for (const raw of text.split(/\r?\n/)) {
    if (!raw.trim() || raw.startsWith('#')) continue;
    const f = fields(raw);
    if (f.length < 5) continue;
    if (want.every((w, i) => f[i] === '*' || f[i] === w)) return f.slice(4).join(':');
  }
  return undefined;
}

/** The password file in force: $PGPASSFILE, else ~/.pgpass. */
export function pgpassPath(env: NodeJS.ProcessEnv = process.env): string {
  return env.PGPASSFILE || join(env.HOME || homedir(), '.pgpass');
}

/**
 * Look `t` up in the password file; undefined when there is no file, no
 * matching line, or the file may be read by others than its owner (as libpq,
 * which then ignores it with a warning: `onNote` gets that warning).
 */
export function lookupPgpass(t: PgpassTarget, env: NodeJS.ProcessEnv = process.env, onNote?: (m: string) => void): string | undefined {
  const path = pgpassPath(env);
  let text: string;
  try {
    const st = statSync(path);
    if (!st.isFile()) return undefined;
    if ((st.mode & 0o077) !== 0) {
      onNote?.(`${path} is readable by group or others: ignored (chmod 600 ${path})`);
      return undefined;
    }
    text = readFileSync(path, 'utf8');
  } catch {
    return undefined;
  }
  return findPgpass(text, t);
}
