/**
 * `fibrewatch demo`: the main job on an embedded default. A virtual balance
 * with a scripted story is written by the simulator (another process) into
 * one end of a pseudo-terminal pair; `record`'s own code path reads the other
 * end through the real serialport stack into a fresh store, analysing live and
 * raising alerts. Without socat it feeds the same decoder in-process, and says so.
 */
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { spawn } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { PassThrough } from 'node:stream';
import { parseStation } from '../config/station.js';
import { openStore } from '../../db/open.js';
import { sqliteReadStore } from '../../db/read-store.js';
import { getRun, updateRunStartedAt } from '../../db/runs.js';
import { parseScenario } from '../../drivers/simulator/scenario.js';
import { runSimulator } from '../../drivers/simulator/run-simulator.js';
import { demoStory } from './demo-story.js';
import { haveSocat, startPtyPair } from '../../drivers/pty-pair.js';
import { recordRun } from './record.js';
import { RunSession, type StoredEvent } from './run-session.js';
import { Acquisition } from './acquisition.js';
import { amplitudePriorFor, makeLiveSink } from './live-sink.js';
import { buildSummary, type ShowSummary } from '../summaries/show-summary.js';
import { buildComparison, type Comparison } from '../summaries/compare-summary.js';
import { renderComparison } from '../summaries/compare-text.js';
import { renderReport } from '../report/html-report.js';

export interface DemoOptions {
  out: string;
  hours: number;
  inProcess?: boolean;
  seed?: number;
  log?: (line: string) => void;
  /** wall-clock budget for the simulated span, s (sets the simulator's speed) */
  wall_s?: number;
}

export interface DemoResult {
  summary: ShowSummary;
  dbPath: string;
  reportPath: string;
  mode: 'pty' | 'in-process';
  alerts: StoredEvent[];
  /** the source masses' two positions against each other (`fibrewatch compare`), and the same for people */
  comparison: Comparison;
  comparisonText: string;
  /** where the comparison starts, s since the run's start (the `--from-s` of `fibrewatch compare`) */
  compareFrom_s: number;
}

const BIN = fileURLToPath(new URL('../../../bin/fibrewatch.js', import.meta.url));

/** Run the demo; returns the summary and where the files are. */
export async function runDemo(opts: DemoOptions): Promise<DemoResult> {
  const log = opts.log ?? ((l: string) => process.stderr.write(l + '\n'));
  const out = resolve(opts.out);
  mkdirSync(out, { recursive: true });
  const dbPath = join(out, 'fibrewatch.db');
  for (const f of [dbPath, `${dbPath}-wal`, `${dbPath}-shm`]) rmSync(f, { force: true });
  const story = demoStory(opts.hours);
  const scenarioPath = join(out, 'scenario.json');
  const stationPath = join(out, 'station.json');
  writeFileSync(scenarioPath, JSON.stringify(story.scenario, null, 2) + '\n');
  writeFileSync(stationPath, JSON.stringify(story.station, null, 2) + '\n');
  const station = parseStation(story.station, stationPath);
  const scenario = parseScenario(story.scenario, scenarioPath);
  // about a minute of wall time for the whole story, whatever its length
  const speed = Math.max(1, Math.round(story.duration_s / (opts.wall_s ?? 60)));
  const alerts: StoredEvent[] = [];
  const onEvent = (e: StoredEvent) => {
    if (e.state) {
      alerts.push(e);
      log(`  [t = ${(e.t_s / 3600).toFixed(2)} h] ${e.kind} ${e.state}: ${e.message}`);
    }
  };
  const db = openStore(dbPath);
  let mode: 'pty' | 'in-process' = opts.inProcess || !haveSocat() ? 'in-process' : 'pty';
  let runId: number;
  try {
    // the demo's store is fresh, so there is none yet; kept so the demo runs what `record` runs
    const amplitudePrior = await amplitudePriorFor(db, station, log);
    if (mode === 'pty') {
      const dir = join(out, 'pty');
      mkdirSync(dir, { recursive: true });
      const pty = await startPtyPair(dir);
      log(`demo: ${opts.hours} simulated hours at ${speed}× through a pseudo-terminal (socat) and the serialport stack`);
      log(`demo: simulator → ${pty.feedPath}  ·  record ← ${pty.devicePath}`);
      // the simulator in another process, as an instrument would be
      const sim = spawn(process.execPath, [BIN, 'simulate', '--scenario', scenarioPath, '--device', pty.feedPath, '--speed', String(speed), '--seed', String(opts.seed ?? 7)], { stdio: ['ignore', 'ignore', 'pipe'] });
      let simErr = '';
      sim.stderr.on('data', (d) => (simErr += d));
      const simDone = new Promise<number>((res) => sim.once('exit', (code) => res(code ?? 1)));
      let session: RunSession | undefined;
      const stop = simDone.then(async (code) => {
        if (code !== 0) log(`demo: simulator exited with ${code}: ${simErr.trim()}`);
        // let the last bytes cross the pty
        await new Promise((r) => setTimeout(r, 1500));
      });
      try {
        runId = await recordRun(db, station, {
          device: pty.devicePath,
          source: 'simulator',
          stopSignal: stop,
          onEvent,
          makeSink: (s) => { session = s; return makeLiveSink(station, s, { dispatcher: null, amplitudePrior }); },
          log,
        });
      } finally {
        sim.kill('SIGTERM');
        await pty.stop();
      }
      void session;
    } else {
      log(`demo: socat not found${opts.inProcess ? ' (or --in-process given)' : ''}: feeding the simulator's bytes to the decoder in-process (no pseudo-terminal)`);
      const session = new RunSession(db, station, { source: 'simulator', sourcePath: 'in-process', onEvent });
      const acq = new Acquisition(station, session, makeLiveSink(station, session, { dispatcher: null, amplitudePrior }));
      const pipe = new PassThrough();
      pipe.on('data', (chunk: Buffer) => acq.bytes(chunk, Date.now()));
      await runSimulator({ scenario, out: pipe, speed, seed: opts.seed ?? 7 });
      await acq.end();
      session.close('complete');
      runId = session.runId;
      mode = 'in-process';
    }
    // the story ran faster than real time: date it so that it ends now
    const run = getRun(db, runId)!;
    if (run.ended_at_ms !== null) updateRunStartedAt(db, runId, Date.now() - (run.ended_at_ms - run.started_at_ms));
    const store = sqliteReadStore(db, dbPath);
    const summary = await buildSummary(store, runId);
    // the source masses move in the second half: compare their positions there (the first half has the shield and the knock)
    const comparison = await buildComparison(store, runId, { from_s: story.switching_from_s });
    const comparisonText = renderComparison(comparison);
    const reportPath = join(out, 'report.html');
    writeFileSync(reportPath, await renderReport(store, runId, { compare: { from_s: story.switching_from_s } }));
    return { summary, dbPath, reportPath, mode, alerts, comparison, comparisonText, compareFrom_s: story.switching_from_s };
  } finally {
    db.close();
  }
}
