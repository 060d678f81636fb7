/**
 * A growable buffer of samples (time, value, flags and optional extra
 * channels) in typed arrays, addressed by absolute sample index since the
 * buffer was created. Appends copy whole blocks; `dropBefore` releases what no
 * later consumer needs, and storage is compacted in place so memory stays
 * bounded by the largest span held, not by the length of the run.
 */

/** Growable time/value/flags sample store with absolute indices. */
export class BlockBuffer {
  private tArr: Float64Array;
  private yArr: Float64Array;
  private fArr: Uint8Array;
  private readonly ch = new Map<string, Float64Array>();
  /** storage offset of the first held sample */
  private head = 0;
  /** number of held samples */
  private len = 0;
  /** absolute index of the first held sample */
  private first = 0;

  /** `initialCapacity` in samples (default 4096); grows by doubling. */
  constructor(initialCapacity = 4096) {
    const c = Math.max(16, initialCapacity | 0);
    this.tArr = new Float64Array(c);
    this.yArr = new Float64Array(c);
    this.fArr = new Uint8Array(c);
  }

  /** Absolute index of the first held sample. */
  get start(): number {
    return this.first;
  }

  /** Absolute index one past the last held sample. */
  get end(): number {
    return this.first + this.len;
  }

  /** Number of held samples. */
  get length(): number {
    return this.len;
  }

  /** Samples the storage can hold before it grows. */
  get capacity(): number {
    return this.tArr.length;
  }

  /** Names of the extra channels held. */
  channelNames(): string[] {
    return [...this.ch.keys()];
  }

  /**
   * Append samples [from, to) of a block. A channel missing from this block
   * but held already is filled with NaN; a new channel is back-filled with NaN.
   */
  append(
    t: Float64Array,
    y: Float64Array,
    flags: Uint8Array,
    channels?: Partial<Record<string, Float64Array>>,
    from = 0,
    to = t.length,
  ): void {
    const n = to - from;
    if (n <= 0) return;
    this.reserve(n);
    const at = this.head + this.len;
    this.tArr.set(t.subarray(from, to), at);
    this.yArr.set(y.subarray(from, to), at);
    this.fArr.set(flags.subarray(from, to), at);
    if (channels) {
      for (const [name, v] of Object.entries(channels)) {
        if (!v || this.ch.has(name)) continue;
        const a = new Float64Array(this.tArr.length).fill(NaN);
        this.ch.set(name, a);
      }
    }
    for (const [name, a] of this.ch) {
      const v = channels?.[name];
      if (v) a.set(v.subarray(from, to), at);
      else a.fill(NaN, at, at + n);
    }
    this.len += n;
  }

  /** Release every sample before absolute index `abs` (clamped to what is held). */
  dropBefore(abs: number): void {
    const k = Math.min(Math.max(abs - this.first, 0), this.len);
    this.head += k;
    this.len -= k;
    this.first += k;
    if (this.len === 0) this.head = 0;
  }

  /** Storage offset of absolute index `abs` into the arrays returned by `views` (valid until the next append). */
  offset(abs: number): number {
    return this.head + (abs - this.first);
  }

  /** Live views of the held samples (valid until the next append or drop). */
  views(): { t: Float64Array; y: Float64Array; flags: Uint8Array; channels: Record<string, Float64Array> } {
    const a = this.head;
    const b = this.head + this.len;
    const channels: Record<string, Float64Array> = {};
    for (const [name, v] of this.ch) channels[name] = v.subarray(a, b);
    return { t: this.tArr.subarray(a, b), y: this.yArr.subarray(a, b), flags: this.fArr.subarray(a, b), channels };
  }

  /** Time of absolute sample `abs`. */
  timeAt(abs: number): number {
    return this.tArr[this.head + abs - this.first];
  }

  /** Flags of absolute sample `abs`. */
  flagsAt(abs: number): number {
    return this.fArr[this.head + abs - this.first];
  }

  /** Copies of samples [from, to) (absolute indices). */
  copy(from: number, to: number): { t: Float64Array; y: Float64Array; flags: Uint8Array; channels: Record<string, Float64Array> } {
    const a = this.offset(from);
    const b = this.offset(to);
    const channels: Record<string, Float64Array> = {};
    for (const [name, v] of this.ch) channels[name] = v.slice(a, b);
    return { t: this.tArr.slice(a, b), y: this.yArr.slice(a, b), flags: this.fArr.slice(a, b), channels };
  }

  /** Drop every held sample; indices keep counting and the channels stay known (later appends fill them). */
  clear(): void {
    this.dropBefore(this.end);
  }

  /** Make room for n more samples: compact first, grow only if still short. */
  private reserve(n: number): void {
    const cap = this.tArr.length;
    if (this.head + this.len + n <= cap) return;
    // keep at least half the storage free after a move, so moves are amortised O(1) per sample
    let c = cap;
    while (this.len + n > c / 2) c *= 2;
    this.move(c);
  }

  /** Move the held samples to offset 0 of storage of capacity c (reallocating if c changes). */
  private move(c: number): void {
    const a = this.head;
    const b = this.head + this.len;
    const realloc = c !== this.tArr.length;
    const mv = <T extends Float64Array | Uint8Array>(arr: T, make: (n: number) => T): T => {
      if (realloc) {
        const next = make(c);
        next.set(arr.subarray(a, b));
        return next;
      }
      arr.copyWithin(0, a, b);
      return arr;
    };
    this.tArr = mv(this.tArr, (k) => new Float64Array(k));
    this.yArr = mv(this.yArr, (k) => new Float64Array(k));
    this.fArr = mv(this.fArr, (k) => new Uint8Array(k));
    for (const [name, v] of this.ch) this.ch.set(name, mv(v, (k) => new Float64Array(k)));
    this.head = 0;
  }
}
