/// <reference lib="dom" />
/**
 * The run page: the run's charts and tables from the API, kept live while the
 * run records (new windows, events and status by Server-Sent Events; after a
 * reconnection the page reads again what it may have missed). The summary,
 * the swing-amplitude dependence and the configurations are read again
 * together, at most every 5 s, after new windows.
 */
import type { EventListing } from '../../db/events-store.js';
import type { TraceAnswer } from '../report/angle-trace.js';
import { getJson, query } from './api.js';
import { el, link, put } from './dom.js';
import { openLiveStream } from './live-stream.js';
import { RunView } from './run-view.js';
import type { ShowSummary } from '../summaries/show-summary.js';
import { compareSpanQuery, fetchExtras, RunExtras } from './run-extras.js';

type WindowRow = { index: number; status: string } & Record<string, unknown>;

/** Fill `main` with run `run`. */
export async function runPage(main: HTMLElement, run: number): Promise<void> {
  const base = `/api/runs/${run}`;
  const span = compareSpanQuery(location.search);
  const [summary, windows, events, extrasData] = await Promise.all([
    getJson<ShowSummary>(base), getJson<WindowRow[]>(`${base}/windows`), getJson<EventListing[]>(`${base}/events`), fetchExtras(base, span),
  ]);
  main.textContent = '';
  const source = {
    trace: (from_s: number | undefined, to_s: number | undefined, points: number) => getJson<TraceAnswer>(`${base}/samples${query({ from_s, to_s, points })}`),
  };
  const view = new RunView(main, source, summary, { tables: true });
  view.addWindows(windows);
  view.addEvents(events);
  await view.render();
  const extras = new RunExtras(view.extras);
  extras.show(extrasData);
  const more = put(main, el('p', 'more')).lastChild as HTMLElement;
  put(more, link(`/runs/${run}/noise`, 'noise budget'), ' · ', link(`/fibres/${encodeURIComponent(summary.fibre)}`, `fibre ${summary.fibre}`), ' · JSON: ',
    link(base, 'summary'), ', ', link(`${base}/windows`, 'windows'), ', ', link(`${base}/events`, 'events'),
    ', ', link(`${base}/amplitude`, 'swing amplitude'), ', ', link(`${base}/compare${span}`, 'configurations'));
  document.body.dataset.ready = 'true';
  if (summary.status !== 'recording') {
    const live = document.getElementById('live');
    if (live) live.textContent = summary.status;
    return;
  }

  // live: redraw at most once a second, read the summary again at most every 5 s
  let redraw: ReturnType<typeof setTimeout> | undefined;
  let again: ReturnType<typeof setTimeout> | undefined;
  const soon = () => {
    redraw ??= setTimeout(() => {
      redraw = undefined;
      view.refresh();
    }, 1000);
  };
  const summaryLater = () => {
    again ??= setTimeout(async () => {
      again = undefined;
      try {
        const [s, x] = await Promise.all([getJson<ShowSummary>(base), fetchExtras(base, span)]);
        view.setSummary(s);
        extras.show(x);
      } catch {
        // the next news tries again
      }
    }, 5000);
  };
  openLiveStream(run, {
    window: (w) => {
      if (view.addWindows([w])) {
        soon();
        summaryLater();
      }
    },
    event: (e) => {
      if (view.addEvents([e])) soon();
    },
    status: (r) => {
      view.recording = r.status === 'recording';
      soon();
      if (r.status !== 'recording') summaryLater();
    },
    opened: async (first) => {
      if (first) return;
      // back after a lost connection: read what was stored meanwhile
      try {
        const [ws, evs] = await Promise.all([getJson<WindowRow[]>(`${base}/windows`), getJson<EventListing[]>(`${base}/events`)]);
        view.addWindows(ws);
        view.addEvents(evs);
        soon();
        summaryLater();
      } catch {
        // the stream's next news or reconnection tries again
      }
    },
  }, document.getElementById('live'));
}
