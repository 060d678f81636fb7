/**
 * Decoder of the `lines` wire format (docs/wire.md, "lines"): text records ending in LF
 * or CRLF, `#` comments, `# columns:` declarations, one reading per line.
 * Parses the bytes directly (no string per line or field on the hot path).
 */
import { TIME_ROLES, VALUE_ROLES, type ColumnRole, type RawBlock, type ValueRole } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';
import { BadInputLimiter } from './bad-input-limiter.js';
import type { DecodeResult, Decoder, DecoderStats } from './decoder.js';
import { parseNumber, scanNumber, scanned } from './parse-number.js';
import { Unwrapper } from './unwrap.js';

/** Options of LinesDecoder. */
export interface LinesDecoderOptions {
  /** column roles in order (default: none until a `# columns:` line declares them) */
  columns?: ColumnRole[];
  /** field separator: ',', ';', a tab, or runs of spaces/tabs (default ',') */
  separator?: ',' | ';' | 'tab' | 'spaces';
  /** wrap period of the device clock, seconds (default: the clock does not wrap) */
  clockWrap?: number;
  /** longest accepted line, bytes without the line end (default 4096); longer lines are bad and never buffered whole */
  maxLineBytes?: number;
  /** samples per block at most (default 4096) */
  blockCap?: number;
  /** host monotonic clock, seconds, stamps lines without a time column (default performance.now()/1000) */
  hostClock?: () => number;
  /** the first line may be the torn end of a record: drop it and count it bad (default false) */
  midStream?: boolean;
}

const KIND_SKIP = -1;
const KIND_TIME = -2;
const ROLES = new Set<string>([...TIME_ROLES, ...VALUE_ROLES, '_']);
// divisors, not factors: 1001 / 1000 rounds to the double nearest 1.001, 1001 * 0.001 may not
const TIME_SCALE: Record<string, number> = { t_s: 1, t_ms: 1e3, t_us: 1e6 };
const SNIPPET = 80;
const latin1 = new TextDecoder('latin1');
const EMPTY = new Uint8Array(0);
const INCOMPLETE = -2;
const OTHER = -1;

/** Index of the next LF in buf[s, e), or −1. A plain loop: Uint8Array#indexOf costs more per call than a short line. */
function findLf(buf: Uint8Array, s: number, e: number): number {
  for (let i = s; i < e; i++) if (buf[i] === 10) return i;
  return -1;
}

/** Check a column list; returns the reason it cannot be used, or null. */
export function columnsProblem(columns: readonly string[]): string | null {
  if (columns.length === 0) return 'no columns listed';
  const seen = new Set<string>();
  let times = 0;
  for (const c of columns) {
    if (!ROLES.has(c)) return `unknown column role "${c}"`;
    if (c !== '_' && seen.has(c)) return `column "${c}" listed twice`;
    seen.add(c);
    if (c in TIME_SCALE) times++;
  }
  if (times > 1) return 'more than one time column';
  return null;
}

interface Layout {
  columns: ColumnRole[];
  kind: Int32Array;
  roles: ValueRole[];
  /** divisor turning the time column into seconds */
  timeScale: number;
  hasTime: boolean;
}

/** The `lines` decoder. */
export class LinesDecoder implements Decoder {
  readonly stats: DecoderStats = { samples: 0, badRecords: 0, gaps: 0, lostFrames: 0 };
  private layout: Layout | null = null;
  private readonly sep: number; // separator byte, or -1 for runs of blanks
  private readonly maxLine: number;
  private readonly blockCap: number;
  private readonly hostClock: () => number;
  private readonly clockWrap?: number;
  private unwrapper: Unwrapper | null = null;
  private readonly limiter = new BadInputLimiter('line');
  /** incidents raised between pushes (by resync), handed on with the next result */
  private readonly carried: Incident[] = [];
  // partial line carried between pushes (at most maxLine bytes kept)
  private tail: Uint8Array;
  private tailLen = 0;
  private tailOver = false; // the carried line is already longer than maxLine
  private dropFirst: boolean;
  private lineNo = 0;
  private lastT: number | undefined;
  // host stamping of lines without a time column
  private hostPrev: number;
  private hostStep = 0;
  private hostNow = 0;
  private hostLines = 0;
  private hostReady = false;
  private lineInPush = 0;
  private chunk: Uint8Array = new Uint8Array(0);
  private flushing = false;
  // current push
  private out: DecodeResult = { blocks: [], incidents: [] };
  private host_ms = 0;
  private n = 0;
  private cap = 0;
  private t = new Float64Array(0);
  private chans: Float64Array[] = [];
  private remaining = 0; // bytes of the push not yet parsed, to size blocks

