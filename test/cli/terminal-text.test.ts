/**
 * Names and messages with control characters (ESC sequences, CR/LF, an OSC
 * title, a one-byte CSI, a direction override) never reach the terminal raw:
 * every human-readable printer shows them escaped, so a name cannot recolour,
 * retitle or clear the screen, or forge a line of output. JSON stays exact.
 * A real store made by the built `import`, queried by the built commands.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli, type CliResult } from '../helpers/cli.js';
import { openStore } from '../../db/open.js';
import { insertEvents } from '../../db/events-store.js';

const STATION = 'bench\x1b]0;owned\x07\r\nrun 99  forged-line';
const FIBRE = 'W\x1b[31mRED\x1b[0m\nfake\u202eeman';
const MESSAGE = 'gap\x1b[2J\rof 3 s\x9b1m';
// any of these in the output is a control character reaching the terminal
const RAW = /[\x00-\x09\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]/;

let dir: string;
let db: string;
let imported: CliResult;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-cli-text-'));
  const st = join(dir, 'st.json');
  writeFileSync(st, JSON.stringify({ station: STATION, fibre: { name: FIBRE, material: 'tungsten' }, input: { columns: ['t_s', 'angle_rad'] } }));
  const rec = join(dir, 'rec.txt');
  writeFileSync(rec, Array.from({ length: 50 }, (_, i) => `${i / 10},${1e-3 * Math.sin(i)}`).join('\n') + '\n');
  db = join(dir, 'text.db');
  imported = runCli(['import', rec, '--station', st, '--db', db, '--started-at', '2026-05-01T00:00:00Z']);
  expect(imported.status, imported.stderr).toBe(0);
  const s = openStore(db);
  insertEvents(s, 1, [{ t_s: 1, t_ms: Date.UTC(2026, 4, 1) + 1000, kind: 'gap', severity: 'warning', message: MESSAGE, value: 3 }]);
  s.close();
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Human-readable output: no raw control character, and lines only where the program put them. */
function clean(r: CliResult, lines?: number): string {
  expect(r.status, r.stderr).toBe(0);
  expect(r.stdout).not.toMatch(RAW);
  expect(r.stderr).not.toMatch(RAW);
  if (lines !== undefined) expect(r.stdout.trim().split('\n')).toHaveLength(lines);
  return r.stdout;
}

describe('human-readable output shows control characters escaped', () => {
  it('the import summary', () => {
    const out = clean(imported);
    expect(out.split('\n')[0]).toBe('Run 1 · station bench\\x1b]0;owned\\x07\\r\\nrun 99  forged-line · fibre W\\x1b[31mRED\\x1b[0m\\nfake\\u202eeman · complete');
  });

  it('runs: one row, the forged "run 99" stays inside the station cell', () => {
    const out = clean(runCli(['runs', '--db', db]), 3);
    expect(out.split('\n')[2]).toMatch(/^1 {4}bench\\x1b\]0;owned\\x07\\r\\nrun 99 {2}forged-line {2}W\\x1b\[31mRED\\x1b\[0m\\nfake\\u202eeman /);
  });

  it('fibres, fibre and show', () => {
    expect(clean(runCli(['fibres', '--db', db]), 3)).toContain('W\\x1b[31mRED\\x1b[0m\\nfake\\u202eeman  tungsten');
    expect(clean(runCli(['fibre', FIBRE, '--db', db]), 4).split('\n')[0]).toBe('fibre W\\x1b[31mRED\\x1b[0m\\nfake\\u202eeman: 1 run');
    expect(clean(runCli(['show', '1', '--db', db])).split('\n')[0]).toContain('station bench\\x1b]0;owned');
  });

  it('events\' messages', () => {
    expect(clean(runCli(['events', '1', '--db', db]), 3)).toContain('gap\\x1b[2J\\rof 3 s\\x9b1m');
  });

  it('error messages that quote a name', () => {
    const r = runCli(['fibre', 'nope\x1b[2J\nforged', '--db', db]);
    expect(r.status).toBe(1);
    expect(r.stderr).toBe('fibrewatch: fibre "nope\\x1b[2J\\nforged": not in this store (see `fibrewatch fibres`)\n');
  });
});

describe('JSON output stays exact', () => {
  it('names and messages come back byte for byte', () => {
    const runs = JSON.parse(runCli(['runs', '--json', '--db', db]).stdout);
    expect(runs[0]).toMatchObject({ station: STATION, fibre: FIBRE });
    const evs = JSON.parse(runCli(['events', '1', '--json', '--db', db]).stdout);
    expect(evs.find((e: { kind: string }) => e.kind === 'gap').message).toBe(MESSAGE);
    expect(JSON.parse(runCli(['fibres', '--json', '--db', db]).stdout)[0].name).toBe(FIBRE);
  });
});
