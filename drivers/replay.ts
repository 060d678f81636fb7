/**
 * Replay of a recorded file through a decoder: a file holds exactly the bytes
 * that came over the line, so the same decoder serves both. Streams the file
 * in chunks; never loads it whole.
 */
import { open } from 'node:fs/promises';
import type { DecodeResult, Decoder } from './decoder.js';

/** Options of replayFile. */
export interface ReplayOptions {
  /** bytes per read (default 1 MiB) */
  chunkBytes?: number;
  /** called after each chunk with the bytes read so far and the file size */
  onProgress?: (bytesDone: number, bytesTotal: number) => void;
  /** host wall clock, ms since the epoch, stamped on each chunk (default Date.now) */
  now?: () => number;
}

/** Stream the file at path through decoder, handing each chunk's result (and the final flush) to sink. */
export async function replayFile(path: string, decoder: Decoder, sink: (r: DecodeResult) => void, opts: ReplayOptions = {}): Promise<void> {
  const chunkBytes = opts.chunkBytes ?? 1 << 20;
  if (!(Number.isInteger(chunkBytes) && chunkBytes >= 1)) throw new TypeError(`replayFile: chunkBytes must be an integer ≥ 1, got ${opts.chunkBytes}`);
  const now = opts.now ?? Date.now;
  const fh = await open(path, 'r');
  try {
    const total = (await fh.stat()).size;
    // decoders copy what they keep, so one buffer serves every read
    const buf = new Uint8Array(chunkBytes);
    let done = 0;
    for (;;) {
      const { bytesRead } = await fh.read(buf, 0, chunkBytes, null);
      if (bytesRead === 0) break;
      done += bytesRead;
      sink(decoder.push(buf.subarray(0, bytesRead), now()));
      opts.onProgress?.(done, total);
    }
    sink(decoder.flush(now()));
  } finally {
    await fh.close();
  }
}
