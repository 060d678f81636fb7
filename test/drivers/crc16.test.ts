import { describe, expect, it } from 'vitest';
import { crc16CcittFalse } from '../../drivers/crc16.js';

/** Bit-by-bit CRC straight from the definition (poly 0x1021, init 0xFFFF, MSB first, no xor-out). */
function crcBitwise(bytes: Uint8Array): number {
  let crc = 0xffff;
  for (const b of bytes) {
    crc ^= b << 8;
    for (let k = 0; k < 8; k++) crc = crc & 0x8000 ? ((crc << 1) ^ 0x1021) & 0xffff : (crc << 1) & 0xffff;
  }
  return crc;
}

describe('crc16CcittFalse', () => {
  it('gives the published check value for "123456789"', () => {
    // Check value 0x29B1 of CRC-16/CCITT-FALSE (a.k.a. CRC-16/IBM-3740) in the
    // catalogue of parametrised CRC algorithms (reveng.sourceforge.io/crc-catalogue); also docs/wire.md
    expect(crc16CcittFalse(new TextEncoder().encode('123456789'))).toBe(0x29b1);
  });

  it('gives the initial value for no bytes', () => {
    expect(crc16CcittFalse(new Uint8Array(0))).toBe(0xffff);
  });

  it('matches a bit-by-bit implementation on random data and sub-ranges', () => {
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) >>> 0) >>> 16) & 0xff;
    for (let trial = 0; trial < 200; trial++) {
      const n = 1 + (trial % 97);
      const bytes = new Uint8Array(n + 6);
      for (let i = 0; i < bytes.length; i++) bytes[i] = rnd();
      expect(crc16CcittFalse(bytes, 3, 3 + n)).toBe(crcBitwise(bytes.subarray(3, 3 + n)));
      expect(crc16CcittFalse(bytes)).toBe(crcBitwise(bytes));
    }
  });
});
