/**
 * One run in the archive while data flows into it: maps the samples' time base
 * to seconds since the run's start and to UTC, writes sample chunks, events and
 * window results, and commits at least once a second (docs/architecture.md).
 */
import type Database from 'better-sqlite3';
import type { AngleBlock, ValueRole } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { WindowResult } from '../domain/window-result.js';
import type { Station } from '../config/station.js';
import { createRun, endRun, heartbeat, setRunTimeBase, updateRunStartedAt } from '../../db/runs.js';
import { SampleWriter } from '../../db/sample-writer.js';
import { insertEvents } from '../../db/events-store.js';
import { insertWindows } from '../../db/windows-store.js';
import { holdReserve, type SpaceReserve } from '../../db/space-reserve.js';
import { thisRecorder } from './recorder-liveness.js';

export interface StoredEvent {
  t_s: number;
  t_ms: number;
  kind: Incident['kind'];
  severity: Incident['severity'];
  message: string;
  value?: number | null;
  threshold?: number | null;
  state?: string;
  data?: Record<string, unknown>;
}

export interface RunSessionOptions {
  source: 'device' | 'file' | 'simulator';
  sourcePath?: string;
  /** UTC ms of the first sample; default: host time when the first block arrives */
  startedAt_ms?: number;
  /** commit cadence, ms (≤ 1000 per docs/architecture.md) */
  maxLatency_ms?: number;
  meta?: Record<string, unknown>;
  /** called for each stored event (alert delivery, console) */
  onEvent?: (e: StoredEvent) => void;
  /**
   * the station's previous run, cut off by a crash, and the device-clock time
   * of its last stored sample: when this run's first sample lies later on the
   * same device clock, the hole between the two runs is stored as a `gap` at
   * t_s = 0, so a restart loses nothing without saying so
   */
  previous?: { run: number; lastDevice_s: number };
}

/** How long a transport gap waits for the sample times' report of the same outage, ms. */
const GAP_HOLD_MS = 2000;

/** Raw channels worth storing beside the angle (the angle sensor's own channel is the angle). */
function rawChannelsToStore(station: Station): ValueRole[] {
  const skip = new Set<string>(station.sensor.kind === 'angle' ? ['angle_rad'] : []);
  const roles = station.input.format === 'frames'
    ? (station.input.channels ?? []).map((c) => c.role)
    : (station.input.columns ?? []);
  return roles.filter((r): r is ValueRole => !r.startsWith('t_') && r !== '_' && !skip.has(r));
}

export class RunSession {
  readonly runId: number;
  /** time of the first sample on the samples' own time base; run time t_s = t − t0 */
  private t0: number | undefined;
  private startedAt_ms: number | undefined;
  private readonly writer: SampleWriter;
  private readonly pendingEvents: StoredEvent[] = [];
  private lastT_s = 0;
  private readonly raw: ValueRole[];
  private closed = false;
  private readonly windowBuffer: WindowResult[] = [];
  private lastSideFlush_ms = 0;
  private lastGap: { t_s: number; duration_s: number; event: StoredEvent } | undefined;
  private lastBeat_ms = Date.now();
  /** a transport gap waiting for the sample-time gap of the same outage (which knows the samples lost) */
  private heldGap: { event: StoredEvent; at_ms: number } | undefined;
  /** room kept to close the run on a full disk */
  private readonly reserve: SpaceReserve;

  constructor(private readonly db: Database.Database, private readonly station: Station, private readonly opts: RunSessionOptions) {
    this.startedAt_ms = opts.startedAt_ms;
    this.runId = createRun(db, {
      station: station.station,
      stationConfig: station,
      fibre: station.fibre,
      startedAt_ms: opts.startedAt_ms ?? Date.now(),
      source: opts.source,
      sourcePath: opts.sourcePath,
      meta: opts.meta,
      // pid, host and a heartbeat: a later `record` tells this run, while it lives, from a crashed one
      recorder: thisRecorder(),
    });
    this.writer = new SampleWriter(db, this.runId, { maxLatency_ms: opts.maxLatency_ms ?? 500 });
    this.raw = rawChannelsToStore(station);
    this.reserve = holdReserve(db.name, this.runId);
  }

  /** Seconds since the run's start of the last stored sample. */
  get lastTime_s(): number {
    return this.lastT_s;
  }

  get samples(): number {
    return this.writer.samples;
  }

  /** UTC ms of the run's first sample (known after the first block). */
  get start_ms(): number | undefined {
    return this.startedAt_ms;
  }

