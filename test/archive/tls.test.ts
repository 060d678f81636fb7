/**
 * TLS to the archive: the URL's `sslmode` and `sslrootcert` reach the
 * PostgreSQL client with the meaning the PostgreSQL manual gives them
 * ("SSL Mode Descriptions"), against a real server serving TLS with a
 * certificate for 127.0.0.1 from a throwaway CA: `require` encrypts,
 * `verify-full` with the right CA connects, with another CA it is refused,
 * `disable` does not encrypt. The server itself says whether the session is
 * encrypted (pg_stat_ssl).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { connectArchive } from '../../db/pg/connect.js';
import { makeCertificates, startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';
import { runCli } from '../helpers/cli.js';

let cluster: PgCluster;
let other: string;
const dirs: string[] = [];

beforeAll(async () => {
  cluster = await startPgCluster({ tls: true });
  await cluster.sql('CREATE DATABASE secure');
  const d = mkdtempSync(join(tmpdir(), 'fw-other-ca-'));
  dirs.push(d);
  other = makeCertificates(d, 'other');
}, 60_000);

afterAll(() => {
  cluster?.destroy();
  for (const d of dirs) rmSync(d, { recursive: true, force: true });
});

/** Is this connection encrypted, as the server sees it? */
async function encrypted(url: string): Promise<boolean> {
  const c = await connectArchive(url);
  try {
    return (await c.query<{ ssl: boolean }>('SELECT ssl FROM pg_stat_ssl WHERE pid = pg_backend_pid()')).rows[0].ssl;
  } finally {
    await c.end();
  }
}

describe('TLS to the archive', () => {
  it('sslmode and sslrootcert mean what the PostgreSQL manual says', async () => {
    const base = cluster.url('secure');
    const ca = encodeURIComponent(cluster.caFile!);
    expect(await encrypted(`${base}?sslmode=require`)).toBe(true);
    expect(await encrypted(`${base}?sslmode=verify-full&sslrootcert=${ca}`)).toBe(true);
    expect(await encrypted(`${base}?sslmode=disable`)).toBe(false);
    await expect(connectArchive(`${base}?sslmode=verify-full&sslrootcert=${encodeURIComponent(other)}`)).rejects.toThrow(/TLS: .*certificate|self[- ]signed/i);

    // the commands: the archive made and read over a verified connection; a wrong CA is one line, exit 1, no password
    const good = `${base}?sslmode=verify-full&sslrootcert=${ca}`;
    expect(runCli(['sync', '--init', '--to', good]).status).toBe(0);
    const runs = runCli(['runs', '--db', good, '--json']);
    expect(runs.status, runs.stderr).toBe(0);
    expect(JSON.parse(runs.stdout)).toEqual([]);
    const bad = runCli(['runs', '--db', `${base}?sslmode=verify-full&sslrootcert=${encodeURIComponent(other)}`]);
    expect(bad.status).toBe(1);
    expect(bad.stderr).toMatch(/^fibrewatch: archive postgres:\/\/postgres@127\.0\.0\.1:\d+\/secure\?sslmode=verify-full.*: TLS: /m);
    expect(bad.stderr).not.toContain('cluster-super-secret');
    expect(bad.stderr).not.toMatch(/SECURITY WARNING|DeprecationWarning/);
  });
});
