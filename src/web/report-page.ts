/// <reference lib="dom" />
/**
 * The one-file report's charts: the same run view, swing-amplitude and
 * configuration sections and noise view as the dashboard, drawn from the JSON
 * inlined in the file (no network). Zooming
 * re-buckets the inlined angle layers; the finest layer that covers the span
 * in view is used.
 */
import type { ReportData, TraceLayer } from '../report/report-data.js';
import type { TraceAnswer } from '../report/angle-trace.js';
import { RunView } from './run-view.js';
import { noiseView } from './noise-view.js';
import { AmplitudeView } from './amplitude-view.js';
import { renderConfigurations } from './configurations-view.js';

/** Draw the report's charts. */
export async function reportPage(): Promise<void> {
  const data = JSON.parse(document.getElementById('fw-data')!.textContent ?? '{}') as ReportData;
  const box = document.getElementById('run-charts') as HTMLElement;
  const view = new RunView(box, { trace: async (from, to, points) => traceFrom(data.trace, from, to, points) }, data.summary, { tables: false });
  view.recording = false;
  view.follow = false;
  view.setColumns(data.columns, data.windows);
  view.addEvents(data.events);
  await view.render();
  const amp = document.getElementById('amplitude-charts');
  // without data the file says why in its own markup
  if (amp && data.amplitude) new AmplitudeView(amp).update(data.amplitude, { windowsUsed: data.amplitude_windows });
  const cfg = document.getElementById('configurations');
  if (cfg && data.compare) renderConfigurations(cfg, data.compare);
  const nb = document.getElementById('noise-charts');
  if (nb && data.noise) noiseView(nb, data.noise);
  document.body.dataset.ready = 'true';
}

/** The angle over [from, to) from the finest inlined layer covering it, in at most `points` buckets. */
function traceFrom(layers: TraceLayer[], from: number | undefined, to: number | undefined, points: number): TraceAnswer {
  const whole = layers[0];
  if (!whole) return { t_s: [], min_rad: [], max_rad: [], bucket_s: null, from_s: null, to_s: null, samples: 0 };
  const a = from ?? whole.from_s, b = to ?? whole.to_s;
  const covering = layers.filter((l) => l.from_s <= a && l.to_s >= b);
  const layer = covering.reduce((best, l) => ((l.bucket_s ?? 0) < (best.bucket_s ?? 0) ? l : best), covering[0] ?? whole);
  let i0 = 0, i1 = layer.t_s.length;
  while (i0 < i1 && layer.t_s[i0] < a) i0++;
  while (i1 > i0 && layer.t_s[i1 - 1] >= b) i1--;
  const n = i1 - i0;
  if (n <= points) {
    return { t_s: layer.t_s.slice(i0, i1), min_rad: layer.min_rad.slice(i0, i1), max_rad: layer.max_rad.slice(i0, i1), bucket_s: layer.bucket_s, from_s: a, to_s: b, samples: n };
  }
  const w = (b - a) / points;
  const t: number[] = [], lo: number[] = [], hi: number[] = [];
  let k = -1;
  for (let i = i0; i < i1; i++) {
    const j = Math.min(points - 1, Math.floor((layer.t_s[i] - a) / w));
    if (j !== k) {
      k = j;
      t.push(a + (j + 0.5) * w);
      lo.push(layer.min_rad[i]);
      hi.push(layer.max_rad[i]);
    } else {
      lo[lo.length - 1] = Math.min(lo[lo.length - 1], layer.min_rad[i]);
      hi[hi.length - 1] = Math.max(hi[hi.length - 1], layer.max_rad[i]);
    }
  }
  return { t_s: t, min_rad: lo, max_rad: hi, bucket_s: Math.max(w, layer.bucket_s ?? 0), from_s: a, to_s: b, samples: n };
}
