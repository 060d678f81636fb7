/**
 * Display helpers of the command line (src/cli/format.ts): value ± uncertainty,
 * compact numbers, ISO times, durations, aligned tables and CSV.
 */
import { describe, expect, it } from 'vitest';
import { csv, duration, fmt, isoShort, table, withSigma } from '../../src/display/format.js';

describe('withSigma', () => {
  // GUM (JCGM 100:2008) §7.2.6: state the uncertainty with at most two significant digits, the value to the same place
  it('rounds value and σ to the σ\'s second significant digit, in plain decimals', () => {
    expect(withSigma(19.994540712, 0.0000020345, 's')).toBe('19.9945407 ± 0.0000020 s');
    expect(withSigma(800.17234, 0.1312)).toBe('800.17 ± 0.13');
    expect(withSigma(164.6071, 0.02811, 'GPa')).toBe('164.607 ± 0.028 GPa');
    expect(withSigma(1.5, 0.25)).toBe('1.50 ± 0.25');
    expect(withSigma(-0.0123456, 0.00034)).toBe('-0.01235 ± 0.00034');
  });

  it('rounds to tens and more when σ is large', () => {
    expect(withSigma(12345.6, 234)).toBe('12350 ± 230');
    expect(withSigma(98765, 12)).toBe('98765 ± 12');
  });

  it('uses a shared power of ten for very small or very large numbers', () => {
    expect(withSigma(7.8999988e-9, 1.6e-15, 'N·m/rad')).toBe('(7.8999988 ± 0.0000016)e-9 N·m/rad');
    expect(withSigma(1.64607e11, 2.8e7, 'Pa')).toBe('(1.64607 ± 0.00028)e11 Pa');
    expect(withSigma(8.71e-5, 1.6e-6, 'rad/h')).toBe('(8.71 ± 0.16)e-5 rad/h');
  });

  it('takes the power of ten from σ when the value is smaller than its σ', () => {
    expect(withSigma(-9.04e-10, 3.54e-8)).toBe('(-0.1 ± 3.5)e-8');
    expect(withSigma(0, 1e-9)).toBe('(0.0 ± 1.0)e-9');
  });

  it('switches to a power of ten when plain decimals would need more than 9 places', () => {
    expect(withSigma(19.8691865, 4.4e-7, 's')).toBe('19.86918650 ± 0.00000044 s');
    expect(withSigma(19.8691865, 4.4e-9, 's')).toBe('(1.98691865000 ± 0.00000000044)e1 s');
  });

  it('shows the value alone without a usable σ, and a dash without a value', () => {
    expect(withSigma(2.5, null, 's')).toBe('2.5 s');
    expect(withSigma(2.5, 0)).toBe('2.5');
    expect(withSigma(2.5, NaN)).toBe('2.5');
    expect(withSigma(null, 0.1)).toBe('—');
    expect(withSigma(Infinity, 0.1)).toBe('—');
  });
});

describe('fmt', () => {
  it('gives 4 significant digits, exponent form outside 1e-3 … 1e6', () => {
    expect(fmt(3.14159265)).toBe('3.142');
    expect(fmt(0.0012346)).toBe('0.001235');
    expect(fmt(123456)).toBe('123500');
    expect(fmt(1234567)).toBe('1.235e+6');
    expect(fmt(2.6676e-8)).toBe('2.668e-8');
    expect(fmt(0)).toBe('0');
    expect(fmt(null)).toBe('—');
    expect(fmt(undefined)).toBe('—');
  });
});

describe('times and durations', () => {
  it('shortens ISO 8601 UTC to the second', () => {
    expect(isoShort('2026-03-01T10:39:59.800Z')).toBe('2026-03-01T10:39:59Z');
    expect(isoShort('2026-03-01T10:39:59Z')).toBe('2026-03-01T10:39:59Z');
    expect(isoShort(null, '(still recording)')).toBe('(still recording)');
  });

  it('writes durations as [d] hh:mm:ss', () => {
    expect(duration(0)).toBe('00:00:00');
    expect(duration(2399.8)).toBe('00:40:00');
    expect(duration(3 * 86400 + 4 * 3600 + 5 * 60 + 6)).toBe('3 d 04:05:06');
    expect(duration(-61)).toBe('-00:01:01');
    expect(duration(NaN)).toBe('—');
  });
});

describe('table', () => {
  it('pads every column to its widest cell, with a rule under the header', () => {
    const t = table(['run', 'station', 'κ (N·m/rad)'], [['1', 'bench-a', '7.9e-9'], ['12', 'b', '—']]);
    const lines = t.trimEnd().split('\n');
    expect(lines).toEqual([
      'run  station  κ (N·m/rad)',
      '───  ───────  ───────────',
      '1    bench-a  7.9e-9',
      '12   b        —',
    ]);
  });
});

describe('csv', () => {
  // RFC 4180 §2: fields with commas, quotes or line breaks are enclosed in double quotes; quotes doubled
  it('quotes as RFC 4180 says and leaves missing numbers empty', () => {
    expect(csv(['a', 'b', 'c'], [[1.5, 'x,y', 'say "hi"'], [null, NaN, 'two\nlines']])).toBe(
      'a,b,c\n1.5,"x,y","say ""hi"""\n,,"two\nlines"\n',
    );
    expect(csv(['t_s'], [])).toBe('t_s\n');
  });
});
