/**
 * The one data path for every source (device, file, simulator): bytes →
 * decoder → sensor conversion → clock guard → store, and the converted blocks
 * on to the analysis pipeline. Only where the bytes come from differs.
 */
import type { AngleBlock, RawBlock } from '../domain/block.js';
import type { Incident } from '../domain/events.js';
import type { Station } from '../config/station.js';
import type { Decoder, DecodeResult } from '../../drivers/decoder.js';
import { makeDecoder, type MakeDecoderOptions } from '../../drivers/make-decoder.js';
import { makeConverter } from '../../drivers/sensor.js';
import { ClockGuard, type GuardResult } from '../../drivers/clock-guard.js';
import type { RunSession } from './run-session.js';

/** Where converted, run-time blocks go next (the analysis pipeline). */
export interface BlockSink {
  push(b: AngleBlock): void;
  /** the source has ended: flush the last windows */
  end(): Promise<void>;
}

/** Options of Acquisition: the decoder's, and whether the bytes come from a live line. */
export interface AcquisitionOptions extends MakeDecoderOptions {
  /**
   * a live line (record, demo): a partial record left when it ends was cut off
   * mid-way and is dropped as torn, never decoded (default false: a file's last
   * line without its line end is still a line)
   */
  live?: boolean;
}

export class Acquisition {
  readonly decoder: Decoder;
  /** bad device times are masked here, before the store (drivers/clock-guard.ts) */
  readonly clock = new ClockGuard();
  private readonly convert: (b: RawBlock) => AngleBlock;
  private readonly live: boolean;

  constructor(station: Station, private readonly session: RunSession, private readonly sink?: BlockSink, opts: AcquisitionOptions = {}) {
    const { live, ...decoderOpts } = opts;
    this.decoder = makeDecoder(station, decoderOpts);
    this.convert = makeConverter(station.sensor);
    this.live = live ?? false;
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

  /** The source ended: flush the decoder's tail (a live line's is torn: dropped), the clock guard, then the pipeline. */
  async end(host_ms = Date.now()): Promise<void> {
    this.finishInput(host_ms);
    await this.endAnalysis();
    this.session.flush();
  }

  /** Let the pipeline finish its last windows and the alert sinks their deliveries. */
  async endAnalysis(): Promise<void> {
    await this.sink?.end();
  }

  /** The input is over: decode (or, live, drop) the tail and decide the samples the clock guard holds. */
  finishInput(host_ms = Date.now()): void {
    if (this.live) this.decoder.resync();
    this.handle(this.decoder.flush(host_ms));
    this.guarded(this.clock.flush(host_ms));
  }

  /** A decoder result (from `bytes`, or from a file replay that drives the decoder itself). */
  handle(r: DecodeResult): void {
    for (const raw of r.blocks) this.guarded(this.clock.push(this.convert(raw)));
    for (const inc of r.incidents) this.session.incident(inc);
  }

  private guarded(g: GuardResult): void {
    // blocks first: the first one fixes the run's time origin, which the incidents' times need
    for (const { block, faults } of g.blocks) {
      const ab = this.session.ingest(block);
      // the store keeps clock faults (masked, at a placeholder time); the analysis never sees them
      const an = faults ? without(ab, faults) : ab;
      if (an.n > 0) this.sink?.push(an);
    }
    for (const inc of g.incidents) this.session.incident(inc);
  }
}

/** The block without the samples marked in `drop`. */
function without(b: AngleBlock, drop: Uint8Array): AngleBlock {
  let m = 0;
  for (let i = 0; i < b.n; i++) if (!drop[i]) m++;
  const t = new Float64Array(m), angle = new Float64Array(m), flags = new Uint8Array(m);
  const channels: AngleBlock['channels'] = {};
  const src = Object.entries(b.channels).filter((e): e is [keyof AngleBlock['channels'], Float64Array] => e[1] !== undefined);
  const dst = src.map(([k]) => (channels[k] = new Float64Array(m)));
  for (let i = 0, j = 0; i < b.n; i++) {
    if (drop[i]) continue;
    t[j] = b.t[i];
    angle[j] = b.angle[i];
    flags[j] = b.flags[i];
    for (let c = 0; c < src.length; c++) dst[c][j] = src[c][1][i];
    j++;
  }
  return { ...b, n: m, t, angle, flags, channels };
}
