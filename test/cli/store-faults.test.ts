/**
 * Faults told plainly by the built CLI (child processes, real files): a bad
 * station file and every store fault give one line on stderr, `fibrewatch:
 * <file>: <what>`, no stack, and the exit status of docs/commands.md (1 for a
 * fault of the machine or the store, 2 for bad usage or input).
 *
 * Read-only stores are tested the way users meet them. A file and folder
 * without write permission: the commands run as the unprivileged user
 * `nobody` (uid 65534) when the tests run as root, which ignores file modes,
 * and as the test's own user otherwise. A read-only file system: a read-only
 * bind mount in a private mount namespace (`unshare -m`), and a full disk: a
 * 512 KiB tmpfs there; both are skipped, saying so, where the machine does not
 * allow mount namespaces.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { chmodSync, copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { BIN, runCli, type CliResult } from '../helpers/cli.js';
import { openStore } from '../../db/open.js';
import { migrate, SCHEMA_VERSION } from '../../db/migrations.js';
import { overwrite } from '../db/chunk-store-fixture.js';

let dir: string;
let store: string;
let station: string;
let recording: string;

/** A failure as docs/commands.md promises it: the status, and exactly one line on stderr matching `line`. */
function expectOneLine(r: CliResult, status: number, line: RegExp | string): void {
  expect(r.status, r.stderr).toBe(status);
  const lines = r.stderr.split('\n').filter((l) => l.length > 0 && !l.startsWith('warning: no --started-at'));
  expect(lines, r.stderr).toHaveLength(1);
  expect(lines[0].startsWith('fibrewatch: ')).toBe(true);
  if (typeof line === 'string') expect(lines[0]).toBe(line);
  else expect(lines[0]).toMatch(line);
  expect(r.stderr).not.toMatch(/\n\s+at /); // no stack
}

const esc = (s: string) => s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

function writeJson(name: string, v: unknown): string {
  const p = join(dir, name);
  writeFileSync(p, JSON.stringify(v));
  return p;
}