  constructor(opts: LinesDecoderOptions = {}) {
    const sep = opts.separator ?? ',';
    this.sep = sep === 'tab' ? 9 : sep === 'spaces' ? -1 : sep === ';' ? 59 : sep === ',' ? 44 : NaN;
    if (Number.isNaN(this.sep)) throw new TypeError(`LinesDecoder: separator must be one of ",", ";", "tab", "spaces", got ${JSON.stringify(sep)}`);
    this.maxLine = opts.maxLineBytes ?? 4096;
    this.blockCap = opts.blockCap ?? 4096;
    if (!(this.maxLine >= 16)) throw new TypeError(`LinesDecoder: maxLineBytes must be ≥ 16, got ${opts.maxLineBytes}`);
    if (!(this.blockCap >= 1)) throw new TypeError(`LinesDecoder: blockCap must be ≥ 1, got ${opts.blockCap}`);
    if (opts.clockWrap !== undefined && !(opts.clockWrap > 0)) throw new TypeError(`LinesDecoder: clockWrap must be > 0 seconds, got ${opts.clockWrap}`);
    this.clockWrap = opts.clockWrap;
    this.hostClock = opts.hostClock ?? (() => performance.now() / 1000);
    this.tail = new Uint8Array(this.maxLine + 2);
    this.dropFirst = opts.midStream ?? false;
    this.hostPrev = this.hostClock();
    if (opts.columns) {
      const why = columnsProblem(opts.columns);
      if (why) throw new TypeError(`LinesDecoder: columns: ${why}`);
      this.setColumns(opts.columns);
    }
  }

  /** The column roles in force (null until declared). */
  get columns(): readonly ColumnRole[] | null {
    return this.layout ? this.layout.columns : null;
  }

  /** Decode one chunk; a line torn at its end is carried over to the next push. */
  push(chunk: Uint8Array, host_ms: number): DecodeResult {
    this.begin(host_ms, chunk.length);
    this.chunk = chunk;
    const len = chunk.length;
    let pos = 0;
    if (this.tailLen > 0 || this.tailOver) {
      const lf = findLf(chunk, 0, len);
      if (lf < 0) {
        this.keep(chunk, 0, len);
        return this.end();
      }
      this.keep(chunk, 0, lf);
      this.takeTail();
      pos = lf + 1;
    }
    const fast = this.sep >= 0;
    while (pos < len) {
      this.remaining = len - pos;
      if (fast) {
        const r = this.lineFast(chunk, pos, len);
        if (r >= 0) {
          pos = r + 1;
          continue;
        }
        if (r === INCOMPLETE) {
          this.keep(chunk, pos, len);
          break;
        }
      }
      const lf = findLf(chunk, pos, len);
      if (lf < 0) {
        this.keep(chunk, pos, len);
        break;
      }
      this.line(chunk, pos, lf);
      pos = lf + 1;
    }
    return this.end();
  }

  /**
   * The common case in one pass: a line of plain numbers (no blanks, at most
   * 19 significant digits, power of ten within ±22) separated by the separator
   * byte. Returns the index of its LF, INCOMPLETE when the chunk ends first,
   * or OTHER for anything else (the general path then takes the line).
   */
  private lineFast(buf: Uint8Array, s: number, len: number): number {
    const L = this.layout;
    if (L === null || this.dropFirst) return OTHER;
    const n = this.slot();
    const kind = L.kind;
    const ncol = kind.length;
    const chans = this.chans;
    const sep = this.sep;
    let tv = 0;
    let i = s;
    for (let col = 0; col < ncol; col++) {
      i = scanNumber(buf, i, len);
      // a number may go on in the next chunk; a line always ends in LF
      if (i >= len) return INCOMPLETE;
      const v = scanned.value;
      // not a number, or one the fast paths cannot decide: the general path takes the line
      if (v !== v) return OTHER;
      const ch = buf[i];
      // what follows: the separator, or the line end after the last field
      if (col < ncol - 1) {
        if (ch !== sep) return OTHER;
        i++;
      } else if (ch === 13) {
        if (++i >= len) return INCOMPLETE;
        if (buf[i] !== 10) return OTHER;
      } else if (ch !== 10) return OTHER;
      const k = kind[col];
      if (k >= 0) chans[k][n] = v;
      else if (k === KIND_TIME) tv = v;
    }
    if (i - s > this.maxLine) return OTHER;
    this.lineNo++;
    this.lineInPush++;
    this.commit(L, n, tv, this.lineInPush - 1);
    return i;
  }

