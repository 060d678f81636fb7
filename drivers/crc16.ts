/**
 * CRC-16/CCITT-FALSE (poly 0x1021, init 0xFFFF, no reflection, no final xor),
 * the checksum of a `frames` record (docs/wire.md). Table-driven: two bytes per
 * step through a 65536-entry table built from the one-byte table, then one
 * byte for an odd length.
 */

const TABLE = (() => {
  const t = new Uint16Array(256);
  for (let i = 0; i < 256; i++) {
    let c = i << 8;
    for (let k = 0; k < 8; k++) c = c & 0x8000 ? ((c << 1) ^ 0x1021) & 0xffff : (c << 1) & 0xffff;
    t[i] = c;
  }
  return t;
})();

// Two one-byte steps depend only on v = crc ^ (b0 << 8 | b1):
// crc'' = ((T[v >> 8] & 0xff) << 8) ^ T[(v & 0xff) ^ (T[v >> 8] >> 8)]
const TABLE2 = (() => {
  const t = new Uint16Array(65536);
  for (let v = 0; v < 65536; v++) {
    const h = TABLE[v >>> 8];
    t[v] = ((h & 0xff) << 8) ^ TABLE[(v & 0xff) ^ (h >>> 8)];
  }
  return t;
})();

/** CRC-16/CCITT-FALSE of bytes[start, end). */
export function crc16CcittFalse(bytes: Uint8Array, start = 0, end = bytes.length): number {
  let crc = 0xffff;
  let i = start;
  for (; i + 1 < end; i += 2) crc = TABLE2[crc ^ ((bytes[i] << 8) | bytes[i + 1])];
  if (i < end) crc = ((crc << 8) & 0xff00) ^ TABLE[((crc >>> 8) ^ bytes[i]) & 0xff];
  return crc;
}