/** A recording of `n` lines t_s,angle_rad at 10 Hz (a 20 s swing of 1e-3 rad). */
function lines(n: number): string {
  let s = '';
  for (let i = 0; i < n; i++) s += `${(i / 10).toFixed(1)},${(1e-3 * Math.cos((2 * Math.PI * i) / 200)).toPrecision(9)}\n`;
  return s;
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-cli-faults-'));
  chmodSync(dir, 0o755); // another user (the read-only tests) must be able to look in
  station = writeJson('bench.json', { station: 'bench-f', fibre: { name: 'W25-f' }, input: { columns: ['t_s', 'angle_rad'] } });
  recording = join(dir, 'rec.txt');
  writeFileSync(recording, lines(3000));
  store = join(dir, 'ok.db');
  const r = runCli(['import', recording, '--station', station, '--db', store, '--started-at', '2026-03-01T00:00:00Z']);
  expect(r.status, r.stderr).toBe(0);
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('a station file that cannot work is bad input (exit 2, naming the field)', () => {
  it('two time columns, for import and for fit --columns', () => {
    const st = writeJson('two-times.json', { station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 't_ms', 'angle_rad'] } });
    const db = join(dir, 'two-times.db');
    expectOneLine(runCli(['import', recording, '--station', st, '--db', db]), 2, `fibrewatch: ${st}: input.columns: more than one time column ("t_s", "t_ms"): give one`);
    expect(existsSync(db)).toBe(false); // refused before any store was touched
    expectOneLine(runCli(['fit', recording, '--columns', 't_s,t_us,angle_rad']), 2, 'fibrewatch: --columns: input.columns: more than one time column ("t_s", "t_us"): give one');
  });

  it('a time role as a frames channel', () => {
    const st = writeJson('frames-time.json', { station: 's', fibre: { name: 'f' }, input: { format: 'frames', channels: [{ role: 't_us' }, { role: 'angle_rad', scale: 1e-9 }] } });
    expectOneLine(runCli(['fit', recording, '--station', st]), 2, `fibrewatch: ${st}: input.channels: "t_us": frames carry their time in the frame header, not in a channel`);
  });

  it('a disc or ring whose inner radius exceeds its outer one; an inner radius alone', () => {
    for (const shape of ['disc', 'ring']) {
      const st = writeJson(`${shape}.json`, { station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad'] }, pendulum: { parts: [{ shape: 'rod', mass_kg: 0.01, length_m: 0.1 }, { shape, mass_kg: 0.1, inner_radius_m: 0.05, outer_radius_m: 0.02 }] } });
      const msg = `fibrewatch: ${st}: pendulum.parts[1].inner_radius_m: must be ≤ outer_radius_m (0.05 m > 0.02 m)`;
      expectOneLine(runCli(['import', recording, '--station', st, '--db', join(dir, `${shape}.db`)]), 2, msg);
      expectOneLine(runCli(['fit', recording, '--station', st]), 2, msg);
    }
    const st = writeJson('inner-only.json', { station: 's', fibre: { name: 'f' }, input: { columns: ['t_s', 'angle_rad'] }, pendulum: { parts: [{ shape: 'disc', mass_kg: 0.1, radius_m: 0.03, inner_radius_m: 0.01 }] } });
    expectOneLine(runCli(['fit', recording, '--station', st]), 2, `fibrewatch: ${st}: pendulum.parts[0].outer_radius_m: is required with inner_radius_m for shape "disc"`);
  });
});

describe('store faults: one line, the right exit status', () => {
  it('a store from a newer fibrewatch: every command says "upgrade fibrewatch" (exit 1)', () => {
    const p = join(dir, 'newer.db');
    copyFileSync(store, p);
    const d = new Database(p);
    d.pragma(`user_version = ${SCHEMA_VERSION + 1}`);
    d.close();
    const want = `fibrewatch: ${p}: the store has schema version ${SCHEMA_VERSION + 1}, newer than this fibrewatch's (${SCHEMA_VERSION}): upgrade fibrewatch`;
    for (const args of [['runs'], ['show', '1'], ['windows', '1'], ['events', '1'], ['fibres'], ['fibre', 'W25-f'], ['export', '1', '--what', 'samples'], ['check'], ['import', recording, '--station', station]]) {
      expectOneLine(runCli([...args, '--db', p]), 1, want);
    }
  });

  it('a file that is not a store (exit 2), for reading and writing commands alike', () => {
    const p = join(dir, 'notes.db');
    writeFileSync(p, 'torsion balance notebook\n'.repeat(50));
    for (const args of [['runs'], ['show', '1'], ['check'], ['import', recording, '--station', station]]) {
      expectOneLine(runCli([...args, '--db', p]), 2, `fibrewatch: ${p}: not a fibrewatch store (not an SQLite database)`);
    }
    expect(readFileSync(p, 'utf8')).toBe('torsion balance notebook\n'.repeat(50));
  });

  it('a missing folder: import exits 1 naming the folder; a query finds no store', () => {
    const p = join(dir, 'no-such-folder', 'x.db');
    expectOneLine(runCli(['import', recording, '--station', station, '--db', p]), 1, `fibrewatch: ${p}: the folder ${join(dir, 'no-such-folder')} does not exist`);
    expectOneLine(runCli(['runs', '--db', p]), 1, `fibrewatch: ${p}: no store here (use --db or $FIBREWATCH_DB)`);
  });

  it('a damaged store: queries and export exit 1 pointing at `check`; `check` lists SQLite\'s findings', () => {
    const p = join(dir, 'damaged.db');
    copyFileSync(store, p);
    const ro = openStore(p, { readonly: true });
    const root = (ro.prepare("SELECT rootpage FROM sqlite_master WHERE name = 'sample_chunks'").get() as { rootpage: number }).rootpage;
    ro.close();
    overwrite(p, (root - 1) * 4096, new Uint8Array(64).fill(0xee));
    expectOneLine(runCli(['export', '1', '--what', 'samples', '--db', p]), 1,
      `fibrewatch: ${p}: the store is damaged (SQLite: database disk image is malformed); \`fibrewatch check --db ${p}\` lists what is affected`);
    const c = runCli(['check', '--db', p]);
    expect(c.status).toBe(1);
    expect(c.stdout).toMatch(/^SQLite integrity check/m);
    expect(c.stdout).toMatch(/^checked 1 run: SQLite integrity NOT ok; .* problems?\n$/m);
  });
});

/** Run the CLI as the unprivileged user when root (root ignores file modes), else as ourselves. */
function asUser(args: string[]): CliResult {
  const root = process.getuid?.() === 0;
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: 'utf8', timeout: 60_000, ...(root ? { uid: 65534, gid: 65534 } : {}) });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe('a read-only store opens for reading', () => {
  let ro: string;
  beforeAll(() => {
    ro = join(dir, 'readonly');
    mkdirSync(ro);
    // as this fibrewatch leaves a store: rollback-journal mode at rest
    copyFileSync(store, join(ro, 'rest.db'));
    // as an older fibrewatch left it: WAL mode at rest, so SQLite would need to make rest-wal.db-shm beside it
    copyFileSync(store, join(ro, 'rest-wal.db'));
    const w = new Database(join(ro, 'rest-wal.db'));
    w.pragma('journal_mode = WAL');
    w.close();
    // from before checksums, in WAL mode: schema 2 on a read-only store
    const v2 = new Database(join(ro, 'v2.db'));
    migrate(v2, 2);
    v2.exec(`INSERT INTO stations (name, updated_at) VALUES ('bench-old', 0);
             INSERT INTO fibres (name) VALUES ('W-old');
             INSERT INTO runs (station_id, fibre_id, started_at_ms, source, status) VALUES (1, 1, 0, 'file', 'complete');`);
    v2.pragma('journal_mode = WAL');
    v2.close();
    for (const f of ['rest.db', 'rest-wal.db', 'v2.db']) chmodSync(join(ro, f), 0o444);
    chmodSync(ro, 0o555);
  });
  afterAll(() => chmodSync(ro, 0o755));

  it('at rest, as this fibrewatch leaves it: runs, show, events, export and check work; import says it is read-only (exit 1)', () => {
    const p = join(ro, 'rest.db');
    for (const args of [['runs'], ['show', '1'], ['events', '1'], ['export', '1', '--what', 'samples'], ['check']]) {
      const r = asUser([...args, '--db', p]);
      expect(r.status, `${args.join(' ')}: ${r.stderr}`).toBe(0);
      expect(r.stderr).not.toMatch(/readonly|read-only/);
    }
    expect(asUser(['export', '1', '--what', 'samples', '--db', p]).stdout.trim().split('\n')).toHaveLength(3001);
    expectOneLine(asUser(['import', recording, '--station', station, '--db', p]), 1,
      new RegExp(`^fibrewatch: ${esc(p)}: (the store is read-only here \\(SQLite: attempt to write a readonly database\\); record and import need write access to the file and its folder|cannot open the store \\(.*not writable.*\\))$`));
  });

  it('in WAL mode at rest (an older fibrewatch): read from a copy in memory, with a note', () => {
    const r = asUser(['runs', '--json', '--db', join(ro, 'rest-wal.db')]);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).map((x: { run: number }) => x.run)).toEqual([1]);
    expect(r.stderr).toMatch(/^fibrewatch: note: .*rest-wal\.db: the store is in WAL mode and its -shm file cannot be made here \(read-only file or folder\): reading a copy in memory \(\d+\.\d MB\)\n$/);
  });

  it('at an older schema: upgraded in the copy, not on disk', () => {
    const p = join(ro, 'v2.db');
    const r = asUser(['runs', '--json', '--db', p]);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout)[0].station).toBe('bench-old');
    const d = new Database(p, { readonly: true });
    expect(d.pragma('user_version', { simple: true })).toBe(2);
    d.close();
  });

  it('while a writer has it open (its -wal and -shm exist): read in place', () => {
    const p = join(dir, 'live', 'live.db');
    mkdirSync(join(dir, 'live'));
    const w = openStore(p);
    w.prepare("INSERT INTO stations (name, updated_at) VALUES ('bench-live', 0)").run();
    w.prepare("INSERT INTO fibres (name) VALUES ('W-live')").run();
    w.prepare("INSERT INTO runs (station_id, fibre_id, started_at_ms, source) VALUES (1, 1, 0, 'device')").run();
    chmodSync(join(dir, 'live'), 0o555);
    try {
      const r = asUser(['runs', '--json', '--db', p]);
      expect(r.status, r.stderr).toBe(0);
      expect(JSON.parse(r.stdout)[0]).toMatchObject({ station: 'bench-live', status: 'recording' });
      expect(r.stderr).toBe('');
    } finally {
      chmodSync(join(dir, 'live'), 0o755);
      w.close();
    }
  });
});

