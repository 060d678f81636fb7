/**
 * `fibrewatch check` and what the reading commands do with a corrupt chunk,
 * on a real store made by the built `import`, damaged in place on disk.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { copyFileSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runCli } from '../helpers/cli.js';
import { openStore } from '../../db/open.js';
import { FLAG_INVALID } from '../../src/domain/block.js';
import { offsetOf, overwrite } from '../db/chunk-store-fixture.js';

let dir: string;
let good: string;
let bad: string;
/** time span of the damaged chunk (angle, seq 1) */
let span: { t0_s: number; t1_s: number; count: number };

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fw-cli-check-'));
  const station = join(dir, 'bench.json');
  writeFileSync(station, JSON.stringify({ station: 'bench-k', fibre: { name: 'BeCu-k' }, input: { columns: ['t_s', 'angle_rad', 'temp_C'] } }));
  const rec = join(dir, 'rec.txt');
  let s = '';
  for (let i = 0; i < 20_000; i++) s += `${(i / 10).toFixed(1)},${(1e-3 * Math.sin((2 * Math.PI * i) / 150) + 1e-7 * Math.cos(i * 1.7)).toPrecision(9)},${(21 + 1e-3 * Math.sin(i / 977)).toFixed(5)}\n`;
  writeFileSync(rec, s);
  good = join(dir, 'good.db');
  const r = runCli(['import', rec, '--station', station, '--db', good, '--started-at', '2026-04-01T00:00:00Z']);
  expect(r.status, r.stderr).toBe(0);
  bad = join(dir, 'bad.db');
  copyFileSync(good, bad);
  const db = openStore(bad, { readonly: true });
  const row = db.prepare("SELECT t0_s, t1_s, count, value_blob FROM sample_chunks WHERE channel = 'angle' AND seq = 1").get() as { t0_s: number; t1_s: number; count: number; value_blob: Buffer };
  db.close();
  span = { t0_s: row.t0_s, t1_s: row.t1_s, count: row.count };
  overwrite(bad, offsetOf(bad, row.value_blob.subarray(6000, 6064)), Uint8Array.from({ length: 200 }, (_, i) => (i * 91 + 7) & 0xff));
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('fibrewatch check', () => {
  it('on a sound store: a summary line, exit 0', () => {
    const r = runCli(['check', '--db', good]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toBe('checked 1 run: SQLite integrity ok; 10 chunks (10 verified, 0 unverified: written before checksums, 0 corrupt); 40000 samples intact; no problems\n');
  });

  it('on a damaged chunk: one line for it, the summary, exit 1', () => {
    const r = runCli(['check', '--db', bad]);
    expect(r.status).toBe(1);
    const out = r.stdout.trim().split('\n');
    expect(out).toHaveLength(2);
    expect(out[0]).toMatch(new RegExp(`^run 1, channel angle, chunk 1 \\(t_s ${span.t0_s} … ${span.t1_s}, ${span.count} samples\\): checksum mismatch \\(stored CRC-32 0x[0-9a-f]{8}, contents give 0x[0-9a-f]{8}\\)$`));
    expect(out[1]).toBe(`checked 1 run: SQLite integrity ok; 10 chunks (9 verified, 0 unverified: written before checksums, 1 corrupt); ${40_000 - span.count} samples intact; 1 problem`);
    // one run only; a run that is not there
    expect(runCli(['check', '1', '--db', bad]).status).toBe(1);
    const none = runCli(['check', '7', '--db', bad]);
    expect(none.status).toBe(1);
    expect(none.stderr).toBe('fibrewatch: run 7: no such run in this store\n');
  });

  it('--json: one document with the counts and the problems', () => {
    const r = runCli(['check', '--json', '--db', bad]);
    expect(r.status).toBe(1);
    const j = JSON.parse(r.stdout);
    expect(j).toMatchObject({ store: bad, run: null, integrity_ok: true, runs: 1, chunks: 10, chunks_verified: 9, chunks_unverified: 0, chunks_corrupt: 1, events_stored: 0 });
    expect(j.problems).toEqual([expect.objectContaining({ kind: 'checksum', run: 1, channel: 'angle', seq: 1, t0_s: span.t0_s, t1_s: span.t1_s, samples: span.count })]);
  });

  it('--mark stores one corrupt-chunk event per bad chunk, once, which `events` then shows', () => {
    const p = join(dir, 'marked.db');
    copyFileSync(bad, p);
    const first = runCli(['check', '--mark', '--db', p]);
    expect(first.status).toBe(1);
    expect(first.stdout).toMatch(/; 1 problem; stored 1 corrupt-chunk event\n$/);
    const again = runCli(['check', '--mark', '--json', '--db', p]);
    expect(JSON.parse(again.stdout).events_stored).toBe(0);
    const evs = JSON.parse(runCli(['events', '1', '--json', '--db', p]).stdout) as { kind: string; t_s: number; severity: string; value: number; data: Record<string, unknown> }[];
    const cc = evs.filter((e) => e.kind === 'corrupt-chunk');
    expect(cc).toHaveLength(1);
    expect(cc[0]).toMatchObject({ t_s: span.t0_s, severity: 'alarm', value: span.count, data: { unit: 'samples', channel: 'angle', seq: 1, problem: 'checksum' } });
    expect(runCli(['events', '1', '--db', p]).stdout).toMatch(/corrupt-chunk .* 4096 samples .*checksum mismatch/);
  });
});

describe('reading commands meet the damaged chunk', () => {
  it('export warns once and writes its samples as invalid (flags 8, no value); every other sample is as stored', () => {
    const r = runCli(['export', '1', '--what', 'samples', '--db', bad]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/^fibrewatch: warning: run 1, channel angle, chunk 1 \(.*\): checksum mismatch \(.*\); its 4096 samples are exported as invalid \(flags 8, no value\)\n$/);
    const rows = r.stdout.trim().split('\n').slice(1).map((l) => l.split(','));
    const ref = runCli(['export', '1', '--what', 'samples', '--db', good]).stdout.trim().split('\n').slice(1).map((l) => l.split(','));
    expect(rows).toHaveLength(ref.length);
    let masked = 0;
    rows.forEach((row, i) => {
      const t = Number(row[0]);
      if (t >= span.t0_s && t <= span.t1_s) {
        masked++;
        expect(row[1]).toBe('');
        expect(Number(row[2])).toBe(FLAG_INVALID);
        expect(row[3]).toBe(ref[i][3]); // the temperature channel's chunk is intact
      } else expect(row).toEqual(ref[i]);
    });
    expect(masked).toBe(span.count);
  });
});
