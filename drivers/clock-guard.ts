/**
 * Guard against bad device timestamps, between the decoder and the store:
 * wrong times are worse than none, so a sample whose time cannot be trusted
 * is kept but masked, and the times handed on never go backwards.
 *
 * The rule (docs/architecture.md, "Bad device times"), with `lim` =
 * `stepFactor` × the running sample interval (median of recent steps):
 *  - a step in (0, lim] from the last trusted time is normal;
 *  - any other time — not finite, repeated, earlier than the last trusted
 *    one, or further ahead than `lim` — is *suspect*, and is judged by the
 *    `confirm` samples that follow it: when they go on from it in regular
 *    steps (each positive, none more than `stepFactor` times another) and do
 *    not just as well go on from the last trusted time, the suspect is
 *    believed:
 *      · a leap ahead of at most `maxGap_s` is a real gap (the samples are
 *        kept; `clean` marks the gap);
 *      · a step back, or a leap beyond `maxGap_s`, is a step of the device
 *        clock (a restart, a clock set): times continue one interval after
 *        the last trusted sample, the first one after the step carries
 *        FLAG_AFTER_GAP so no window spans it, and a `clock-note` says by how
 *        much the clock stepped (the real time across the step is unknown);
 *    otherwise the suspect alone is a fault: FLAG_INVALID, stored at the last
 *    trusted time as a placeholder, reported in a `clock-fault` incident
 *    (counts by cause and the offending values), and the samples after it are
 *    judged against the last trusted time again.
 *  - At the start there is no trusted time yet: the first sample is trusted
 *    once `confirm` regular steps follow it (within 2 × `confirm` samples;
 *    repeated times among them are skipped, and masked once the first time
 *    is trusted). Faulty samples before that have
 *    no place on the time axis: they are dropped and counted.
 *  - At the end of input a suspect needs at least one follower.
 *
 * Only blocks on a device clock are judged; host-stamped blocks are monotonic
 * by construction and pass unchanged. Normal blocks pass without a copy; a
 * suspect holds the samples after it until it is decided (at most `confirm`).
 */
