/// <reference lib="dom" />
/**
 * The run page's live stream (Server-Sent Events from /api/runs/:run/stream).
 * EventSource reconnects by itself when the server goes away and comes back;
 * each (re)connection is reported so the page can read what it missed.
 */
import type { EventListing } from '../../db/events-store.js';
import type { RunListing } from '../../db/runs.js';

/** What the stream delivers. */
export interface LiveHandlers {
  window(row: { index: number; status: string } & Record<string, unknown>): void;
  event(e: EventListing): void;
  status(r: RunListing): void;
  /** connected (again): read what may have been missed */
  opened(first: boolean): void;
}

/** Open the stream; the indicator element shows live / reconnecting. */
export function openLiveStream(run: number, h: LiveHandlers, indicator: HTMLElement | null): EventSource {
  const es = new EventSource(`/api/runs/${run}/stream`);
  let opens = 0;
  const show = (state: string, text: string) => {
    if (!indicator) return;
    indicator.textContent = text;
    indicator.dataset.state = state;
  };
  show('connecting', 'connecting…');
  const parse = <T>(ev: MessageEvent): T | undefined => {
    try {
      return JSON.parse(ev.data as string) as T;
    } catch {
      return undefined;
    }
  };
  es.addEventListener('open', () => {
    show('live', 'live');
    h.opened(opens++ === 0);
  });
  es.addEventListener('error', () => show('lost', 'connection lost, reconnecting…'));
  es.addEventListener('window', (ev) => {
    const w = parse<{ index: number; status: string }>(ev as MessageEvent);
    if (w) h.window(w);
  });
  es.addEventListener('event', (ev) => {
    const e = parse<EventListing>(ev as MessageEvent);
    if (e) h.event(e);
  });
  es.addEventListener('status', (ev) => {
    const r = parse<RunListing>(ev as MessageEvent);
    if (r) {
      h.status(r);
      if (r.status !== 'recording') show('ended', `run ${r.status}`);
      else show('live', 'live');
    }
  });
  return es;
}
