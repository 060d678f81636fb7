/** A small, dependency-free SVG line/point plot for the self-contained report. */
import { escapeHtml as esc } from '../display/escape-html.js';

export interface Series {
  x: ArrayLike<number>;
  y: ArrayLike<number>;
  /** standard uncertainty per point (drawn as bars) */
  sigma?: ArrayLike<number>;
  label: string;
  colour?: string;
  points?: boolean;
}

export interface PlotOptions {
  title: string;
  xLabel: string;
  yLabel: string;
  width?: number;
  height?: number;
  /** scale y to the 1st–99th percentile so a few wild windows cannot flatten the rest (they are drawn at the edge) */
  robust?: boolean;
  /** vertical markers (e.g. alerts), x in the same unit as the series */
  markers?: { x: number; label: string; colour?: string }[];
}


/** "Nice" tick positions covering [lo, hi]. */
export function ticks(lo: number, hi: number, n = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? 10 * mag;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Math.abs(v) < step * 1e-9 ? 0 : v);
  return out;
}

function tickLabel(v: number): string {
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(1);
  return String(Number(v.toPrecision(4)));
}

/** Render series as an inline <svg>; long series are thinned to ~2000 points per series. */
export function plotSvg(series: Series[], o: PlotOptions): string {
  const W = o.width ?? 760, H = o.height ?? 260;
  const L = 78, R = 14, T = 28, B = 42;
  let x0 = Infinity, x1 = -Infinity, y0 = Infinity, y1 = -Infinity;
  for (const s of series) {
    for (let i = 0; i < s.x.length; i++) {
      const x = s.x[i], y = s.y[i];
      if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
      const e = s.sigma && Number.isFinite(s.sigma[i]) ? s.sigma[i] : 0;
      x0 = Math.min(x0, x); x1 = Math.max(x1, x);
      y0 = Math.min(y0, y - e); y1 = Math.max(y1, y + e);
    }
  }
  const parts: string[] = [`<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${esc(o.title)}">`];
  parts.push(`<text x="${L}" y="18" font-size="13" font-weight="600">${esc(o.title)}</text>`);
  if (o.robust) {
    const ys: number[] = [];
    for (const s of series) for (let i = 0; i < s.y.length; i++) if (Number.isFinite(s.y[i])) ys.push(s.y[i]);
    ys.sort((a, b) => a - b);
    if (ys.length > 20) {
      const lo = ys[Math.floor(0.01 * (ys.length - 1))], hi = ys[Math.ceil(0.99 * (ys.length - 1))];
      const pad = (hi - lo) * 0.5 || Math.abs(hi) * 1e-6 || 1e-9;
      y0 = Math.max(y0, lo - pad);
      y1 = Math.min(y1, hi + pad);
    }
  }
  if (!Number.isFinite(x0)) {
    parts.push(`<text x="${W / 2}" y="${H / 2}" text-anchor="middle" fill="#777">no data</text></svg>`);
    return parts.join('');
  }
  if (x1 === x0) { x0 -= 1; x1 += 1; }
  if (y1 === y0) { const d = Math.abs(y0) * 1e-6 || 1e-9; y0 -= d; y1 += d; }
  const pad = (y1 - y0) * 0.05; y0 -= pad; y1 += pad;
  const sx = (x: number) => L + ((x - x0) / (x1 - x0)) * (W - L - R);
  const sy = (y: number) => H - B - ((Math.min(Math.max(y, y0), y1) - y0) / (y1 - y0)) * (H - T - B);
  parts.push(`<rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}" fill="none" stroke="#bbb"/>`);
  for (const v of ticks(x0, x1)) parts.push(`<line x1="${sx(v)}" x2="${sx(v)}" y1="${H - B}" y2="${H - B + 4}" stroke="#555"/><text x="${sx(v)}" y="${H - B + 16}" font-size="10" text-anchor="middle">${tickLabel(v)}</text>`);
  for (const v of ticks(y0, y1)) parts.push(`<line x1="${L - 4}" x2="${W - R}" y1="${sy(v)}" y2="${sy(v)}" stroke="#eee"/><text x="${L - 6}" y="${sy(v) + 3}" font-size="10" text-anchor="end">${tickLabel(v)}</text>`);
  parts.push(`<text x="${(L + W - R) / 2}" y="${H - 6}" font-size="11" text-anchor="middle">${esc(o.xLabel)}</text>`);
  parts.push(`<text transform="translate(12 ${(T + H - B) / 2}) rotate(-90)" font-size="11" text-anchor="middle">${esc(o.yLabel)}</text>`);
  for (const m of o.markers ?? []) {
    if (m.x < x0 || m.x > x1) continue;
    parts.push(`<line x1="${sx(m.x)}" x2="${sx(m.x)}" y1="${T}" y2="${H - B}" stroke="${m.colour ?? '#c33'}" stroke-dasharray="3 3"><title>${esc(m.label)}</title></line>`);
  }
  const palette = ['#1f5fa8', '#c0392b', '#2e8b57', '#8e44ad'];
  series.forEach((s, k) => {
    const c = s.colour ?? palette[k % palette.length];
    const step = Math.max(1, Math.floor(s.x.length / 2000));
    const pts: string[] = [];
    for (let i = 0; i < s.x.length; i += step) {
      if (!Number.isFinite(s.y[i]) || !Number.isFinite(s.x[i])) continue;
      pts.push(`${sx(s.x[i]).toFixed(1)},${sy(s.y[i]).toFixed(1)}`);
      if (s.sigma && Number.isFinite(s.sigma[i]) && s.sigma[i] > 0) {
        parts.push(`<line x1="${sx(s.x[i]).toFixed(1)}" x2="${sx(s.x[i]).toFixed(1)}" y1="${sy(s.y[i] - s.sigma[i]).toFixed(1)}" y2="${sy(s.y[i] + s.sigma[i]).toFixed(1)}" stroke="${c}" stroke-opacity="0.35"/>`);
      }
    }
    if (s.points) for (const p of pts) { const [px, py] = p.split(','); parts.push(`<circle cx="${px}" cy="${py}" r="1.8" fill="${c}"/>`); }
    else parts.push(`<polyline fill="none" stroke="${c}" stroke-width="1.2" points="${pts.join(' ')}"/>`);
    parts.push(`<text x="${W - R - 4}" y="${T + 14 + 13 * k}" font-size="11" text-anchor="end" fill="${c}">${esc(s.label)}</text>`);
  });
  parts.push('</svg>');
  return parts.join('');
}
