/**
 * Values that flow between the pipeline operators besides `AngleBlock`
 * (src/domain/block.ts).
 */

/** One analysis window: samples of one gap-free stretch spanning `windowPeriods` periods. */
export interface WindowData {
  /** window index within the run, from 0 */
  index: number;
  /** sample times, seconds (run time base), increasing */
  t: Float64Array;
  /** angle, radians */
  y: Float64Array;
  /** 1 = usable, 0 = masked (saturated, spike or invalid; FLAG_AFTER_GAP alone does not mask) */
  mask: Uint8Array;
  /** temperature, °C, per sample, when the source records temp_C */
  temp?: Float64Array;
  /** readout noise variance per input sample before decimation, rad², when the stream was decimated (condition.ts) */
  readoutVar?: Float64Array;
  /** time of the first and the last sample, seconds */
  t_start_s: number;
  t_end_s: number;
  /** the period estimate the window was cut with, seconds */
  periodHint_s: number;
}