  /**
   * Store one converted block; returns it rebased to run time (t_s since the
   * run's start), ready for the analysis pipeline.
   */
  ingest(b: AngleBlock): AngleBlock {
    if (b.n === 0) return b;
    if (this.t0 === undefined) {
      this.t0 = b.t[0];
      setRunTimeBase(this.db, this.runId, b.clock, b.t[0]);
      if (this.startedAt_ms === undefined) {
        // the block's last byte arrived at host_ms; its first sample was earlier by the block's span
        this.startedAt_ms = b.host_ms - (b.t[b.n - 1] - b.t[0]) * 1000;
        updateRunStartedAt(this.db, this.runId, this.startedAt_ms);
      }
      this.gapSincePrevious(b);
    }
    const t = new Float64Array(b.n);
    const t0 = this.t0;
    for (let i = 0; i < b.n; i++) t[i] = b.t[i] - t0;
    const channels: Record<string, Float64Array> = { angle: b.angle };
    for (const r of this.raw) {
      const c = b.channels[r];
      if (c) channels[r] = c;
    }
    this.writer.append(t, channels, b.flags, b.n);
    this.lastT_s = t[b.n - 1];
    this.flushIfDue(Date.now());
    return { ...b, t };
  }

  /** Map an incident to run time and UTC and queue it for the next commit. */
  incident(inc: Incident & { runTime?: boolean }): StoredEvent {
    let t_s: number;
    if (inc.t !== undefined && inc.runTime) t_s = inc.t;
    else if (inc.t !== undefined && this.t0 !== undefined) t_s = inc.t - this.t0;
    else if (inc.host_ms !== undefined && this.startedAt_ms !== undefined) t_s = (inc.host_ms - this.startedAt_ms) / 1000;
    else t_s = this.lastT_s;
    const base = this.startedAt_ms ?? Date.now();
    if (inc.kind === 'gap' && this.sameOutage(t_s, Number(inc.data?.duration_s))) {
      const held = this.heldGap;
      if (held && held.event === this.lastGap!.event && inc.data?.from === 'sample-times') {
        // one outage, one gap: the transport's, with what the sample times say about it
        held.event.data = { ...held.event.data, sample_gap_s: inc.data.duration_s, lost_samples: inc.data.lost_samples };
        this.releaseHeldGap();
      }
      return this.lastGap!.event;
    }
    const e: StoredEvent = {
      t_s, t_ms: base + t_s * 1000, kind: inc.kind, severity: inc.severity, message: inc.message,
      value: inc.value ?? null, threshold: inc.threshold ?? null, state: inc.state, data: inc.data,
    };
    if (e.kind === 'gap' && inc.data?.path !== undefined && inc.data?.open !== true) {
      // the transport measured the device's absence on the host clock; the sample times will
      // say how many samples it cost: hold the event a moment for that
      this.releaseHeldGap();
      this.heldGap = { event: e, at_ms: Date.now() };
    } else {
      this.pendingEvents.push(e);
    }
    if (e.kind === 'gap') this.lastGap = { t_s, duration_s: Number(inc.data?.duration_s), event: e };
    this.opts.onEvent?.(e);
    return e;
  }

  private releaseHeldGap(): void {
    if (!this.heldGap) return;
    this.pendingEvents.push(this.heldGap.event);
    this.heldGap = undefined;
  }

  /** The hole on the device clock between the previous (crashed) run and this one's first sample. */
  private gapSincePrevious(b: AngleBlock): void {
    const p = this.opts.previous;
    if (!p || b.clock !== 'device') return;
    const duration_s = b.t[0] - p.lastDevice_s;
    // an earlier or equal time: the device clock restarted, so nothing can be said
    if (!(duration_s > 0) || !Number.isFinite(duration_s)) return;
    const step = b.n >= 2 ? (b.t[b.n - 1] - b.t[0]) / (b.n - 1) : NaN;
    const lost = step > 0 ? Math.max(0, Math.round(duration_s / step) - 1) : null;
    this.pendingEvents.push({
      t_s: 0, t_ms: (this.startedAt_ms ?? Date.now()), kind: 'gap', severity: 'warning',
      message: `no samples for ${duration_s.toFixed(2)} s on the device clock between run ${p.run} (cut off) and this run${lost === null ? '' : ` (about ${lost} samples)`}`,
      value: duration_s, threshold: null,
      data: { duration_s, from: 'previous-run', previous_run: p.run, lost_samples: lost },
    });
  }

  /**
   * One outage, one gap: the transport reports the time the device was away
   * and the sample times jump over the same stretch; the second report of the
   * same outage (close in time, similar length) is not stored again.
   */
  private sameOutage(t_s: number, duration_s: number): boolean {
    const g = this.lastGap;
    if (!g || !Number.isFinite(duration_s) || !Number.isFinite(g.duration_s)) return false;
    const tol = Math.max(2, 0.5 * Math.max(duration_s, g.duration_s));
    return Math.abs(t_s - g.t_s) < tol + 2 && Math.abs(duration_s - g.duration_s) < tol;
  }

  /** Queue a window result for the next commit. */
  window(w: WindowResult): void {
    this.windowBuffer.push(w);
  }

