/** The angle traces (src/report/angle-trace.ts) of the runs looked at lately, kept up to date with the store. */
import type { ReadStore } from '../../db/read-store.js';
import { AngleTrace } from '../report/angle-trace.js';

/** Least recently used traces, each brought up to the store's change token it was last read at. */
export class TraceCache {
  private readonly m = new Map<number, { trace: AngleTrace; token: number | undefined }>();

  /** @param max runs kept (default 8: a week at 20 Hz holds about 4 MB) */
  constructor(private readonly store: ReadStore, private readonly max = 8) {}

  /** The run's trace, updated when the store changed since it was last read. */
  async get(run: number): Promise<AngleTrace> {
    let e = this.m.get(run);
    if (e) this.m.delete(run);
    else e = { trace: new AngleTrace(this.store, run), token: undefined };
    this.m.set(run, e);
    if (this.m.size > this.max) this.m.delete(this.m.keys().next().value!);
    // the token is read first: a commit during the update is caught by the next request
    const token = await this.store.changeToken();
    if (e.token !== token) {
      await e.trace.update();
      e.token = token;
    }
    return e.trace;
  }
}