import { FLAG_AFTER_GAP, FLAG_INVALID, type AngleBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';
import { median, medianSelect } from '../src/analysis/median.js';

/** Options of ClockGuard. */
export interface ClockGuardOptions {
  /** a step beyond this many running intervals (or not forward) is suspect; default 5, as `clean`'s gap factor */
  stepFactor?: number;
  /** samples after a suspect that must go on from it for it to be believed; default 3 */
  confirm?: number;
  /** a confirmed leap ahead longer than this is a clock step, not a gap, s; default one year */
  maxGap_s?: number;
  /** at most one clock-fault incident per this much host time, ms; default 1000 */
  reportInterval_ms?: number;
}

/** One output block and which of its samples are clock faults (1), or null when none. */
export interface GuardedBlock {
  block: AngleBlock;
  faults: Uint8Array | null;
}

/** What one push or flush hands on. */
export interface GuardResult {
  blocks: GuardedBlock[];
  incidents: Incident[];
}

/** Running counts of the guard (over its life). */
export interface ClockGuardStats {
  /** samples masked as clock faults (stored with FLAG_INVALID) */
  masked: number;
  /** faulty samples before the first trusted time (not stored) */
  dropped: number;
  /** clock steps (back, or absurdly far ahead) re-timed */
  steps: number;
}

type Cause = 'not_finite' | 'repeated' | 'backwards' | 'leap';
const RING = 32;
const MAX_VALUES = 5;

/** Masks bad device times and keeps the time axis increasing; see the file comment. */
export class ClockGuard {
  readonly stats: ClockGuardStats = { masked: 0, dropped: 0, steps: 0 };
  private readonly factor: number;
  private readonly confirm: number;
  private readonly maxGap_s: number;
  private readonly interval_ms: number;
  /** last trusted time (after the offset), undefined before the first */
  private tg: number | undefined;
  /** running sample interval, s */
  private dt = 0;
  /** added to every raw time since the last clock step */
  private offset = 0;
  private readonly ring = new Float64Array(RING);
  private readonly scratch = new Float64Array(RING);
  private ringN = 0;
  private ringAt = 0;
  /** samples waiting for a decision (a block of the same shape, or undefined) */
  private held: AngleBlock | undefined;
  // clock-fault report being gathered
  private counts: Record<Cause, number> = { not_finite: 0, repeated: 0, backwards: 0, leap: 0 };
  private pendingDropped = 0;
  private values: number[] = [];
  private firstT: number | undefined;
  private lastReport_ms = -Infinity;

  constructor(opts: ClockGuardOptions = {}) {
    this.factor = opts.stepFactor ?? 5;
    this.confirm = opts.confirm ?? 3;
    this.maxGap_s = opts.maxGap_s ?? 365.25 * 86400;
    this.interval_ms = opts.reportInterval_ms ?? 1000;
    if (!(this.factor > 1)) throw new RangeError(`stepFactor: must be > 1 (got ${opts.stepFactor})`);
    if (!Number.isInteger(this.confirm) || this.confirm < 1) throw new RangeError(`confirm: must be an integer ≥ 1 (got ${opts.confirm})`);
    if (!(this.maxGap_s > 0)) throw new RangeError(`maxGap_s: must be > 0 (got ${opts.maxGap_s})`);
  }

  /** Judge one converted block. */
  push(b: AngleBlock): GuardResult {
    const out: GuardResult = { blocks: [], incidents: [] };
    if (b.clock !== 'device') {
      if (this.held) this.run(this.takeHeld(), true, out, b.host_ms);
      if (b.n) out.blocks.push({ block: b, faults: null });
    } else {
      this.run(this.held ? concat(this.takeHeld(), b) : b, false, out, b.host_ms);
    }
    this.report(out.incidents, b.host_ms, false);
    return out;
  }

  /** End of input: decide what is held with the followers there are; report what is pending. */
  flush(host_ms: number): GuardResult {
    const out: GuardResult = { blocks: [], incidents: [] };
    if (this.held) this.run(this.takeHeld(), true, out, host_ms);
    this.report(out.incidents, host_ms, true);
    return out;
  }

  private takeHeld(): AngleBlock {
    const h = this.held!;
    this.held = undefined;
    return h;
  }

  /** Decide the samples of `b` in order; hand on the decided ones, hold the rest. */
  private run(b: AngleBlock, final: boolean, out: GuardResult, host_ms: number): void {
    const n = b.n;
    const src = b.t;
    // copies made only when something changes
    let t: Float64Array | undefined = this.offset !== 0 ? new Float64Array(n) : undefined;
    let flags: Uint8Array | undefined;
    let faults: Uint8Array | undefined;
    let keep: Uint8Array | undefined; // 0 = dropped (before the first trusted time)
    const setT = (i: number, v: number): void => {
      if (!t) t = Float64Array.from(src.subarray(0, n));
      t[i] = v;
    };
    const setFlag = (i: number, f: number): void => {
      if (!flags) flags = b.flags.slice(0, n);
      flags[i] |= f;
    };
    const fault = (i: number, cause: Cause, raw: number): void => {
      this.counts[cause]++;
      if (this.values.length < MAX_VALUES) this.values.push(raw);
      if (this.tg === undefined) {
        if (!keep) keep = new Uint8Array(n).fill(1);
        keep[i] = 0;
        this.stats.dropped++;
        this.pendingDropped++;
        return;
      }
      if (this.firstT === undefined) this.firstT = this.tg;
      if (!faults) faults = new Uint8Array(n);
      faults[i] = 1;
      setFlag(i, FLAG_INVALID);
      setT(i, this.tg); // placeholder: the time axis never goes back
      this.stats.masked++;
    };
    let i = 0;
    for (; i < n; i++) {
      const raw = src[i];
      let ti = raw + this.offset;
      const tg = this.tg;
      if (tg !== undefined) {
        const step = ti - tg;
        if (step > 0 && step <= this.factor * this.dt) {
          // the common case: the whole run of normal steps in a tight loop, on locals
          i = this.acceptRun(src, i, n, t) - 1;
          continue;
        }
        if (!Number.isFinite(ti)) {
          fault(i, 'not_finite', raw);
          continue;
        }
      } else if (!Number.isFinite(ti)) {
        fault(i, 'not_finite', raw);
        continue;
      }
      // a suspect (or the first sample): judged by the samples after it
      const avail = n - 1 - i;
      if (tg === undefined) {
        // the first trusted time: repeats among its followers are skipped (they are judged once it is trusted)
        const first = advancingSteps(src, i, Math.min(avail, 2 * this.confirm), this.confirm, this.offset, this.factor, final, avail >= 2 * this.confirm);
        if (first === WAIT) break;
        if (first === undefined && !(final && avail === 0)) {
          fault(i, 'leap', raw);
          continue;
        }
        this.tg = ti;
        this.dt = first ?? 0;
        this.ringN = 0;
        if (t) t[i] = ti;
        continue;
      }
      if (avail < this.confirm && !final) break;
      const k = Math.min(this.confirm, avail);
      const step = ti - tg;
      let steps = regularSteps(src, i, k, this.offset, this.factor);
      if (steps !== undefined) {
        // believed only if the followers do not just as well go on from the last trusted time
        // (a repeated or stray time between regular samples is a lone fault)
        const d = src[i + 1] + this.offset - tg;
        if (d > 0 && d <= this.factor * this.dt) steps = undefined;
      }
      if (steps === undefined) {
        fault(i, step === 0 ? 'repeated' : step < 0 ? 'backwards' : 'leap', raw);
        continue;
      }
      if (step > 0 && step <= this.maxGap_s) {
        // a real gap; the running interval restarts from the steps after it
        if (t) t[i] = ti;
        this.tg = ti;
        this.dt = steps;
        this.ringN = 0;
        continue;
      }
      // the device clock stepped: continue one interval after the last trusted sample
      const next = tg + this.dt;
      this.offset += next - ti;
      ti = next;
      this.stats.steps++;
      setT(i, ti);
      setFlag(i, FLAG_AFTER_GAP);
      this.tg = ti;
      out.incidents.push({
        kind: 'clock-note',
        severity: 'warning',
        t: ti,
        host_ms,
        message: step < 0
          ? `device clock went back by ${(-step).toPrecision(6)} s; times continue one interval after the last sample (the real time across the step is unknown)`
          : `device clock leapt ahead by ${step.toPrecision(6)} s (more than ${this.maxGap_s} s: not a gap); times continue one interval after the last sample`,
        value: -step,
        data: { step_s: step, device_t_s: raw, rebase_s: this.offset },
      });
      // the samples after it are on the new base: copy them from here on
      if (!t) t = Float64Array.from(src.subarray(0, n));
    }
    // samples i… wait for a decision; they keep their raw times (the offset is applied when decided)
    if (i < n) this.held = slice(b, i, n);
    const m = i;
    if (m === 0) return;
    const tt: Float64Array = t ?? src;
    if (keep) {
      const idx: number[] = [];
      for (let j = 0; j < m; j++) if (keep[j]) idx.push(j);
      if (idx.length === 0) return;
      const bb = pick(b, idx, tt, flags);
      out.blocks.push({ block: bb, faults: faults ? Uint8Array.from(idx, (j) => faults![j]) : null });
      return;
    }
    const whole = m === n && !t && !flags;
    const block: AngleBlock = whole ? b : {
      n: m, t: tt.subarray(0, m), clock: b.clock, host_ms: b.host_ms,
      angle: b.angle.subarray(0, m), flags: (flags ?? b.flags).subarray(0, m),
      channels: sub(b.channels, 0, m),
    };
    out.blocks.push({ block, faults: faults ? faults.subarray(0, m) : null });
  }

  /**
   * Trust src[i…] while each steps normally from the last trusted time, keeping
   * the running interval (median of the last RING steps); returns the index of
   * the first sample that does not (or n). src[i] must step normally.
   */
  private acceptRun(src: Float64Array, i: number, n: number, t: Float64Array | undefined): number {
    const ring = this.ring, off = this.offset;
    let last = this.tg!, at = this.ringAt, rn = this.ringN, lim = this.factor * this.dt;
    let j = i;
    for (; j < n; j++) {
      const tj = src[j] + off;
      const step = tj - last;
      if (!(step > 0 && step <= lim)) break;
      if (t) t[j] = tj;
      last = tj;
      ring[at] = step;
      at = at + 1 === RING ? 0 : at + 1;
      if (++rn % RING === 0) {
        // selection on a copy: the ring keeps its order
        this.scratch.set(ring);
        this.dt = medianSelect(this.scratch);
        lim = this.factor * this.dt;
      }
    }
    this.tg = last;
    this.ringAt = at;
    this.ringN = rn;
    return j;
  }

  /** Emit the gathered clock-fault report when due (always when forced). */
  private report(out: Incident[], host_ms: number, force: boolean): void {
    const c = this.counts;
    const n = c.not_finite + c.repeated + c.backwards + c.leap;
    if (n === 0) return;
    if (!force && (host_ms - this.lastReport_ms < this.interval_ms || this.tg === undefined)) return;
    const parts = ([['repeated', 'repeated'], ['backwards', 'earlier than the last good time'], ['leap', 'too far ahead'], ['not_finite', 'not a finite number']] as const)
      .filter(([k]) => c[k] > 0).map(([k, what]) => `${c[k]} ${what}`);
    const dropped = this.pendingDropped;
    const values = this.values.map((v) => String(v));
    out.push({
      kind: 'clock-fault',
      severity: 'warning',
      t: this.firstT ?? this.tg,
      host_ms,
      message: `${n} sample${n === 1 ? '' : 's'} masked for a bad device time: ${parts.join(', ')}; ${n === 1 ? 'value' : 'values'} ${values.join(', ')}${n > values.length ? ', …' : ''}`
        + (dropped ? `; ${dropped} before the first good time not stored` : ''),
      value: n,
      data: { count: n, ...c, dropped, values: this.values.slice() },
    });
    this.counts = { not_finite: 0, repeated: 0, backwards: 0, leap: 0 };
    this.values = [];
    this.pendingDropped = 0;
    this.firstT = undefined;
    this.lastReport_ms = host_ms;
  }
}

/**
 * The median of the k steps after sample i when they are regular (each
 * positive, the largest at most `factor` times the smallest), else undefined.
 * k = 0 gives undefined.
 */
function regularSteps(t: Float64Array, i: number, k: number, offset: number, factor: number): number | undefined {
  if (k === 0) return undefined;
  const d: number[] = [];
  let prev = t[i] + offset;
  for (let j = 0; j < k; j++) {
    const tj = t[i + 1 + j] + offset;
    const s = tj - prev;
    if (!(s > 0) || !Number.isFinite(s)) return undefined;
    d.push(s);
    prev = tj;
  }
  return regular(d, factor);
}

/** The median of positive steps when none is more than `factor` times another, else undefined. */
function regular(d: number[], factor: number): number | undefined {
  const m = median(d); // sorts d
  return d[d.length - 1] > factor * d[0] ? undefined : m;
}

const WAIT = -1;

/**
 * Like regularSteps for the first trusted time, among the next `look` samples:
 * followers that repeat the previous time are skipped; `need` advancing ones
 * must follow regularly (at the end of input, `final`, as many as there are
 * will do, at least one). WAIT when the samples in view do not decide it yet
 * and more may come into view (`full`: the look-ahead is all there).
 */
function advancingSteps(t: Float64Array, i: number, look: number, need: number, offset: number, factor: number, final: boolean, full: boolean): number | undefined {
  const d: number[] = [];
  let prev = t[i] + offset;
  for (let j = 1; j <= look && d.length < need; j++) {
    const tj = t[i + j] + offset;
    const s = tj - prev;
    if (s === 0) continue;
    if (!(s > 0) || !Number.isFinite(s)) return undefined;
    d.push(s);
    prev = tj;
  }
  if (d.length < need && !final && !full) return WAIT;
  if (d.length < need && !(final && d.length > 0)) return undefined;
  return regular(d, factor);
}

function sub(ch: AngleBlock['channels'], s: number, e: number): AngleBlock['channels'] {
  const o: AngleBlock['channels'] = {};
  for (const [k, v] of Object.entries(ch)) if (v) o[k as keyof typeof o] = v.subarray(s, e);
  return o;
}

/** Samples [s, e) of b as a block of its own (copied: the caller's arrays may be reused). */
function slice(b: AngleBlock, s: number, e: number): AngleBlock {
  const ch: AngleBlock['channels'] = {};
  for (const [k, v] of Object.entries(b.channels)) if (v) ch[k as keyof typeof ch] = v.slice(s, e);
  return { n: e - s, t: b.t.slice(s, e), clock: b.clock, host_ms: b.host_ms, angle: b.angle.slice(s, e), flags: b.flags.slice(s, e), channels: ch };
}

/** The samples at `idx` of b, with times from `t` and flags from `flags` (or b's). */
function pick(b: AngleBlock, idx: number[], t: Float64Array, flags: Uint8Array | undefined): AngleBlock {
  const m = idx.length;
  const f = flags ?? b.flags;
  const ch: AngleBlock['channels'] = {};
  for (const [k, v] of Object.entries(b.channels)) if (v) ch[k as keyof typeof ch] = Float64Array.from(idx, (j) => v[j]);
  return {
    n: m, t: Float64Array.from(idx, (j) => t[j]), clock: b.clock, host_ms: b.host_ms,
    angle: Float64Array.from(idx, (j) => b.angle[j]), flags: Uint8Array.from(idx, (j) => f[j]), channels: ch,
  };
}

/** Two blocks of the same channels end to end (held samples before a new block). */
function concat(a: AngleBlock, b: AngleBlock): AngleBlock {
  const n = a.n + b.n;
  const cat = <T extends Float64Array | Uint8Array>(x: T, y: T, make: (n: number) => T): T => {
    const r = make(n);
    r.set(x.subarray(0, a.n), 0);
    r.set(y.subarray(0, b.n), a.n);
    return r;
  };
  const ch: AngleBlock['channels'] = {};
  for (const [k, v] of Object.entries(b.channels)) {
    const av = a.channels[k as keyof typeof ch];
    if (v) ch[k as keyof typeof ch] = cat(av ?? new Float64Array(a.n).fill(NaN), v, (m) => new Float64Array(m));
  }
  return {
    n, t: cat(a.t, b.t, (m) => new Float64Array(m)), clock: b.clock, host_ms: b.host_ms,
    angle: cat(a.angle, b.angle, (m) => new Float64Array(m)), flags: cat(a.flags, b.flags, (m) => new Uint8Array(m)), channels: ch,
  };
}
