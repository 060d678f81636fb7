/** Human-readable output helpers (SI inside; units converted only here, for display). */
import { safeText } from './safe-text.js';

/**
 * Format a value with its standard uncertainty, both rounded to the uncertainty's
 * 2 significant digits (GUM, JCGM 100:2008 §7.2.6: at most two digits). Plain
 * decimals while the larger of |v| and σ is in [1e-3, 1e6) and at most 9 decimals
 * are needed; otherwise a shared power of ten: `(7.8999 ± 0.0016)e-9`.
 */
export function withSigma(v: number | null | undefined, s: number | null | undefined, unit = ''): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const u = unit ? ` ${unit}` : '';
  if (s === null || s === undefined || !Number.isFinite(s) || s <= 0) return `${fmt(v)}${u}`;
  // e: the power of ten of the last digit kept (σ's second significant digit)
  const e = Math.floor(Math.log10(s)) - 1;
  const big = Math.max(Math.abs(v), s);
  if (big >= 1e-3 && big < 1e6 && -e <= 9) {
    if (e > 0) {
      const k = 10 ** e;
      return `${Math.round(v / k) * k} ± ${Math.round(s / k) * k}${u}`;
    }
    return `${v.toFixed(-e)} ± ${s.toFixed(-e)}${u}`;
  }
  const ev = Math.floor(Math.log10(big));
  const k = 10 ** ev;
  const digits = Math.max(0, ev - e);
  return `(${(v / k).toFixed(digits)} ± ${(s / k).toFixed(digits)})e${ev}${u}`;
}

/** A compact number: 4 significant digits, exponent form outside 1e-3 … 1e6. */
export function fmt(v: number | null | undefined, sig = 4): string {
  if (v === null || v === undefined) return '—';
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e-3 && a < 1e6) return String(Number(v.toPrecision(sig)));
  return v.toExponential(sig - 1);
}

/** An ISO 8601 UTC string shortened to the second for display (`2026-03-01T10:00:00Z`); `missing` when absent. */
export function isoShort(iso: string | null | undefined, missing = '—'): string {
  if (!iso) return missing;
  return iso.replace(/\.\d+Z$/, 'Z');
}

/** Duration in s → "3 d 04:05:06" style for display. */
export function duration(s: number): string {
  if (!Number.isFinite(s)) return '—';
  const neg = s < 0;
  let x = Math.abs(Math.round(s));
  const d = Math.floor(x / 86400);
  x -= d * 86400;
  const hh = String(Math.floor(x / 3600)).padStart(2, '0');
  const mm = String(Math.floor((x % 3600) / 60)).padStart(2, '0');
  const ss = String(x % 60).padStart(2, '0');
  return `${neg ? '-' : ''}${d ? `${d} d ` : ''}${hh}:${mm}:${ss}`;
}

/** Left-aligned text table with a header rule; numbers are pre-formatted by the caller; every cell is made terminal-safe (safeText). */
export function table(header: string[], rawRows: string[][]): string {
  const rows = rawRows.map((r) => r.map((c) => safeText(c ?? '')));
  const w = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const line = (r: string[]) => r.map((c, i) => (c ?? '').padEnd(w[i])).join('  ').trimEnd();
  return [line(header), w.map((n) => '─'.repeat(n)).join('  '), ...rows.map(line)].join('\n') + '\n';
}

/** CSV with RFC 4180 quoting. */
export function csv(header: string[], rows: unknown[][]): string {
  const cell = (v: unknown) => {
    if (v === null || v === undefined) return '';
    const s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v);
    return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
  };
  return [header.map(cell).join(','), ...rows.map((r) => r.map(cell).join(','))].join('\n') + '\n';
}