  /**
   * Drop the carried partial line: the stream broke (a reconnect) or a live
   * line ended before the line did. Such a line is torn, never decoded — a
   * torn `12.3456,1.2` would otherwise parse as a wrong sample — and it is
   * counted and reported as bad input with the next push or flush. The first
   * line after a break is kept: a torn one fails to parse and is counted as
   * bad input like any other.
   */
  resync(): void {
    if (this.tailLen > 0 || this.tailOver) {
      this.lineNo++;
      this.bad(this.tail, 0, this.tailLen, 'torn line: the stream broke off before its end', this.carried);
    }
    this.tailLen = 0;
    this.tailOver = false;
  }

  /** End of input: the carried line (a last line without LF) is decoded; held incidents are reported. */
  flush(host_ms: number): DecodeResult {
    this.begin(host_ms, this.tailLen);
    this.flushing = true;
    // a last line without its line end is still a line (files often lack the final LF)
    if (this.tailLen > 0 || this.tailOver) this.takeTail();
    this.limiter.due(this.out.incidents, host_ms, true);
    this.flushing = false;
    return this.end();
  }

  private begin(host_ms: number, bytes: number): void {
    this.out = { blocks: [], incidents: [] };
    this.host_ms = host_ms;
    this.remaining = bytes;
    this.n = 0;
    this.cap = 0;
    this.lineInPush = 0;
    this.hostReady = false;
    this.chunk = EMPTY;
    if (this.carried.length) this.out.incidents.push(...this.carried.splice(0));
    this.limiter.due(this.out.incidents, host_ms);
  }

  private end(): DecodeResult {
    this.finishBlock();
    this.chunk = EMPTY; // hold no reference to the caller's buffer
    return this.out;
  }

  /**
   * Host stamps for lines without a time column: the lines ending in this
   * push are spread evenly over the time since the previous push, ending now.
   */
  private stampHost(): void {
    const chunk = this.chunk;
    let k = this.flushing ? 1 : 0;
    for (let i = 0; i < chunk.length; i++) if (chunk[i] === 10) k++;
    const now = this.hostClock();
    this.hostNow = now;
    this.hostLines = k;
    this.hostStep = k > 0 ? Math.max(0, now - this.hostPrev) / k : 0;
    this.hostPrev = now;
    this.hostReady = true;
  }

  /** Carry bytes[s, e) over to the next push, keeping at most maxLine bytes. */
  private keep(bytes: Uint8Array, s: number, e: number): void {
    const room = this.maxLine + 1 - this.tailLen; // one byte over the limit marks the line as too long
    const take = Math.min(room, e - s);
    if (take > 0) {
      this.tail.set(bytes.subarray(s, s + take), this.tailLen);
      this.tailLen += take;
    }
    if (e - s > take) this.tailOver = true;
  }

  private takeTail(): void {
    const over = this.tailOver;
    const len = this.tailLen;
    this.tailLen = 0;
    this.tailOver = false;
    this.remaining = len;
    if (over) {
      this.lineNo++;
      this.bad(this.tail, 0, len, `line longer than ${this.maxLine} bytes`);
      this.lineInPush++;
      return;
    }
    this.line(this.tail, 0, len);
  }

  private setColumns(columns: ColumnRole[]): void {
    const kind = new Int32Array(columns.length);
    const roles: ValueRole[] = [];
    let timeScale = 1;
    let hasTime = false;
    columns.forEach((c, i) => {
      if (c === '_') kind[i] = KIND_SKIP;
      else if (c in TIME_SCALE) {
        kind[i] = KIND_TIME;
        timeScale = TIME_SCALE[c];
        hasTime = true;
      } else {
        kind[i] = roles.length;
        roles.push(c as ValueRole);
      }
    });
    this.layout = { columns: [...columns], kind, roles, timeScale, hasTime };
    this.unwrapper = hasTime && this.clockWrap !== undefined ? new Unwrapper(this.clockWrap) : null;
  }

