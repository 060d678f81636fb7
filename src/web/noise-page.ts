/// <reference lib="dom" />
/** The noise budget page of a run: `noise RUN --json` drawn, for the whole run or a span given in the address (from_s, to_s). */
import type { NoiseBudget } from '../summaries/noise-budget.js';
import { getJson, query } from './api.js';
import { el, link, put } from './dom.js';
import { noiseView } from './noise-view.js';

/** Fill `main` with run `run`'s noise budget. */
export async function noisePage(main: HTMLElement, run: number): Promise<void> {
  const p = new URLSearchParams(location.search);
  main.textContent = '';
  main.appendChild(el('h1', undefined, `Run ${run} — noise budget`));
  const wait = put(main, el('p', 'note', 'reading every sample of the span (a week takes some seconds)…')).lastChild as HTMLElement;
  const path = `/api/runs/${run}/noise${query({ from_s: p.get('from_s') ?? undefined, to_s: p.get('to_s') ?? undefined })}`;
  const b = await getJson<NoiseBudget>(path);
  wait.remove();
  noiseView(main, b);
  put(main, put(el('p', 'more'), link(`/runs/${run}`, `run ${run}`), ' · JSON: ', link(path, path)));
  document.body.dataset.ready = 'true';
}
