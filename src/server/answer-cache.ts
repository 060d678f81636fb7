/** JSON answers kept by key, each valid while its stamp (what it was computed from) is unchanged. */

/** A small least-recently-used set of answers; callers asking for the same answer at once share one computation. */
export class AnswerCache {
  private readonly m = new Map<string, { stamp: string; text: Promise<string>; size: number }>();
  private bytes = 0;

  /**
   * @param max answers kept (default 64)
   * @param maxChars characters kept in all (default 64 M: a week's windows answer is about 10 M)
   */
  constructor(private readonly max = 64, private readonly maxChars = 64 << 20) {}

  /** The answer for `key` as JSON text: the kept one when `stamp` matches, else `make()`'s, kept for next time. */
  get(key: string, stamp: string, make: () => Promise<unknown>): Promise<string> {
    const hit = this.m.get(key);
    if (hit && hit.stamp === stamp) {
      this.m.delete(key);
      this.m.set(key, hit);
      return hit.text;
    }
    if (hit) this.drop(key);
    const text = make().then((v) => JSON.stringify(v));
    const entry = { stamp, text, size: 0 };
    this.m.set(key, entry);
    text.then(
      (t) => {
        if (this.m.get(key) !== entry) return;
        entry.size = t.length;
        this.bytes += t.length;
        this.trim();
      },
      // a failed computation is not kept: the next request tries again
      () => this.m.get(key) === entry && this.m.delete(key),
    );
    this.trim();
    return text;
  }

  private drop(key: string): void {
    const e = this.m.get(key);
    if (!e) return;
    this.bytes -= e.size;
    this.m.delete(key);
  }

  /** Forget the least recently used answers beyond the limits (the newest is always kept). */
  private trim(): void {
    while (this.m.size > 1 && (this.m.size > this.max || this.bytes > this.maxChars)) this.drop(this.m.keys().next().value!);
  }
}
