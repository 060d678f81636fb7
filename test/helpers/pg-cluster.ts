/**
 * A throwaway PostgreSQL cluster for the archive tests and benchmarks: the
 * real server from Debian's `postgresql` package, initdb'd in a temp dir,
 * listening on a free port on 127.0.0.1, removed afterwards.
 *
 * initdb refuses to run as root, so as root every server command runs as the
 * `postgres` user (runuser), in a folder that user owns. Connections over TCP
 * need a password (scram-sha-256); the helper itself talks to the server over
 * its Unix socket with `trust`.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { chmodSync, chownSync, existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';

/** Password of the cluster's superuser `postgres` (a throwaway cluster on loopback). */
export const SUPERUSER_PASSWORD = 'cluster-super-secret';

export interface PgCluster {
  /** 127.0.0.1 */
  readonly host: string;
  readonly port: number;
  /** the folder holding the data dir, socket and log */
  readonly dir: string;
  /** a postgres:// URL for `database` as `user` (default: the superuser with its password) */
  url(database: string, user?: string, password?: string): string;
  /** run SQL as the superuser over the socket (database default `postgres`) */
  sql<T extends pg.QueryResultRow = pg.QueryResultRow>(text: string, values?: unknown[], database?: string): Promise<T[]>;
  /** run a script of statements one by one, as psql does (comments and blank lines allowed), as the superuser */
  script(text: string, database?: string): Promise<void>;
  /** stop the server (the cluster stays): a connection cut for everyone connected */
  stopServer(mode?: 'fast' | 'immediate'): void;
  /** start it again on the same port */
  startServer(): void;
  /** the server's log so far */
  log(): string;
  /** with `tls`: the CA certificate that signed the server's (PEM), for sslrootcert */
  readonly caFile?: string;
  /** stop the server and remove everything */
  destroy(): void;
}

export interface PgClusterOptions {
  /** fsync in the server (default false: a test cluster; benchmarks keep the default of a real server) */
  fsync?: boolean;
  /** serve TLS too, with a server certificate for 127.0.0.1 signed by a throwaway CA (`caFile`); needs openssl */
  tls?: boolean;
}

/** The newest /usr/lib/postgresql/<version>/bin that has initdb; a clear error when PostgreSQL is not installed. */
export function postgresBinDir(): string {
  const root = '/usr/lib/postgresql';
  const versions = existsSync(root)
    ? readdirSync(root).filter((v) => existsSync(join(root, v, 'bin', 'initdb'))).sort((a, b) => Number(b) - Number(a))
    : [];
  if (!versions.length) {
    throw new Error('PostgreSQL is not installed (no /usr/lib/postgresql/*/bin/initdb): install it with `apt-get install postgresql` '
      + '— the archive tests need a real server and are never skipped (.ci/run installs it)');
  }
  return join(root, versions[0], 'bin');
}

/** A TCP port on 127.0.0.1 that was free a moment ago. */
async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

/** uid and gid of a system user. */
function idsOf(user: string): { uid: number; gid: number } {
  const uid = Number(execFileSync('id', ['-u', user], { encoding: 'utf8' }).trim());
  const gid = Number(execFileSync('id', ['-g', user], { encoding: 'utf8' }).trim());
  return { uid, gid };
}

/** A throwaway CA (ca.pem) and a server certificate for 127.0.0.1 signed by it (server.crt, server.key) in `dir`; returns the CA's path. */
export function makeCertificates(dir: string, name = 'ca'): string {
  const ssl = (args: string[]) => {
    const r = spawnSync('openssl', args, { cwd: dir, encoding: 'utf8' });
    if (r.status !== 0) throw new Error(`openssl ${args[0]} failed (is openssl installed?): ${r.stderr}`);
  };
  const ec = ['-newkey', 'ec', '-pkeyopt', 'ec_paramgen_curve:prime256v1', '-nodes'];
  ssl(['req', '-x509', ...ec, '-keyout', `${name}.key`, '-out', `${name}.pem`, '-days', '2', '-subj', `/CN=fibrewatch test ${name}`]);
  if (name !== 'ca') return join(dir, `${name}.pem`);
  writeFileSync(join(dir, 'san.ext'), 'subjectAltName=IP:127.0.0.1,DNS:localhost\n');
  ssl(['req', ...ec, '-keyout', 'server.key', '-out', 'server.csr', '-subj', '/CN=127.0.0.1']);
  ssl(['x509', '-req', '-in', 'server.csr', '-CA', 'ca.pem', '-CAkey', 'ca.key', '-CAcreateserial', '-out', 'server.crt', '-days', '2', '-extfile', 'san.ext']);
  chmodSync(join(dir, 'server.key'), 0o600);
  return join(dir, 'ca.pem');
}

