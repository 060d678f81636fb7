/// <reference lib="dom" />
/**
 * The run page's sections beside the time axis: "Swing amplitude" and
 * "Configurations", from `GET /api/runs/RUN/amplitude` and `/compare`, read
 * again (with the summary) when new windows arrive. A failed request shows
 * as a note in its section, not as a failed page.
 */
import type { AmplitudeDependence } from '../summaries/amplitude-dependence.js';
import type { Comparison } from '../summaries/compare-summary.js';
import { getJson } from './api.js';
import { el, put, section } from './dom.js';
import { AmplitudeView } from './amplitude-view.js';
import { renderConfigurations } from './configurations-view.js';

/** Both answers, or the error each gave. */
export interface ExtrasData {
  amplitude: AmplitudeDependence | Error;
  compare: Comparison | Error;
}

const settled = <T>(p: Promise<T>): Promise<T | Error> => p.catch((e: unknown) => (e instanceof Error ? e : new Error(String(e))));

/**
 * The comparison's span from the page's own address (`/runs/N?compare_from_s=S&compare_to_s=S`, as
 * `compare --from-s --to-s`), as the API's query; the server checks the values.
 */
export function compareSpanQuery(search: string): string {
  const page = new URLSearchParams(search), q = new URLSearchParams();
  for (const k of ['from_s', 'to_s']) {
    const v = page.get(`compare_${k}`);
    if (v !== null) q.set(k, v);
  }
  const s = q.toString();
  return s ? `?${s}` : '';
}

/** Read both answers for the run at API path `base` (never rejects); `compareQuery` from compareSpanQuery. */
export async function fetchExtras(base: string, compareQuery = ''): Promise<ExtrasData> {
  const [amplitude, compare] = await Promise.all([settled(getJson<AmplitudeDependence>(`${base}/amplitude`)), settled(getJson<Comparison>(`${base}/compare${compareQuery}`))]);
  return { amplitude, compare };
}

/** The two sections in `box`. */
export class RunExtras {
  private readonly amplitude: AmplitudeView;
  private readonly compare: HTMLElement;

  constructor(box: HTMLElement) {
    const a = put(box, section('Swing amplitude', 'block swing-amplitude')).lastChild as HTMLElement;
    this.amplitude = new AmplitudeView(a);
    const c = put(box, section('Configurations', 'block configurations')).lastChild as HTMLElement;
    this.compare = put(c, el('div')).lastChild as HTMLElement;
  }

  show(d: ExtrasData): void {
    if (d.amplitude instanceof Error) this.amplitude.update(null, { missing: `could not read the swing-amplitude dependence: ${d.amplitude.message}` });
    else this.amplitude.update(d.amplitude);
    if (d.compare instanceof Error) renderConfigurations(this.compare, null, `could not read the comparison of configurations: ${d.compare.message}`);
    else renderConfigurations(this.compare, d.compare);
  }
}
