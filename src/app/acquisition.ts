/**
 * The one data path for every source (device, file, simulator): bytes →
 * decoder → sensor conversion → store, and the converted blocks on to the
 * analysis pipeline. Only where the bytes come from differs.
 */
import type { AngleBlock } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { Station } from '../config/station.js';
import type { Decoder, DecodeResult } from '../../drivers/decoder.js';
import { makeDecoder, type MakeDecoderOptions } from '../../drivers/make-decoder.js';
import { makeConverter } from '../../drivers/sensor.js';
import type { RunSession } from './run-session.js';

/** Where converted, run-time blocks go next (the analysis pipeline). */
export interface BlockSink {
  push(b: AngleBlock): void;
  /** the source has ended: flush the last windows */
  end(): Promise<void>;
}

export class Acquisition {
  readonly decoder: Decoder;
  private readonly convert: (b: import('../domain/block.js').RawBlock) => AngleBlock;

  constructor(station: Station, private readonly session: RunSession, private readonly sink?: BlockSink, opts?: MakeDecoderOptions) {
    this.decoder = makeDecoder(station, opts);
    this.convert = makeConverter(station.sensor);
  }

  /** Bytes as they arrived from the line, with the host time of arrival. */
  bytes(chunk: Uint8Array, host_ms: number): void {
    this.handle(this.decoder.push(chunk, host_ms));
  }

  /** The byte stream broke (device lost and back): drop the decoder's partial record. */
  resync(): void {
    this.decoder.resync();
  }

  /** An incident from the transport (reconnect, gap …). */
  incident(inc: Incident): void {
    this.session.incident(inc);
  }

  /** The source ended: flush the decoder's tail, then the pipeline. */
  async end(host_ms = Date.now()): Promise<void> {
    this.handle(this.decoder.flush(host_ms));
    await this.sink?.end();
    this.session.flush();
  }

  /** A decoder result (from `bytes`, or from a file replay that drives the decoder itself). */
  handle(r: DecodeResult): void {
    // blocks first: the first one fixes the run's time origin, which the incidents' times need
    for (const raw of r.blocks) {
      const ab = this.session.ingest(this.convert(raw));
      this.sink?.push(ab);
    }
    for (const inc of r.incidents) this.session.incident(inc);
  }
}
