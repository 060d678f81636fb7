/**
 * The API's answers, computed by the functions the commands use and kept
 * while what they depend on is unchanged: a run's answers while its row (its
 * counts, status, end and station settings) is the same, a fibre's while its
 * runs' rows are. Requests for the same answer at once share one computation,
 * and the run list's most likely pages can be read ahead when the server
 * starts, so the first visitor does not wait for a week of samples.
 */
import type { ReadStore } from '../../db/read-store.js';
import type { RunRecord } from '../../db/runs.js';
import { UsageError } from '../domain/errors.js';
import { buildSummary } from '../summaries/show-summary.js';
import { fibreHistory } from '../summaries/fibre-history.js';
import { buildNoiseBudget } from '../summaries/noise-budget.js';
import { amplitudeDependence } from '../summaries/amplitude-dependence.js';
import { buildComparison } from '../summaries/compare-summary.js';
import { windowRows } from '../report/window-rows.js';
import { AnswerCache } from './answer-cache.js';
import { TraceCache } from './trace-cache.js';
import { BadRequest, NotFound } from './params.js';
import { windowMemoStore } from './window-memo-store.js';
import { yieldingStore } from './yielding-store.js';

/** The answers of one server. */
export class RunAnswers {
  private readonly store: ReadStore;
  /** the same store, letting other work in between chunks (for the noise budget, which reads every sample) */
  private readonly slow: ReadStore;
  private readonly cache = new AnswerCache();
  private readonly traces: TraceCache;

  constructor(store: ReadStore) {
    this.store = windowMemoStore(store);
    this.slow = yieldingStore(this.store);
    this.traces = new TraceCache(this.store);
  }

  /** The run, or NotFound. */
  async run(id: number): Promise<RunRecord> {
    const r = await this.store.getRun(id);
    if (!r) throw new NotFound(`run ${id}: no such run in this store`);
    return r;
  }

  /** `show RUN --json`. */
  summary(r: RunRecord): Promise<string> {
    return this.cache.get(`show ${r.run}`, JSON.stringify(r), () => buildSummary(this.store, r.run));
  }

  /** `windows RUN --json`. */
  windows(r: RunRecord): Promise<string> {
    return this.cache.get(`windows ${r.run}`, JSON.stringify(r), async () => windowRows(await this.store.listWindows(r.run), r.started_at_ms));
  }

  /** `events RUN --json`. */
  events(r: RunRecord): Promise<string> {
    return this.cache.get(`events ${r.run}`, JSON.stringify(r), () => this.store.listEvents(r.run));
  }

  /** The angle's min/max per bucket (not kept: the trace itself is, and answers from it in milliseconds). */
  async samples(r: RunRecord, from: number | undefined, to: number | undefined, points: number): Promise<string> {
    const trace = await this.traces.get(r.run);
    return JSON.stringify(await trace.query(from, to, points));
  }

  /** `noise RUN [--from-s] [--to-s] --json`; a span with no samples is a bad request naming the parameter. */
  noise(r: RunRecord, from: number | undefined, to: number | undefined): Promise<string> {
    return this.cache.get(`noise ${r.run} ${from} ${to}`, JSON.stringify(r), async () => {
      try {
        return (await buildNoiseBudget(this.slow, r.run, { from_s: from, to_s: to })).budget;
      } catch (e) {
        // the budget names the command's flags; here they are query parameters
        if (e instanceof UsageError) throw new BadRequest(e.message.replace(/--from-s/g, 'from_s').replace(/--to-s/g, 'to_s'));
        throw e;
      }
    });
  }

  /**
   * Period and Q against the swing amplitude (src/summaries/amplitude-dependence.ts), of the
   * windows within [from, to) when given; kept while the run's row is unchanged (its windows,
   * events and marks counts are in it).
   */
  amplitude(r: RunRecord, from: number | undefined, to: number | undefined): Promise<string> {
    return this.cache.get(`amplitude ${r.run} ${from} ${to}`, JSON.stringify(r), () => amplitudeDependence(this.store, r.run, { from_s: from, to_s: to }));
  }

  /** `compare RUN [--from-s] [--to-s] --json`: the run's configurations against each other (one configuration: none to compare, said in its notes). */
  compare(r: RunRecord, from: number | undefined, to: number | undefined): Promise<string> {
    return this.cache.get(`compare ${r.run} ${from} ${to}`, JSON.stringify(r), () => buildComparison(this.store, r.run, { from_s: from, to_s: to }));
  }

  /** `fibre NAME --json`, or NotFound. */
  async fibre(name: string): Promise<string> {
    if (!(await this.store.listFibres()).some((f) => f.name === name)) throw new NotFound(`fibre "${name}": not in this store`);
    // the history changes when one of the fibre's runs does
    const stamp = JSON.stringify(await this.store.listRuns({ fibre: name }));
    return this.cache.get(`fibre ${name}`, stamp, () => fibreHistory(this.store, name));
  }

  /**
   * Read ahead what the first visitor is likely to open: the runs still
   * recording and the newest others, up to `runs` of them (their angle traces,
   * summaries, windows, swing-amplitude dependence and configurations, and
   * their fibres' histories). Resolves with how many were read.
   */
  async readAhead(runs = 4): Promise<number> {
    const all = await this.store.listRuns();
    const pick = [...all].sort((a, b) => Number(b.status === 'recording') - Number(a.status === 'recording') || Date.parse(b.started_at) - Date.parse(a.started_at)).slice(0, runs);
    const breathe = () => new Promise<void>((res) => setImmediate(res));
    for (const l of pick) {
      const r = await this.store.getRun(l.run);
      if (!r) continue;
      await this.traces.get(r.run);
      await breathe();
      await this.summary(r);
      await breathe();
      await this.windows(r);
      await breathe();
      await this.amplitude(r, undefined, undefined);
      await breathe();
      await this.compare(r, undefined, undefined);
      await breathe();
    }
    for (const f of new Set(pick.map((l) => l.fibre))) {
      await this.fibre(f);
      await breathe();
    }
    return pick.length;
  }
}
