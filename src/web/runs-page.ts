/// <reference lib="dom" />
/**
 * The front page: the runs (those still recording first, then the newest),
 * filtered by fibre, station and date as `runs` is; a timeline of the runs by
 * station; the fibres. The list is read again every 10 s while a run records.
 */
import type { RunListing } from '../../db/runs.js';
import type { FibreListing } from '../../db/fibres.js';
import { duration, fmt } from '../display/format.js';
import { getJson, query } from './api.js';
import { Chart } from './charts.js';
import { clear, el, link, put, section, table } from './dom.js';
import { whenText } from './time-text.js';

const LANE_COLOURS = ['#2b4c6f', '#b5651d', '#3b7a57', '#6a4c93', '#9c3d2e', '#4f6d7a', '#7a6a2b', '#5b5b5b'];
const FILTERS = ['fibre', 'station', 'since', 'until'] as const;

/** Fill `main` with the runs page. */
export async function runsPage(main: HTMLElement): Promise<void> {
  const params = new URLSearchParams(location.search);
  const filter = Object.fromEntries(FILTERS.map((k) => [k, params.get(k) ?? undefined])) as Record<(typeof FILTERS)[number], string | undefined>;
  const [all, fibres] = await Promise.all([getJson<RunListing[]>('/api/runs'), getJson<FibreListing[]>('/api/fibres')]);
  main.textContent = '';
  main.appendChild(el('h1', undefined, 'Runs'));
  main.appendChild(filterForm(filter, all, fibres));
  const listBox = put(main, el('div')).lastChild as HTMLElement;
  const timelineBox = put(main, section('Timeline (UTC)')).lastChild as HTMLElement;
  const fib = section('Fibres');
  fib.appendChild(table(['fibre', 'material', 'd or w × t (µm)', 'L (m)', 'runs', 'first run', 'last run'],
    fibres.map((f) => [link(`/fibres/${encodeURIComponent(f.name)}`, f.name), f.material ?? '—', size(f), fmt(f.length_m), String(f.runs), whenText(f.first_run), whenText(f.last_run)])));
  main.appendChild(fib);

  let chart: Chart | undefined;
  // the stations of the timeline's lanes, as last drawn (a new station may appear while the page is open)
  let names: string[] = [];
  const draw = async () => {
    const rows = await getJson<RunListing[]>(`/api/runs${query(filter)}`);
    clear(listBox);
    listBox.appendChild(runsTable(rows));
    const lanes = timeline(rows);
    // one series per station: another station means another chart
    if (chart && lanes.stations.join('\n') !== names.join('\n')) {
      chart.u.destroy();
      chart.figure.remove();
      chart = undefined;
    }
    names = lanes.stations;
    if (chart) chart.setData(lanes.data, true);
    else chart = new Chart(timelineBox, {
      name: 'timeline', title: 'runs by station (each run from its start to its end)', x: 'time', yLabels: { y: '' },
      height: Math.max(140, 60 + 30 * lanes.stations.length),
      yRange: () => [0.5, names.length + 0.5],
      yValues: (v) => {
        const k = Math.round(v);
        return Math.abs(v - k) < 1e-9 && k >= 1 && k <= names.length ? names[k - 1] : '';
      },
      series: lanes.stations.map((s, i) => ({ label: s, color: LANE_COLOURS[i % LANE_COLOURS.length], width: 8, style: 'both' as const, pointSize: 10 })),
    }, lanes.data);
    document.body.dataset.ready = 'true';
    return rows.some((r) => r.status === 'recording');
  };
  if (await draw()) {
    const timer = setInterval(async () => {
      try {
        if (!(await draw())) clearInterval(timer);
      } catch {
        // the next round tries again
      }
    }, 10_000);
  }
}

