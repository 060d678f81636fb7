/**
 * Connecting to the lab archive: a `postgres://` (or `postgresql://`) URL in
 * libpq's form, credentials from the URL, the PG* environment or the password
 * file, TLS as the URL's `sslmode` says (handed to node-postgres as it is).
 * A password is never printed: labels and messages show the URL without it,
 * and every fault becomes one line naming that label.
 */
import { userInfo } from 'node:os';
import pg from 'pg';
import { RuntimeError, UsageError } from '../../src/domain/errors.js';
import { lookupPgpass } from './pgpass.js';
import { archiveLabel } from './archive-url.js';

export { archiveLabel, isArchiveUrl } from './archive-url.js';

/** Where the URL (with the PG* environment for what it leaves out) points, for the password file. */
function targetOf(u: URL, env: NodeJS.ProcessEnv) {
  const q = (k: string) => u.searchParams.get(k) || undefined;
  const user = decodeURIComponent(u.username) || q('user') || env.PGUSER || userInfo().username;
  const host = q('host') || decodeURIComponent(u.hostname) || env.PGHOST || 'localhost';
  const port = Number(q('port') || u.port || env.PGPORT || 5432);
  const database = decodeURIComponent(u.pathname.slice(1)) || q('dbname') || env.PGDATABASE || user;
  return { host, port, database, user };
}

// bigint (int8) columns hold counts and UTC milliseconds: safe as JS numbers (below 2^53)
const INT8_OID = 20;
const types = {
  getTypeParser: ((oid: number, format?: 'text' | 'binary') =>
    oid === INT8_OID && format !== 'binary' ? (v: string) => Number(v) : pg.types.getTypeParser(oid, format as 'text')) as typeof pg.types.getTypeParser,
};

/** Options for connecting. */
export interface ConnectOptions {
  /** what the program calls itself to the server (pg_stat_activity) */
  applicationName?: string;
  /** told when the password file is there but ignored */
  onNote?: (message: string) => void;
  env?: NodeJS.ProcessEnv;
}

/**
 * node-postgres settings for the URL. The URL goes to node-postgres whole
 * (host, port, database, user, sslmode, sslrootcert …); a password missing
 * from it and from PGPASSWORD is looked up in the password file.
 */
export function clientConfig(url: string, opts: ConnectOptions = {}): pg.ClientConfig {
  const env = opts.env ?? process.env;
  let u: URL;
  try {
    u = new URL(url.trim());
  } catch {
    throw new UsageError(`${archiveLabel(url)}: not a postgres:// URL (postgres://USER@HOST:PORT/DATABASE?sslmode=…)`);
  }
  if (!/^postgres(ql)?:$/i.test(u.protocol)) throw new UsageError(`${archiveLabel(url)}: not a postgres:// URL`);
  // sslmode as PostgreSQL's manual defines it (what psql does with the same URL), not node-postgres's stricter reading
  if (u.searchParams.has('sslmode') && !u.searchParams.has('uselibpqcompat')) u.searchParams.set('uselibpqcompat', 'true');
  if (!u.password && !u.searchParams.get('password') && !env.PGPASSWORD) {
    const pw = lookupPgpass(targetOf(u, env), env, opts.onNote);
    // encoded by hand: the URL setter would leave a '%' in the password alone, which the parser then decodes
    if (pw !== undefined) u.password = encodeURIComponent(pw);
  }
  return {
    connectionString: u.toString(),
    types,
    application_name: opts.applicationName ?? 'fibrewatch',
    connectionTimeoutMillis: 10_000,
    keepAlive: true,
  };
}

/** SQLSTATE classes and node error codes that mean the connection itself failed (a retry may succeed). */
const TRANSIENT_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EHOSTUNREACH', 'ENETUNREACH', 'EPIPE', 'ENOTFOUND', 'EAI_AGAIN', '57P01', '57P02', '57P03', '53300', '40001', '40P01']);

/** A fault of the archive, as one line naming it; `transient` when trying again later may succeed. */
export class ArchiveError extends RuntimeError {
  constructor(message: string, readonly transient: boolean, readonly code?: string) {
    super(message);
    this.name = 'ArchiveError';
  }
}

/** Our own errors pass through; anything from node-postgres or the network becomes an ArchiveError naming `label`. */
export function explainArchiveError(e: unknown, label: string): Error {
  if (e instanceof ArchiveError || e instanceof UsageError) return e;
  if (e instanceof RuntimeError) return e;
  const code = String((e as { code?: unknown })?.code ?? '');
  const msg = (e as Error)?.message ?? String(e);
  const say = (what: string, transient: boolean) => new ArchiveError(`archive ${label}: ${what}`, transient, code || undefined);
  if (code === 'ECONNREFUSED') return say('connection refused (is the PostgreSQL server running and listening there?)', true);
  if (code === 'ENOTFOUND' || code === 'EAI_AGAIN') return say(`host not found (${msg})`, true);
  if (code === 'ETIMEDOUT' || /timeout/i.test(msg)) return say(`no answer from the server (${msg})`, true);
  if (code === '28P01') return say(`password authentication failed (${msg}); give the password in the URL, PGPASSWORD or ~/.pgpass`, false);
  if (/client password must be a string|password authentication/i.test(msg)) return say('the server wants a password and none was given: put it in the URL, PGPASSWORD or ~/.pgpass (chmod 600)', false);
  if (code === '28000') return say(`not allowed in (${msg}): see pg_hba.conf on the server`, false);
  if (code === '3D000') return say(`${msg}: create it first (docs/archive.md)`, false);
  if (code === '42501') return say(`permission denied (${msg}): see the roles and grants in docs/archive.md`, false);
  if (code === '57P01' || code === '57P02' || code === '57P03') return say(`the server is shutting down or starting (${msg})`, true);
  if (code === '53300') return say(`too many connections (${msg})`, true);
  if (/terminated|ECONNRESET|socket|Connection ended|not queryable|EPIPE/i.test(msg) || TRANSIENT_CODES.has(code)) {
    return say(`connection lost (${msg})`, true);
  }
  if (/^[0-9A-Z]{5}$/.test(code)) return say(`server error ${code}: ${msg}`, false);
  if (/self[- ]signed|certificate|SSL|TLS/i.test(msg)) return say(`TLS: ${msg} (check sslmode and sslrootcert in the URL)`, false);
  return say(msg, false);
}

/** A connected client for the archive; faults while idle are kept for the next call instead of crashing the process. */
export async function connectArchive(url: string, opts: ConnectOptions = {}): Promise<pg.Client> {
  const label = archiveLabel(url);
  const client = new pg.Client(clientConfig(url, opts));
  // a dropped connection while idle surfaces as 'error' on the client: the next query fails and says so
  client.on('error', () => {});
  try {
    await client.connect();
  } catch (e) {
    client.end().catch(() => {});
    throw explainArchiveError(e, label);
  }
  return client;
}
