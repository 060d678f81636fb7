/** The decoder a station's `input` asks for. */
import type { ColumnRole } from '../src/domain/block.js';
import type { Station } from '../src/config/station.js';
import type { Decoder } from './decoder.js';
import { LinesDecoder } from './lines-decoder.js';
import { FramesDecoder } from './frames-decoder.js';

/** Options of makeDecoder. */
export interface MakeDecoderOptions {
  /** host monotonic clock, seconds (default performance.now()/1000); stamps lines that carry no time */
  hostClock?: () => number;
  /** the stream may start in the middle of a record (a serial port opened while the device talks): drop the first line (lines only; default false) */
  midStream?: boolean;
  /** samples per block at most (default 4096) */
  blockCap?: number;
}

/** The decoder a station's `input` asks for. */
export function makeDecoder(station: Station, opts: MakeDecoderOptions = {}): Decoder {
  const input = station.input;
  if (input.format === 'frames') {
    if (!input.channels) throw new TypeError('input.channels: is required for format "frames"');
    return new FramesDecoder({ channels: input.channels as { role: ColumnRole; scale: number }[], blockCap: opts.blockCap });
  }
  return new LinesDecoder({
    columns: input.columns as ColumnRole[] | undefined,
    separator: input.separator,
    clockWrap: input.clock_wrap,
    hostClock: opts.hostClock,
    midStream: opts.midStream,
    blockCap: opts.blockCap,
  });
}