  /** One line bytes[s, e) without its LF. */
  private line(buf: Uint8Array, s: number, e: number): void {
    this.lineNo++;
    const lineInPush = this.lineInPush++;
    if (e > s && buf[e - 1] === 13) e--;
    if (this.dropFirst) {
      // opened mid-stream: the first line is usually the tail of one; a comment
      // cannot be misread as data, anything else is dropped quietly (expected,
      // so no bad-input incident), counted in stats
      this.dropFirst = false;
      if (e > s && buf[s] === 35) {
        this.comment(buf, s, e);
        return;
      }
      if (e > s) this.stats.badRecords++;
      return;
    }
    if (e - s > this.maxLine) {
      this.bad(buf, s, e, `line longer than ${this.maxLine} bytes`);
      return;
    }
    if (s === e) return; // empty line
    if (buf[s] === 35) {
      this.comment(buf, s, e);
      return;
    }
    const L = this.layout;
    if (!L) {
      this.bad(buf, s, e, 'no columns declared (station file or "# columns:" line)');
      return;
    }
    const n = this.slot();
    const kind = L.kind;
    const ncol = kind.length;
    const chans = this.chans;
    const sep = this.sep;
    let tv = NaN;
    let p = s;
    // sep < 0: runs of blanks separate fields, and leading and trailing blanks are ignored
    const blanks = sep < 0;
    const isBlank = (c: number) => c === 32 || c === 9;
    for (let c = 0; c < ncol; c++) {
      if (blanks) while (p < e && isBlank(buf[p])) p++;
      if (p >= e && (blanks || c > 0)) return this.bad(buf, s, e, `expected ${ncol} fields, got ${c}`);
      if (!blanks && c > 0) p++; // the separator
      let q = p;
      if (blanks) while (q < e && !isBlank(buf[q])) q++;
      else while (q < e && buf[q] !== sep) q++;
      const k = kind[c];
      if (k !== KIND_SKIP) {
        const v = parseNumber(buf, p, q);
        if (v !== v) return this.bad(buf, s, e, `field ${c + 1} (${L.columns[c]}) is not a number`);
        if (k === KIND_TIME) tv = v;
        else chans[k][n] = v;
      }
      p = q;
    }
    if (blanks) while (p < e && isBlank(buf[p])) p++;
    if (p < e) return this.bad(buf, s, e, `expected ${ncol} fields, got more`);
    this.commit(L, n, tv, lineInPush);
  }

  /** Accept the parsed line as sample n: its time, then count it. */
  private commit(L: Layout, n: number, tv: number, lineInPush: number): void {
    let t: number;
    if (L.hasTime) {
      t = L.timeScale === 1 ? tv : tv / L.timeScale;
      if (this.unwrapper !== null) t = this.unwrapper.next(t);
    } else {
      if (!this.hostReady) this.stampHost();
      t = this.hostNow - this.hostStep * (this.hostLines - 1 - lineInPush);
    }
    this.t[n] = t;
    this.lastT = t;
    this.n = n + 1;
    this.stats.samples++;
  }

  private comment(buf: Uint8Array, s: number, e: number): void {
    // only `# columns:` lines matter; comments are rare, so a string is fine here
    if (e - s < 9) return;
    const text = latin1.decode(buf.subarray(s, e));
    const m = /^#\s*columns\s*:\s*(.*)$/i.exec(text);
    if (!m) return;
    const cols = m[1].split(/[\s,;]+/).filter((x) => x.length > 0);
    const why = columnsProblem(cols);
    if (why) {
      this.bad(buf, s, e, `"# columns:" line ignored: ${why}`);
      return;
    }
    this.finishBlock(); // a block has one set of channels
    this.setColumns(cols as ColumnRole[]);
  }

  private bad(buf: Uint8Array, s: number, e: number, reason: string, out: Incident[] = this.out.incidents): void {
    this.stats.badRecords++;
    // never more than maxLine bytes, so a long line gives the same snippet whether or not it was carried over
    const end = Math.min(e, s + Math.min(SNIPPET, this.maxLine));
    let snippet = '';
    for (let i = s; i < end; i++) {
      const c = buf[i];
      snippet += c >= 32 && c < 127 ? String.fromCharCode(c) : `\\x${c.toString(16).padStart(2, '0')}`;
    }
    if (e > end) snippet += '…';
    this.limiter.report(out, this.host_ms, reason, snippet, this.lineNo, this.lastT);
  }

  /** Index of the next sample in the current block, starting a new block when it is full. */
  private slot(): number {
    if (this.n === this.cap) this.newBlock();
    return this.n;
  }

  private newBlock(): void {
    this.finishBlock();
    const L = this.layout!;
    // a line holds at least two bytes per column, so this bounds the lines left in the push
    const est = Math.floor(this.remaining / (2 * L.kind.length)) + 1;
    const cap = Math.max(1, Math.min(this.blockCap, est));
    this.cap = cap;
    this.n = 0;
    this.t = new Float64Array(cap);
    this.chans = L.roles.map(() => new Float64Array(cap));
  }

  private finishBlock(): void {
    const n = this.n;
    if (n > 0 && this.layout) {
      const L = this.layout;
      const channels: Partial<Record<ValueRole, Float64Array>> = {};
      L.roles.forEach((r, i) => (channels[r] = n === this.cap ? this.chans[i] : this.chans[i].subarray(0, n)));
      const block: RawBlock = {
        n,
        t: n === this.cap ? this.t : this.t.subarray(0, n),
        clock: L.hasTime ? 'device' : 'host',
        host_ms: this.host_ms,
        channels,
      };
      this.out.blocks.push(block);
    }
    this.n = 0;
    this.cap = 0;
  }
}