/** Start a fresh cluster; call destroy() when done. */
export async function startPgCluster(opts: PgClusterOptions = {}): Promise<PgCluster> {
  const bin = postgresBinDir();
  const asRoot = process.getuid?.() === 0;
  const dir = mkdtempSync(join(tmpdir(), 'fw-pg-'));
  const data = join(dir, 'data');
  const logFile = join(dir, 'server.log');
  const owner = asRoot ? idsOf('postgres') : undefined;
  if (owner) chownSync(dir, owner.uid, owner.gid);
  const pwfile = join(dir, 'pw');
  writeFileSync(pwfile, SUPERUSER_PASSWORD + '\n', { mode: 0o600 });
  if (owner) chownSync(pwfile, owner.uid, owner.gid);

  // as root, run the server's programs as `postgres`; otherwise as ourselves
  const run = (prog: string, args: string[]): void => {
    const [cmd, argv] = asRoot ? ['runuser', ['-u', 'postgres', '--', join(bin, prog), ...args]] : [join(bin, prog), args];
    const r = spawnSync(cmd, argv, { encoding: 'utf8', timeout: 60_000 });
    if (r.status !== 0) {
      const log = existsSync(logFile) ? spawnSync('tail', ['-n', '30', logFile], { encoding: 'utf8' }).stdout : '';
      throw new Error(`${prog} ${args.join(' ')} failed (${r.status ?? r.signal}): ${r.stderr}${r.stdout}${log}`);
    }
  };

  run('initdb', ['-D', data, '-U', 'postgres', `--pwfile=${pwfile}`, '--auth-local=trust', '--auth-host=scram-sha-256', '-E', 'UTF8', '--locale=C.UTF-8', '--no-sync']);
  rmSync(pwfile);
  const port = await freePort();
  let serverOpts = `-p ${port} -k ${dir} -c listen_addresses=127.0.0.1 -c fsync=${opts.fsync ? 'on' : 'off'} -c max_connections=50`;
  let caFile: string | undefined;
  if (opts.tls) {
    caFile = makeCertificates(dir);
    const key = join(dir, 'server.key');
    if (owner) for (const f of ['server.crt', 'server.key']) chownSync(join(dir, f), owner.uid, owner.gid);
    serverOpts += ` -c ssl=on -c ssl_cert_file=${join(dir, 'server.crt')} -c ssl_key_file=${key}`;
  }
  const start = () => run('pg_ctl', ['-D', data, '-l', logFile, '-w', '-t', '60', '-o', serverOpts, 'start']);
  start();

  const cluster: PgCluster = {
    host: '127.0.0.1',
    port,
    dir,
    caFile,
    url: (database, user = 'postgres', password = user === 'postgres' ? SUPERUSER_PASSWORD : undefined) =>
      `postgres://${encodeURIComponent(user)}${password === undefined ? '' : `:${encodeURIComponent(password)}`}@127.0.0.1:${port}/${encodeURIComponent(database)}`,
    async sql(text, values, database = 'postgres') {
      const c = new pg.Client({ host: dir, port, user: 'postgres', database });
      await c.connect();
      try {
        return (await c.query(text, values)).rows;
      } finally {
        await c.end();
      }
    },
    async script(text, database = 'postgres') {
      const statements = text.replace(/--.*$/gm, '').split(/;\s*$/m).map((x) => x.trim()).filter(Boolean);
      const c = new pg.Client({ host: dir, port, user: 'postgres', database });
      await c.connect();
      try {
        for (const st of statements) await c.query(st);
      } finally {
        await c.end();
      }
    },
    stopServer: (mode = 'fast') => run('pg_ctl', ['-D', data, '-w', '-m', mode, 'stop']),
    startServer: start,
    log: () => (existsSync(logFile) ? spawnSync('cat', [logFile], { encoding: 'utf8' }).stdout : ''),
    destroy() {
      spawnSync(asRoot ? 'runuser' : join(bin, 'pg_ctl'), asRoot ? ['-u', 'postgres', '--', join(bin, 'pg_ctl'), '-D', data, '-w', '-m', 'immediate', 'stop'] : ['-D', data, '-w', '-m', 'immediate', 'stop'], { timeout: 30_000 });
      rmSync(dir, { recursive: true, force: true });
    },
  };
  return cluster;
}
