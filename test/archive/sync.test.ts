/**
 * Two stations' stores pushed into one archive on a real PostgreSQL server
 * (a throwaway cluster, test/helpers/pg-cluster.ts), set up with the roles
 * and grants of docs/archive.md exactly as written there. The archive then
 * holds each store exactly (test/archive/exact.ts); every reading command
 * gives the same JSON from the archive as from the station's store, with the
 * archive's own run numbers (mapped by uid: `run` is the only field that
 * differs); a repeated sync adds nothing; the read-only role reads but cannot
 * push; no password is ever printed.
 *
 * Invented scenarios: bench-a records a tungsten fibre twice; a second PC
 * runs bench-b (an encoder balance, own fibre, one USB dropout) and bench-c,
 * to which the tungsten fibre has moved.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import Database from 'better-sqlite3';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { stationForScenario } from '../helpers/station-for-scenario.js';
import { runCli, runCliAsync } from '../helpers/cli.js';
import { startPgCluster, type PgCluster } from '../helpers/pg-cluster.js';
import { archiveCounts, expectArchiveHolds } from './exact.js';

const root = fileURLToPath(new URL('../../', import.meta.url));
const PASSWORDS: Record<string, string> = {
  'change-me-owner': 'owner-pw-Zq1', 'change-me-a': 'station-a-pw-Xk7', 'change-me-b': 'station-b-pw-Jw3', 'change-me-dashboard': 'dash-pw-Lm9',
};

let cluster: PgCluster;
let dir: string;
let A: string;
let B: string;
let url: { owner: string; a: string; b: string; reader: string };

/** The ```sql blocks of docs/archive.md, in order. */
function docSql(): string[] {
  const md = readFileSync(join(root, 'docs/archive.md'), 'utf8');
  return [...md.matchAll(/```sql\n([\s\S]*?)```/g)].map((m) => m[1]);
}
const withPasswords = (sql: string) => sql.replace(/'(change-me-[a-z]+)'/g, (_, k: string) => `'${PASSWORDS[k]}'`);

function ok(args: string[]): string {
  const r = runCli(args);
  expect(r.status, `fibrewatch ${args.join(' ')}: ${r.stderr}`).toBe(0);
  return r.stdout;
}
const json = (args: string[]) => JSON.parse(ok([...args, '--json']));

function station(scenarioFile: string, name: string, fibre?: string): string {
  const sc = parseScenario(JSON.parse(readFileSync(join(root, 'drivers/simulator/scenarios', scenarioFile), 'utf8')));
  const st = stationForScenario(sc, { name }) as unknown as { fibre: { name: string } };
  if (fibre) st.fibre.name = fibre;
  const p = join(dir, `${name}.json`);
  writeFileSync(p, JSON.stringify(st));
  return p;
}

beforeAll(async () => {
  cluster = await startPgCluster();
  dir = mkdtempSync(join(tmpdir(), 'fw-archive-'));
  const [onServer, onDatabase] = docSql();
  expect(onServer).toMatch(/CREATE DATABASE fibrewatch/);
  await cluster.script(withPasswords(onServer));
  await cluster.script(withPasswords(onDatabase), 'fibrewatch');
  url = {
    owner: cluster.url('fibrewatch', 'fibrewatch_owner', PASSWORDS['change-me-owner']),
    a: cluster.url('fibrewatch', 'station_bench_a', PASSWORDS['change-me-a']),
    b: cluster.url('fibrewatch', 'station_bench_b', PASSWORDS['change-me-b']),
    reader: cluster.url('fibrewatch', 'dashboard', PASSWORDS['change-me-dashboard']),
  };

  // the recordings: 2 h of the tungsten bench (lines), 10 min of the encoder balance (frames, one dropout)
  const tungsten = join(dir, 'tungsten.csv');
  const encoder = join(dir, 'encoder.bin');
  const scen = (f: string) => join(root, 'drivers/simulator/scenarios', f);
  const [s1, s2] = await Promise.all([
    runCliAsync(['simulate', '--scenario', scen('tungsten-bench.json'), '--device', tungsten, '--speed', '0', '--duration', '7200', '--seed', '3']),
    runCliAsync(['simulate', '--scenario', scen('encoder-fast.json'), '--device', encoder, '--speed', '0', '--seed', '4']),
  ]);
  expect(s1.status, s1.stderr).toBe(0);
  expect(s2.status, s2.stderr).toBe(0);
  A = join(dir, 'bench-a.db');
  B = join(dir, 'second-pc.db');
  const stA = station('tungsten-bench.json', 'bench-a', 'W50-lot3-11');
  const stB = station('encoder-fast.json', 'bench-b');
  const stC = station('tungsten-bench.json', 'bench-c', 'W50-lot3-11');
  const imports = await Promise.all([
    runCliAsync(['import', tungsten, '--station', stA, '--db', A, '--started-at', '2026-03-02T08:00:00Z']).then(async (r) =>
      r.status === 0 ? runCliAsync(['import', tungsten, '--station', stA, '--db', A, '--started-at', '2026-03-09T08:00:00Z']) : r),
    runCliAsync(['import', encoder, '--station', stB, '--db', B, '--started-at', '2026-03-05T10:00:00Z']).then(async (r) =>
      r.status === 0 ? runCliAsync(['import', tungsten, '--station', stC, '--db', B, '--started-at', '2026-04-01T08:00:00Z']) : r),
  ]);
  for (const r of imports) expect(r.status, r.stderr).toBe(0);
}, 180_000);

