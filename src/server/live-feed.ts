/**
 * Live updates for open run pages (Server-Sent Events). One timer per server,
 * whatever the number of pages: every `poll_ms` it asks the store for its
 * change token (SQLite's PRAGMA data_version: no table is read) and only when
 * that moved does it look at the runs somebody watches. New windows, new
 * events and a changed run row go to every subscriber of that run, in the
 * shapes of `windows --json`, `events --json` and `runs --json`. A page that
 * subscribes gets the run row at once; it reads the history itself (the REST
 * answers) and merges by window index and event identity, so nothing falls
 * between the two.
 */
import type { ReadStore } from '../../db/read-store.js';
import type { EventListing } from '../../db/events-store.js';
import type { RunListing } from '../../db/runs.js';
import { windowRows } from '../report/window-rows.js';

/** A subscriber's sink: one SSE frame per call. */
export type SendEvent = (event: 'window' | 'event' | 'status', data: unknown) => void;

/** What has been sent for one run, shared by its subscribers. */
interface RunFeed {
  subscribers: Set<SendEvent>;
  windows: number;
  /** each event already sent, counted by its identity (an event can be stored late, with an earlier time) */
  events: Map<string, number>;
  eventCount: number;
  listing: string;
}

/** Options of LiveFeed. */
export interface LiveFeedOptions {
  /** how often the change token is read, ms (default 500) */
  poll_ms?: number;
  /** every this many ms each subscriber gets a comment line, so tunnels and proxies keep the stream open (default 15000) */
  keepAlive_ms?: number;
  /** called with an error the poll met (the feed keeps polling) */
  onError?: (e: unknown) => void;
}

const eventKey = (e: EventListing): string => JSON.stringify([e.t_s, e.kind, e.state, e.message, e.value]);

/** The one poller of a server and its subscribers. */
export class LiveFeed {
  private readonly runs = new Map<number, RunFeed>();
  private timer: NodeJS.Timeout | undefined;
  private token: number | undefined;
  private busy = false;
  private sinceKeepAlive_ms = 0;
  private readonly poll_ms: number;
  private readonly keepAlive_ms: number;
  /** extra senders for keep-alive comments */
  private readonly comments = new Map<SendEvent, () => void>();

  constructor(private readonly store: ReadStore, private readonly opts: LiveFeedOptions = {}) {
    this.poll_ms = opts.poll_ms ?? 500;
    this.keepAlive_ms = opts.keepAlive_ms ?? 15_000;
  }

  /** Subscribers over all runs. */
  get size(): number {
    let n = 0;
    for (const f of this.runs.values()) n += f.subscribers.size;
    return n;
  }

  /** Start sending run `run`'s news to `send` (and `comment` for keep-alives); returns the unsubscribe function. */
  async subscribe(run: number, send: SendEvent, comment: () => void): Promise<() => void> {
    let f = this.runs.get(run);
    if (!f) {
      // counted from now: what is stored already the page reads through the REST answers
      const listing = await this.listing(run);
      const events = await this.store.listEvents(run);
      f = { subscribers: new Set(), windows: listing?.windows ?? 0, events: new Map(), eventCount: events.length, listing: JSON.stringify(listing ?? null) };
      for (const e of events) f.events.set(eventKey(e), (f.events.get(eventKey(e)) ?? 0) + 1);
      this.runs.set(run, f);
    }
    f.subscribers.add(send);
    this.comments.set(send, comment);
    send('status', JSON.parse(f.listing));
    this.start();
    const feed = f;
    return () => {
      feed.subscribers.delete(send);
      this.comments.delete(send);
      if (feed.subscribers.size === 0) this.runs.delete(run);
      if (this.runs.size === 0) this.stop();
    };
  }

  /** Stop the timer (subscribers are dropped by their connections closing). */
  stop(): void {
    if (this.timer) clearInterval(this.timer);
    this.timer = undefined;
  }

  private start(): void {
    if (this.timer) return;
    this.timer = setInterval(() => void this.tick(), this.poll_ms);
    this.timer.unref();
  }

  /** The run's row as `runs --json` has it: its stored record without what only `getRun` adds (one run, not the whole list). */
  private async listing(run: number): Promise<RunListing | undefined> {
    const r = await this.store.getRun(run);
    if (!r) return undefined;
    const { started_at_ms: _a, ended_at_ms: _b, source_path: _c, clock: _d, station_config: _e, fibre_info: _f, events: _g, meta: _h, ...row } = r;
    return row;
  }

  /** One poll: nothing is read beyond the change token unless it moved. */
  private async tick(): Promise<void> {
    if (this.busy) return;
    this.busy = true;
    try {
      this.sinceKeepAlive_ms += this.poll_ms;
      if (this.sinceKeepAlive_ms >= this.keepAlive_ms) {
        this.sinceKeepAlive_ms = 0;
        for (const c of this.comments.values()) c();
      }
      const token = await this.store.changeToken();
      if (token === this.token) return;
      this.token = token;
      for (const [run, f] of this.runs) await this.news(run, f);
    } catch (e) {
      this.opts.onError?.(e);
    } finally {
      this.busy = false;
    }
  }

  private async news(run: number, f: RunFeed): Promise<void> {
    const listing = await this.listing(run);
    if (!listing) return;
    const send = (ev: 'window' | 'event' | 'status', data: unknown) => {
      for (const s of f.subscribers) s(ev, data);
    };
    if (listing.windows > f.windows) {
      const rec = await this.store.getRun(run);
      const ws = await this.store.listWindows(run);
      if (rec) for (const w of windowRows(ws.slice(f.windows), rec.started_at_ms)) send('window', w);
      f.windows = ws.length;
    }
    const count = await this.store.countEvents(run);
    if (count !== f.eventCount) {
      const seen = new Map<string, number>();
      for (const e of await this.store.listEvents(run)) {
        const k = eventKey(e);
        const n = (seen.get(k) ?? 0) + 1;
        seen.set(k, n);
        if (n > (f.events.get(k) ?? 0)) {
          f.events.set(k, n);
          send('event', e);
        }
      }
      f.eventCount = count;
    }
    const text = JSON.stringify(listing);
    if (text !== f.listing) {
      f.listing = text;
      send('status', listing);
    }
  }
}
