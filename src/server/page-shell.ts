/**
 * The HTML of a dashboard page: a shell that names the page and what it shows
 * in data attributes, and loads the client bundle from this server. No inline
 * script and no inline style (the Content-Security-Policy forbids both); every
 * name is escaped. The client (src/web) fetches the data and draws.
 */
import { escapeHtml as esc } from '../display/escape-html.js';

/** Which page, and of what. */
export interface PageSpec {
  page: 'runs' | 'run' | 'noise' | 'fibre' | 'error';
  title: string;
  /** data-* attributes for the client (run number, fibre name) */
  data?: Record<string, string>;
  /** text shown before the script runs (or instead, for an error page) */
  body?: string;
}

/** A small mark for the browser tab: a suspended bar on its fibre. */
export const FAVICON_SVG = '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 32 32"><path d="M16 2v14" stroke="#2b4c6f" stroke-width="2"/><rect x="5" y="16" width="22" height="5" rx="2" fill="#2b4c6f"/><circle cx="16" cy="27" r="2.5" fill="#b5651d"/></svg>';

/** The page's HTML. */
export function pageShell(p: PageSpec): string {
  const attrs = Object.entries({ page: p.page, ...(p.data ?? {}) })
    .map(([k, v]) => ` data-${k}="${esc(v)}"`).join('');
  const script = p.page === 'error' ? '' : '\n<script src="/assets/dashboard.js" defer></script>';
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${esc(p.title)}</title>
<link rel="icon" href="/favicon.svg" type="image/svg+xml">
<link rel="stylesheet" href="/assets/dashboard.css">${script}
</head><body${attrs}>
<header class="top"><a class="home" href="/">fibrewatch</a><span class="where">${esc(p.title.replace(/^fibrewatch · /, ''))}</span><span class="live" id="live"></span></header>
<main id="main"><p class="note">${esc(p.body ?? 'loading…')}</p></main>
<noscript><p class="note">This page draws its tables and charts with JavaScript. The same data as JSON: the /api/ paths (docs/dashboard.md).</p></noscript>
</body></html>
`;
}