function filterForm(f: Record<string, string | undefined>, runs: RunListing[], fibres: FibreListing[]): HTMLFormElement {
  const form = el('form', 'filters');
  form.method = 'get';
  form.action = '/';
  const choice = (name: string, label: string, values: string[]) => {
    const l = el('label', undefined, `${label} `);
    const s = el('select');
    s.name = name;
    const any = el('option', undefined, 'any');
    any.value = '';
    s.appendChild(any);
    for (const v of values) {
      const o = el('option', undefined, v);
      o.value = v;
      if (f[name] === v) o.selected = true;
      s.appendChild(o);
    }
    return put(l, s);
  };
  const date = (name: string, label: string) => {
    const l = el('label', undefined, `${label} `);
    const i = el('input');
    i.type = 'date';
    i.name = name;
    if (f[name]) i.value = f[name]!.slice(0, 10);
    return put(l, i);
  };
  put(form, choice('fibre', 'fibre', fibres.map((x) => x.name)), choice('station', 'station', [...new Set(runs.map((r) => r.station))].sort()),
    date('since', 'since'), date('until', 'until (exclusive)'));
  const go = el('button', undefined, 'show');
  go.type = 'submit';
  form.appendChild(go);
  if (Object.values(f).some(Boolean)) form.appendChild(link('/', 'all runs', 'reset'));
  // blank fields would only clutter the address
  form.addEventListener('submit', (ev) => {
    ev.preventDefault();
    const q = new URLSearchParams();
    for (const [k, v] of new FormData(form)) if (typeof v === 'string' && v) q.set(k, v);
    location.search = q.toString();
  });
  return form;
}

function runsTable(rows: RunListing[]): HTMLElement {
  const box = section(`${rows.length} run${rows.length === 1 ? '' : 's'}`);
  if (!rows.length) {
    box.appendChild(el('p', 'note', 'no runs match'));
    return box;
  }
  // recording first, then the newest
  const sorted = [...rows].sort((a, b) => Number(b.status === 'recording') - Number(a.status === 'recording') || Date.parse(b.started_at) - Date.parse(a.started_at) || b.run - a.run);
  box.appendChild(table(['run', 'status', 'station', 'fibre', 'started', 'ended', 'length', 'samples', 'windows', 'gaps'], sorted.map((r) => [
    link(`/runs/${r.run}`, String(r.run)), [r.status, `state state-${r.status}`], r.station,
    link(`/fibres/${encodeURIComponent(r.fibre)}`, r.fibre), whenText(r.started_at), whenText(r.ended_at, 'still recording'),
    r.ended_at ? duration((Date.parse(r.ended_at) - Date.parse(r.started_at)) / 1000) : '', String(r.samples), String(r.windows ?? ''), String(r.gaps ?? ''),
  ])));
  return box;
}

/** One lane per station: each run a thick line from its start to its end (now while recording). */
function timeline(rows: RunListing[]): { stations: string[]; data: { x: number[]; y: (number | null)[][] } } {
  const stations = [...new Set(rows.map((r) => r.station))].sort();
  const spans = rows.map((r) => ({ lane: stations.indexOf(r.station), a: Date.parse(r.started_at) / 1000, b: (r.ended_at ? Date.parse(r.ended_at) : Date.now()) / 1000 }));
  const xs = [...new Set(spans.flatMap((s) => [s.a, s.b]))].sort((p, q) => p - q);
  const y = stations.map((_, lane) => xs.map((x) => (spans.some((s) => s.lane === lane && s.a <= x && x <= s.b) ? lane + 1 : null)));
  // a break between two runs of one station that touch: a null just after each end
  const x: number[] = [];
  const ys: (number | null)[][] = stations.map(() => []);
  xs.forEach((t, i) => {
    x.push(t);
    y.forEach((lane, k) => ys[k].push(lane[i]));
    if (spans.some((s) => s.b === t) && i + 1 < xs.length) {
      x.push(t + Math.min(1, (xs[i + 1] - t) / 2));
      y.forEach((lane, k) => ys[k].push(spans.some((s) => s.lane === k && s.b === t) && !spans.some((s) => s.lane === k && s.a <= t && t < s.b) ? null : lane[i]));
    }
  });
  return { stations, data: { x, y: ys } };
}

function size(f: FibreListing): string {
  if (f.diameter_m !== null) return fmt(f.diameter_m * 1e6);
  if (f.width_m !== null && f.thickness_m !== null) return `${fmt(f.width_m * 1e6)} × ${fmt(f.thickness_m * 1e6)}`;
  return '—';
}
