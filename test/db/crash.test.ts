import { afterEach, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { openStore } from '../../db/open.js';
import { getRun, markInterrupted } from '../../db/runs.js';
import { readSamples } from '../../db/sample-reader.js';

const here = dirname(fileURLToPath(import.meta.url));
const mod = (f: string) => pathToFileURL(resolve(here, '../../db', f)).href;

const dirs: string[] = [];
afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

describe('a killed recorder', () => {
  it('leaves a sound file holding every committed sample; the run is then marked interrupted', () => {
    const d = mkdtempSync(join(tmpdir(), 'fw-db-'));
    dirs.push(d);
    const path = join(d, 'store.db');
    // a real process writes 20 Hz blocks, commits once a (simulated) second, then
    // buffers a further half second and is killed with SIGKILL — no exit handlers run
    const child = `
      import { openStore } from ${JSON.stringify(mod('open.ts'))};
      import { createRun } from ${JSON.stringify(mod('runs.ts'))};
      import { SampleWriter } from ${JSON.stringify(mod('sample-writer.ts'))};
      const db = openStore(${JSON.stringify(path)});
      const run = createRun(db, { station: 'bench-a', fibre: { name: 'F' }, startedAt_ms: Date.UTC(2026, 5, 1), source: 'device' });
      const w = new SampleWriter(db, run, { chunkSamples: 64 });
      let i = 0;
      const block = (k) => {
        const t = new Float64Array(k), v = new Float64Array(k);
        for (let j = 0; j < k; j++, i++) { t[j] = i * 0.05; v[j] = Math.sin(i / 3); }
        w.append(t, { angle: v });
      };
      for (let s = 0; s < 30; s++) { block(20); w.flushIfDue(s * 1000); }
      block(10);
      process.kill(process.pid, 'SIGKILL');
    `;
    const r = spawnSync(process.execPath, ['--import', 'tsx', '--input-type=module', '-e', child], { encoding: 'utf8', timeout: 30_000 });
    expect(r.signal, r.stderr).toBe('SIGKILL');

    const db = openStore(path);
    expect(db.pragma('integrity_check', { simple: true })).toBe('ok');
    const run = getRun(db, 1)!;
    expect(run.status).toBe('recording');
    expect(run.samples).toBe(600); // 30 commits of 20; the last 10 samples were never committed
    const s = readSamples(db, 1, 'angle');
    expect(s.t.length).toBe(600);
    expect(s.v[599]).toBeCloseTo(Math.sin(599 / 3), 6);
    expect(markInterrupted(db)).toEqual([1]);
    expect(getRun(db, 1)!.ended_at_ms).toBe(Date.UTC(2026, 5, 1) + 599 * 50);
    db.close();
  });
});
