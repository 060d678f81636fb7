/**
 * Terminal-safe text (src/display/safe-text.ts): every character that a
 * terminal would act on is shown as an escape, everything else is kept. The
 * control sequences are ECMA-48's (ESC [ … CSI, ESC ] … OSC ended by BEL or
 * ESC \, the one-byte CSI 0x9B); the direction marks are Unicode's (UAX #9),
 * the ones named in CVE-2021-42574.
 */
import { describe, expect, it } from 'vitest';
import { safeText } from '../../src/display/safe-text.js';
import { table } from '../../src/display/format.js';

describe('safeText', () => {
  it('keeps ordinary text, accents, Greek and symbols unchanged (the same string)', () => {
    for (const s of ['W25-lot7-03', 'Quarz Ø 25 µm', 'κ (N·m/rad)', 'fibre «β»', '→ — ±', '日本語', '']) expect(safeText(s)).toBe(s);
  });

  it('shows CSI colour, an OSC 8 link, an OSC window title and a one-byte CSI as escapes', () => {
    expect(safeText('W\x1b[31mRED\x1b[0m')).toBe('W\\x1b[31mRED\\x1b[0m');
    expect(safeText('\x1b]8;;http://example.invalid/\x1b\\click\x1b]8;;\x1b\\')).toBe('\\x1b]8;;http://example.invalid/\\x1b\\click\\x1b]8;;\\x1b\\');
    expect(safeText('\x1b]0;title\x07')).toBe('\\x1b]0;title\\x07');
    expect(safeText('a\x9b2Jb')).toBe('a\\x9b2Jb');
  });

  it('turns CR, LF and tab into visible escapes, so a name cannot forge a line or a column', () => {
    expect(safeText('bench\r\nrun 99 complete')).toBe('bench\\r\\nrun 99 complete');
    expect(safeText('a\tb')).toBe('a\\tb');
    expect(safeText('x\u2028y\u2029z')).toBe('x\\u2028y\\u2029z');
  });

  it('shows every C0 and C1 control and DEL, and nothing it leaves is one of them', () => {
    for (let c = 0; c < 0xa0; c++) {
      const ch = String.fromCharCode(c);
      const out = safeText(`<${ch}>`);
      const control = c < 0x20 || (c >= 0x7f && c < 0xa0);
      if (control) {
        expect(out, `U+${c.toString(16)}`).not.toContain(ch);
        expect(out).toMatch(/^<\\(x[0-9a-f]{2}|[nrt])>$/);
      } else expect(out).toBe(`<${ch}>`);
    }
  });

  it('shows the bidirectional overrides and isolates (Trojan Source)', () => {
    for (const c of [0x202a, 0x202b, 0x202c, 0x202d, 0x202e, 0x2066, 0x2067, 0x2068, 0x2069]) {
      expect(safeText(`a${String.fromCharCode(c)}b`)).toBe(`a\\u${c.toString(16)}b`);
    }
  });

  it('is used for every table cell: the columns stay aligned and no raw ESC or LF gets through', () => {
    const t = table(['fibre', 'runs'], [['W\x1b[2J\nforged', '1'], ['plain', '2']]);
    expect(t).not.toMatch(/[\x1b]/);
    const lines = t.split('\n').filter(Boolean);
    expect(lines).toHaveLength(4); // header, rule, two rows: the LF in the name made no line of its own
    expect(lines[2]).toBe('W\\x1b[2J\\nforged  1');
    expect(lines[3].lastIndexOf('2')).toBe(lines[2].lastIndexOf('1'));
  });
});