/** Whether this machine lets us make a private mount namespace and mount in it. */
const canMount = (() => {
  if (process.platform !== 'linux') return false;
  const r = spawnSync('unshare', ['-m', 'sh', '-c', 'mount -t tmpfs -o size=64k tmpfs /mnt && umount /mnt'], { encoding: 'utf8' });
  return r.status === 0;
})();

/** Run the CLI in a private mount namespace after `mount` (a shell command using $D). */
function inNamespace(mount: string, d: string, args: string[], env: Record<string, string> = {}): CliResult {
  const script = `${mount} && exec "$NODE" "$BIN" "$@"`;
  const r = spawnSync('unshare', ['-m', 'sh', '-c', script, 'sh', ...args], { encoding: 'utf8', timeout: 120_000, env: { ...process.env, ...env, D: d, NODE: process.execPath, BIN } });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

describe.skipIf(!canMount)('a read-only file system and a full one (private mount namespace)', () => {
  it('a read-only bind mount: queries read the store, import exits 1 naming why', () => {
    const d = join(dir, 'rofs');
    mkdirSync(d);
    copyFileSync(store, join(d, 'ok.db'));
    const ro = 'mount --bind -o ro "$D" "$D"';
    const r = inNamespace(ro, d, ['show', '1', '--json', '--db', join(d, 'ok.db')]);
    expect(r.status, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).samples).toBe(3000);
    expectOneLine(inNamespace(ro, d, ['import', recording, '--station', station, '--db', join(d, 'ok.db')]), 1,
      `fibrewatch: ${join(d, 'ok.db')}: the store is read-only here (SQLite: attempt to write a readonly database); record and import need write access to the file and its folder`);
    expectOneLine(inNamespace(ro, d, ['import', recording, '--station', station, '--db', join(d, 'new.db')]), 1,
      `fibrewatch: ${join(d, 'new.db')}: cannot open the store (its folder ${d} is not writable: EROFS)`);
  });

  it('a full disk during import: exit 1, one line, and what was committed is readable', () => {
    const d = join(dir, 'fullfs');
    mkdirSync(d);
    const big = join(dir, 'big.txt');
    writeFileSync(big, lines(200_000));
    const db = join(d, 'x.db');
    // import, then (same namespace, the tmpfs still mounted) read the store back
    const r = inNamespace('mount -t tmpfs -o size=512k tmpfs "$D" && { "$NODE" "$BIN" import "$BIG" --station "$ST" --db "$DB"; echo "import status $?" >&2; }', d, ['runs', '--json', '--db', db], { BIG: big, ST: station, DB: db });
    const l = r.stderr.split('\n').filter((x) => x.startsWith('fibrewatch: '));
    // one line saying the store is full (the import may also say what became of the run)
    expect(l).toHaveLength(1);
    expect(l[0]).toMatch(/^fibrewatch: .*(disk full|store is full)/);
    expect(r.stderr).toMatch(/import status 1\n/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(r.status, r.stderr).toBe(0);
    const runs = JSON.parse(r.stdout) as { samples: number }[];
    expect(runs).toHaveLength(1);
    expect(runs[0].samples).toBeGreaterThan(0);
    expect(runs[0].samples).toBeLessThan(200_000);
  }, 120_000);
});

if (!canMount) {
  describe('mount namespaces', () => {
    it.skip('unavailable on this machine (`unshare -m` failed): the read-only and full file-system cases were not run', () => {});
  });
}
