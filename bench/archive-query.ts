/**
 * Queries on a lab archive of 10,000 runs (a throwaway PostgreSQL cluster,
 * test/helpers/pg-cluster.ts; the archive's own schema, made by its
 * migrations). The runs are rows of our own invention — 12 stations, 400
 * fibres, two years of runs of 1 to 7 days each — put in by SQL rather than
 * pushed run by run, since a listing reads only the runs table and its
 * indexes. Goal: `runs --fibre … --since …` ≤ 50 ms for the query through the
 * store interface; the whole command (a Node process starting, connecting,
 * printing) is measured beside it.
 *
 * Runnable alone: `npx tsx bench/archive-query.ts` (after `npm run build`).
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { ArchiveWriter } from '../db/pg/archive-writer.js';
import { openArchiveReadStore } from '../db/pg/postgres-read-store.js';
import { startPgCluster } from '../test/helpers/pg-cluster.js';

const BIN = fileURLToPath(new URL('../bin/fibrewatch.js', import.meta.url));
const RUNS = 10_000;
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];

/** Query figures, ms. */
export async function benchArchiveQuery(): Promise<Record<string, number>> {
  const cluster = await startPgCluster({ fsync: true });
  try {
    await cluster.sql('CREATE DATABASE lab');
    const url = cluster.url('lab');
    await (await ArchiveWriter.open(url)).close();
    // two years from 2025-01-01, a run every ~1.75 h on average across the lab; deterministic (no random())
    await cluster.script(`
      INSERT INTO stations (name, config_json, updated_at_ms)
        SELECT 'bench-' || lpad(i::text, 2, '0'), '{}', 0 FROM generate_series(1, 12) i;
      INSERT INTO fibres (name, material, diameter_m, length_m)
        SELECT 'W25-lot' || (i / 20) || '-' || lpad((i % 20)::text, 2, '0'), 'tungsten', 2.5e-5, 0.8 FROM generate_series(0, 399) i;
      INSERT INTO runs (uid, station_id, fibre_id, station_run, started_at_ms, ended_at_ms, status, source, clock, samples, windows, events,
                        synced_at_ms, synced_to_s, change_id, station_digest)
        SELECT md5(i::text), 1 + (i % 12), 1 + ((i * 7919) % 400), 1 + i / 12,
               1735689600000 + i::bigint * 6307200, 1735689600000 + i::bigint * 6307200 + (1 + (i % 7)) * 86400000::bigint,
               'complete', 'device', 'device', (1 + (i % 7)) * 1728000, (1 + (i % 7)) * 1440, i % 5,
               1735689600000 + i::bigint * 6307200 + (1 + (i % 7)) * 86400000::bigint, (1 + (i % 7)) * 86400.0, i, 'x'
        FROM generate_series(0, ${RUNS - 1}) i;
      ANALYZE;`, 'lab');
    const store = await openArchiveReadStore(url);
    const fibre = 'W25-lot7-03';
    const since_ms = Date.UTC(2026, 2, 1);
    const time = async (fn: () => Promise<unknown>, n: number) => {
      await fn();
      const out: number[] = [];
      for (let i = 0; i < n; i++) {
        const t0 = performance.now();
        await fn();
        out.push(performance.now() - t0);
      }
      return out;
    };
    const byFibre = await time(() => store.listRuns({ fibre, since_ms }), 50);
    const byStation = await time(() => store.listRuns({ station: 'bench-07', since_ms: Date.UTC(2026, 9, 1), until_ms: Date.UTC(2026, 10, 1) }), 50);
    const all = await time(() => store.listRuns({}), 10);
    const found = (await store.listRuns({ fibre, since_ms })).length;
    await store.close();
    const cliMs: number[] = [];
    let rows = 0;
    for (let i = 0; i < 5; i++) {
      const t0 = performance.now();
      const r = spawnSync(process.execPath, [BIN, 'runs', '--fibre', fibre, '--since', '2026-03-01', '--db', url, '--json'], { encoding: 'utf8' });
      cliMs.push(performance.now() - t0);
      if (r.status !== 0) throw new Error(r.stderr);
      rows = JSON.parse(r.stdout).length;
    }
    const fig = {
      archive_runs: RUNS,
      runs_fibre_since_query_ms: median(byFibre),
      runs_fibre_since_query_max_ms: Math.max(...byFibre),
      runs_fibre_since_rows: found,
      runs_station_month_query_ms: median(byStation),
      runs_all_10k_query_ms: median(all),
      runs_fibre_since_cli_ms: median(cliMs),
    };
    process.stdout.write(`archive of ${RUNS} runs: runs --fibre ${fibre} --since 2026-03-01 (${found} runs): query ${fig.runs_fibre_since_query_ms.toFixed(2)} ms median, `
      + `${fig.runs_fibre_since_query_max_ms.toFixed(2)} ms max of 50 — ${fig.runs_fibre_since_query_max_ms <= 50 ? 'meets' : 'misses'} the 50 ms goal; `
      + `the whole command ${fig.runs_fibre_since_cli_ms.toFixed(0)} ms (${rows} rows, Node start and connection included); `
      + `one station's month ${fig.runs_station_month_query_ms.toFixed(2)} ms; all ${RUNS} runs ${fig.runs_all_10k_query_ms.toFixed(1)} ms\n`);
    return fig;
  } finally {
    cluster.destroy();
  }
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  benchArchiveQuery().then((f) => console.log(f));
}