afterAll(() => {
  cluster?.destroy();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

describe('sync into the lab archive', () => {
  it('the owner creates the archive; stations push with their own roles; the archive holds each store exactly', async () => {
    // a station may not create the archive's tables: it is told who may
    const early = runCli(['sync', '--db', A, '--to', url.a]);
    expect(early.status).toBe(1);
    expect(early.stderr).toMatch(/holds no fibrewatch archive yet, and this role may not create tables: run `fibrewatch sync --init --to URL` once as the archive's owner/);
    const init = runCli(['sync', '--init', '--to', url.owner]);
    expect(init.status, init.stderr).toBe(0);
    expect(init.stderr).toMatch(/schema version 1, ready/);

    const a = json(['sync', '--db', A, '--to', url.a]);
    expect(a.synced.map((r: { run: number }) => r.run)).toEqual([1, 2]);
    expect(a.synced.every((r: { chunks: number; windows: number }) => r.chunks > 0 && r.windows > 0)).toBe(true);
    const b = json(['sync', '--db', B, '--to', url.b]);
    expect(b.synced.map((r: { run: number }) => r.run)).toEqual([1, 2]);
    expect(b.synced[0].events).toBeGreaterThan(0);

    const mapA = await expectArchiveHolds(A, url.owner);
    const mapB = await expectArchiveHolds(B, url.owner);
    // the archive numbers runs in the order they arrived
    expect([...mapA.values(), ...mapB.values()]).toEqual([1, 2, 3, 4]);
  });

  it('a repeated sync pushes nothing and changes nothing; nor does a sync from an older copy of a store', async () => {
    const before = await archiveCounts(url.owner);
    for (const [db, u] of [[A, url.a], [B, url.b]]) {
      const r = runCli(['sync', '--db', db, '--to', u, '--json']);
      expect(r.status, r.stderr).toBe(0);
      const out = JSON.parse(r.stdout);
      expect(out.synced).toEqual([]);
      expect(out.up_to_date).toBe(2);
      expect(r.stderr).toMatch(/nothing to push \(2 run\(s\): 2 already up to date\)/);
    }
    expect(await archiveCounts(url.owner)).toEqual(before);

    // an older copy of bench-a's store (its second run still recording, a chunk short) changes nothing either
    const old = join(dir, 'bench-a-older.db');
    copyFileSync(A, old);
    const d = new Database(old);
    const last = d.prepare('SELECT MAX(seq) AS s FROM sample_chunks WHERE run_id = 2').get() as { s: number };
    const k = (d.prepare('SELECT count FROM sample_chunks WHERE run_id = 2 AND seq = ? LIMIT 1').get(last.s) as { count: number }).count;
    d.prepare('DELETE FROM sample_chunks WHERE run_id = 2 AND seq = ?').run(last.s);
    d.prepare("UPDATE runs SET samples = samples - ?, status = 'recording', ended_at_ms = NULL WHERE id = 2").run(k);
    d.close();
    const r = runCli(['sync', '--db', old, '--to', url.a, '--json']);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).synced).toEqual([]);
    expect(r.stderr).toMatch(/note: run 2 \(uid [0-9a-f-]+\): the archive holds more of it than this store does/);
    expect(await archiveCounts(url.owner)).toEqual(before);
  });

  it('runs, show, windows, events, noise and export from the archive equal the station stores\', but for the archive\'s run numbers', () => {
    const archiveRuns = json(['runs', '--db', url.reader]) as { run: number; uid: string; station_run: number; station: string }[];
    expect(archiveRuns).toHaveLength(4);
    for (const db of [A, B]) {
      for (const s of json(['runs', '--db', db]) as { run: number; uid: string }[]) {
        const a = archiveRuns.find((x) => x.uid === s.uid)!;
        expect(a, `run ${s.run} of ${db}`).toBeDefined();
        expect({ ...a, run: s.run }).toEqual(s);
        // every command on one run of each store (bench-a's second, bench-b's with the dropout): the rest are alike
        if ((db === A && s.run !== 2) || (db === B && s.run !== 1)) continue;
        const n = String(a.run);
        const m = String(s.run);
        expect({ ...json(['show', n, '--db', url.reader]), run: s.run }).toEqual(json(['show', m, '--db', db]));
        for (const what of [['windows'], ['events']]) expect(json([...what, n, '--db', url.reader])).toEqual(json([...what, m, '--db', db]));
        for (const what of ['samples', 'windows', 'events']) {
          expect(ok(['export', n, '--what', what, '--format', 'csv', '--db', url.reader]), `export ${what}`)
            .toBe(ok(['export', m, '--what', what, '--format', 'csv', '--db', db]));
        }
        expect({ ...json(['noise', n, '--db', url.reader]), run: s.run }).toEqual(json(['noise', m, '--db', db]));
      }
    }
  });

  it('a fibre\'s runs span the stations it moved between; a station\'s own fibre has the same history as in its store', () => {
    const uidsOf = (rows: { uid: string }[]) => rows.map((r) => r.uid).sort();
    const all = [...json(['runs', '--db', A]), ...json(['runs', '--db', B])] as { uid: string; fibre: string; station: string; started_at: string }[];
    const moved = all.filter((r) => r.fibre === 'W50-lot3-11');
    expect(moved).toHaveLength(3);
    expect(uidsOf(json(['runs', '--fibre', 'W50-lot3-11', '--since', '2026-03-01', '--db', url.reader]))).toEqual(uidsOf(moved));
    expect(uidsOf(json(['runs', '--fibre', 'W50-lot3-11', '--since', '2026-03-05', '--until', '2026-04-01', '--db', url.reader])))
      .toEqual(uidsOf(moved.filter((r) => r.started_at.startsWith('2026-03-09'))));
    expect(uidsOf(json(['runs', '--station', 'bench-b', '--db', url.reader]))).toEqual(uidsOf(all.filter((r) => r.station === 'bench-b')));
    // the moved fibre's history in the archive: each row says which station run it is
    const history = json(['fibre', 'W50-lot3-11', '--db', url.reader]) as { uid: string; station: string; station_run: number }[];
    expect(uidsOf(history)).toEqual(uidsOf(moved));
    for (const h of history) expect(all.find((r) => r.uid === h.uid)?.station).toBe(h.station);
    expect(history.every((h) => Number.isInteger(h.station_run) && h.station_run >= 1)).toBe(true);

    // bench-b's fibre is bench-b's alone: its history and listing are the same as in the second PC's store
    const fibreB = json(['fibre', 'MW05-demo', '--db', B]) as { run: number }[];
    const fibreArchive = json(['fibre', 'MW05-demo', '--db', url.reader]) as { run: number }[];
    const byUid = new Map((json(['runs', '--db', url.reader]) as { run: number; uid: string }[]).map((r) => [r.uid, r.run]));
    const toArchive = new Map((json(['runs', '--db', B]) as { run: number; uid: string }[]).map((r) => [r.run, byUid.get(r.uid)]));
    expect(fibreArchive).toEqual(fibreB.map((r) => ({ ...r, run: toArchive.get(r.run) })));
    const listed = (db: string) => (json(['fibres', '--db', db]) as { name: string }[]).find((f) => f.name === 'MW05-demo');
    expect(listed(url.reader)).toEqual(listed(B));
    expect((json(['fibres', '--db', url.reader]) as { name: string; runs: number }[]).find((f) => f.name === 'W50-lot3-11')?.runs).toBe(3);
  });

  it('the read-only role reads but cannot push; no password is ever printed', () => {
    // with nothing new to push, the reader only reads: fine
    const r = runCli(['sync', '--db', A, '--to', url.reader]);
    expect(r.status, r.stderr).toBe(0);
    // a new run needs writing: refused, naming the archive and where the grants are explained
    const fresh = join(dir, 'fresh.db');
    ok(['import', join(dir, 'tungsten.csv'), '--station', join(dir, 'bench-a.json'), '--db', fresh, '--started-at', '2026-05-01T00:00:00Z']);
    const denied = runCli(['sync', '--db', fresh, '--to', url.reader]);
    expect(denied.status).toBe(1);
    expect(denied.stderr).toMatch(/^fibrewatch: archive postgres:\/\/dashboard@127\.0\.0\.1:\d+\/fibrewatch: permission denied .*docs\/archive\.md/m);
    const wrong = runCli(['runs', '--db', cluster.url('fibrewatch', 'dashboard', 'not-the-password')]);
    expect(wrong.status).toBe(1);
    expect(wrong.stderr).toMatch(/password authentication failed/);
    const nodb = runCli(['runs', '--db', cluster.url('no_such_db', 'dashboard', PASSWORDS['change-me-dashboard'])]);
    expect(nodb.status).toBe(1);
    expect(nodb.stderr).toMatch(/does not exist/);
    // commands that write or check a station's file refuse the archive, showing no password
    const writers = [
      runCli(['check', '--db', url.a]),
      runCli(['import', join(dir, 'tungsten.csv'), '--station', join(dir, 'bench-a.json'), '--db', url.a]),
    ];
    for (const w of writers) {
      expect(w.status).toBe(2);
      expect(w.stderr).toMatch(/works on a station's SQLite store, not on the lab archive/);
    }
    for (const out of [r, denied, wrong, nodb, ...writers]) {
      for (const pw of [...Object.values(PASSWORDS), 'not-the-password']) {
        expect(out.stderr + out.stdout).not.toContain(pw);
      }
    }
  });
});
