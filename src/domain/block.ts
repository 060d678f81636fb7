/**
 * The unit of data on the one path from a device to the archive: a block of
 * samples held in typed arrays. Every stage works on whole blocks, never on
 * one sample at a time.
 */

/** Per-sample flag bits (a `Uint8Array` beside the values); bits combine. */
export const FLAG_SATURATED = 1; // detector overrun: value is not a valid angle
export const FLAG_SPIKE = 2; // marked by the despiker
export const FLAG_AFTER_GAP = 4; // first sample after a gap (a window never straddles it)
export const FLAG_INVALID = 8; // NaN or otherwise unusable

/** Channel roles shared by the `lines` columns and the `frames` channels (docs/wire.md). */
export const TIME_ROLES = ['t_s', 't_ms', 't_us'] as const;
export const VALUE_ROLES = [
  'angle_rad', 'counts', 'a', 'b', 'x_m', 'temp_C',
  // the apparatus configuration in force, a whole number per sample (a change starts a segment: `compare`)
  'state',
  'aux1', 'aux2', 'aux3', 'aux4', 'aux5', 'aux6', 'aux7', 'aux8',
] as const;
export type TimeRole = (typeof TIME_ROLES)[number];
export type ValueRole = (typeof VALUE_ROLES)[number];
export type ColumnRole = TimeRole | ValueRole | '_';

/** What a decoder hands on: raw channel values with their times. */
export interface RawBlock {
  /** number of samples */
  n: number;
  /** sample times, seconds: the device clock unwrapped, or the host monotonic clock when the device has none */
  t: Float64Array;
  /** which clock `t` comes from */
  clock: 'device' | 'host';
  /** host wall time (ms since the Unix epoch, UTC) when the block's last byte arrived */
  host_ms: number;
  /** one array per value role present (raw units: counts, detector units, metres, °C …) */
  channels: Partial<Record<ValueRole, Float64Array>>;
}

/** A block after sensor conversion: the angle in radians and per-sample flags. */
export interface AngleBlock extends RawBlock {
  /** angle, radians */
  angle: Float64Array;
  /** FLAG_* bits per sample */
  flags: Uint8Array;
}