  /** Commit if the last commit is older than the cadence. */
  flushIfDue(now_ms: number): void {
    // events and windows commit on the same cadence even while no samples arrive (a no-data alert)
    const sideDue = (this.pendingEvents.length > 0 || this.windowBuffer.length > 0) && now_ms - this.lastSideFlush_ms >= (this.opts.maxLatency_ms ?? 500);
    if (this.heldGap && now_ms - this.heldGap.at_ms >= GAP_HOLD_MS) this.releaseHeldGap();
    if (this.writer.flushIfDue(now_ms) || sideDue) this.flushSide(now_ms);
    // the heartbeat goes with the commits, about once a second, and on the same cadence while nothing arrives
    if (now_ms - this.lastBeat_ms >= HEARTBEAT_EVERY_MS) {
      this.lastBeat_ms = now_ms;
      heartbeat(this.db, this.runId, now_ms);
    }
  }

  /** Commit everything buffered now. */
  flush(): void {
    this.releaseHeldGap();
    this.writer.flush();
    this.flushSide();
  }

  private flushSide(now_ms = Date.now()): void {
    this.lastSideFlush_ms = now_ms;
    if (this.pendingEvents.length) insertEvents(this.db, this.runId, this.pendingEvents.splice(0));
    if (this.windowBuffer.length) insertWindows(this.db, this.runId, this.windowBuffer.splice(0));
  }

  /** Set the run's start after the fact (import without --started-at). */
  setStartedAt(ms: number): void {
    this.startedAt_ms = ms;
    updateRunStartedAt(this.db, this.runId, ms);
  }

  /** Flush and mark the run complete (or interrupted). */
  close(status: 'complete' | 'interrupted' = 'complete'): void {
    if (this.closed) return;
    this.closed = true;
    this.flush();
    const end = (this.startedAt_ms ?? Date.now()) + this.lastT_s * 1000;
    try {
      endRun(this.db, this.runId, status, end);
    } finally {
      this.reserve.release();
    }
  }

  /**
   * Close the run as interrupted after the store failed (a full disk): commit
   * what still fits, then store `inc` and the end of the run in one small
   * transaction if the store can still take it, else only the end. Never
   * throws; says how far it got. Samples not committed are lost.
   */
  closeAfterFault(inc?: Incident): { samplesStored: number; samplesLost: number; eventStored: boolean; closed: boolean } {
    const appended = this.samples;
    if (!this.closed) {
      this.closed = true;
      try {
        this.flush();
      } catch {
        // what did not fit is lost; the last commit stands
      }
    }
    const stored = this.committedSamples();
    const lost = Math.max(0, appended - stored);
    const last_s = this.committedLastTime_s() ?? 0;
    const end = (this.startedAt_ms ?? Date.now()) + last_s * 1000;
    const e = inc && this.eventAt(inc, last_s, lost);
    let eventStored = false;
    let closed = false;
    const closing = () => this.db.transaction(() => {
      if (e) insertEvents(this.db, this.runId, [e]);
      endRun(this.db, this.runId, 'interrupted', end);
    }).immediate();
    // first as things are, then with the reserve given back, then the end alone
    for (const attempt of [() => true, () => this.reserve.release()]) {
      if (closed || !attempt()) continue;
      try {
        closing();
        eventStored = e !== undefined;
        closed = true;
      } catch {
        // no room yet
      }
    }
    if (!closed) {
      try {
        endRun(this.db, this.runId, 'interrupted', end);
        closed = true;
      } catch {
        // nothing fits any more: the next `record` marks the run interrupted (it looks crashed)
      }
    }
    this.reserve.release();
    if (e && eventStored) this.opts.onEvent?.(e);
    return { samplesStored: stored, samplesLost: lost, eventStored, closed };
  }

  /** An incident as an event at run time `t_s`, with the count of samples lost. */
  private eventAt(inc: Incident, t_s: number, lost: number): StoredEvent {
    const base = this.startedAt_ms ?? Date.now();
    return {
      t_s, t_ms: base + t_s * 1000, kind: inc.kind, severity: inc.severity, message: inc.message,
      value: inc.value ?? null, threshold: inc.threshold ?? null, state: inc.state, data: { ...inc.data, samples_lost: lost },
    };
  }

  private committedSamples(): number {
    try {
      return (this.db.prepare('SELECT samples FROM runs WHERE id = ?').get(this.runId) as { samples: number }).samples;
    } catch {
      return 0;
    }
  }

  private committedLastTime_s(): number | undefined {
    try {
      const r = this.db.prepare('SELECT MAX(t1_s) AS t FROM sample_chunks WHERE run_id = ?').get(this.runId) as { t: number | null };
      return r.t ?? undefined;
    } catch {
      return undefined;
    }
  }
}

/** Heartbeat cadence of a run's recorder, ms (recorder-liveness.ts calls a heartbeat stale after 15 s). */
const HEARTBEAT_EVERY_MS = 1000;
