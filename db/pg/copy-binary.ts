/**
 * Rows in PostgreSQL's binary COPY format (the PostgreSQL manual, COPY, "Binary
 * Format"): an 11-byte signature, flags and header-extension length (int32
 * each), then per row an int16 field count and per field an int32 length
 * (−1 for NULL) and the value in the type's binary send form, big-endian;
 * an int16 −1 ends the data. Binary needs no escaping of the blobs and moves
 * doubles bit for bit, so the archive holds exactly the station's numbers.
 */

/** The column types we send, with the binary form of each. */
export type PgBinaryType = 'int4' | 'int8' | 'float8' | 'text' | 'bytea';

const SIGNATURE = Buffer.from('PGCOPY\n\xff\r\n\0', 'latin1');

/** Accumulates rows into buffers of about `partBytes`, handed out by take(). */
export class CopyBinaryWriter {
  private buf: Buffer;
  private p = 0;
  private readonly parts: Buffer[] = [];

  constructor(private readonly types: readonly PgBinaryType[], private readonly partBytes = 1 << 20) {
    this.buf = Buffer.allocUnsafe(Math.max(partBytes, 64));
    SIGNATURE.copy(this.buf, 0);
    this.buf.writeInt32BE(0, 11);
    this.buf.writeInt32BE(0, 15);
    this.p = 19;
  }

  private room(n: number): void {
    if (this.p + n <= this.buf.length) return;
    if (this.p > 0) this.parts.push(this.buf.subarray(0, this.p));
    this.buf = Buffer.allocUnsafe(Math.max(this.partBytes, n));
    this.p = 0;
  }

  /** Append one row; `values[i]` null or undefined is SQL NULL. */
  row(values: readonly unknown[]): void {
    const types = this.types;
    if (values.length !== types.length) throw new RangeError(`copy row: ${values.length} values for ${types.length} columns`);
    this.room(2);
    this.buf.writeInt16BE(types.length, this.p);
    this.p += 2;
    for (let i = 0; i < types.length; i++) {
      const v = values[i];
      if (v === null || v === undefined) {
        this.room(4);
        this.buf.writeInt32BE(-1, this.p);
        this.p += 4;
        continue;
      }
      switch (types[i]) {
        case 'int4':
          this.room(8);
          this.buf.writeInt32BE(4, this.p);
          this.buf.writeInt32BE(Number(v), this.p + 4);
          this.p += 8;
          break;
        case 'int8':
          this.room(12);
          this.buf.writeInt32BE(8, this.p);
          this.buf.writeBigInt64BE(BigInt(Math.round(Number(v))), this.p + 4);
          this.p += 12;
          break;
        case 'float8':
          this.room(12);
          this.buf.writeInt32BE(8, this.p);
          this.buf.writeDoubleBE(Number(v), this.p + 4);
          this.p += 12;
          break;
        case 'text': {
          const s = String(v);
          const n = Buffer.byteLength(s, 'utf8');
          this.room(4 + n);
          this.buf.writeInt32BE(n, this.p);
          this.buf.write(s, this.p + 4, n, 'utf8');
          this.p += 4 + n;
          break;
        }
        case 'bytea': {
          const b = v as Uint8Array;
          this.room(4 + b.length);
          this.buf.writeInt32BE(b.length, this.p);
          this.buf.set(b, this.p + 4);
          this.p += 4 + b.length;
          break;
        }
      }
    }
  }

  /** Buffers complete so far (without the trailer), emptied from the writer. */
  take(): Buffer[] {
    return this.parts.splice(0);
  }

  /** Everything left, with the end-of-data trailer. */
  finish(): Buffer[] {
    this.room(2);
    this.buf.writeInt16BE(-1, this.p);
    this.p += 2;
    this.parts.push(this.buf.subarray(0, this.p));
    this.buf = Buffer.alloc(0);
    this.p = 0;
    return this.parts.splice(0);
  }
}
