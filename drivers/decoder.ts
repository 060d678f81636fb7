/**
 * What every wire decoder offers (docs/wire.md): bytes in, blocks and incidents out.
 */
import type { RawBlock } from '../src/domain/block.js';
import type { Incident } from '../src/domain/events.js';

/** Blocks decoded from one read, and the incidents it raised. */
export interface DecodeResult {
  blocks: RawBlock[];
  incidents: Incident[];
}

/** Counters a decoder keeps over its life. */
export interface DecoderStats {
  /** good samples (lines or frames) handed on */
  samples: number;
  /** rejected records: bad lines, bad frames, runs of unsynchronised bytes */
  badRecords: number;
  /** sequence jumps seen (frames only) */
  gaps: number;
  /** frames missing in those jumps (frames only) */
  lostFrames: number;
}

/** Bytes in, blocks out. A block holds what arrived in one push (capped). */
export interface Decoder {
  /** Decode one chunk of bytes that arrived at host wall time host_ms (ms since the epoch). */
  push(chunk: Uint8Array, host_ms: number): DecodeResult;
  /** End of input: decode what is left in the tail and report pending incidents. */
  flush(host_ms: number): DecodeResult;
  /**
   * The byte stream was broken (device lost and back): forget the carried
   * partial record, so its head is never joined to bytes from after the break.
   */
  resync(): void;
  readonly stats: DecoderStats;
}
