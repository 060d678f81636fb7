/**
 * The dashboard's JSON API against the CLI: the built `fibrewatch serve` in
 * its own process on a real port, the built CLI's --json for the same store.
 * Every endpoint's answer equals the command's output; the samples answer
 * equals a brute-force min/max over the samples `export` gives; the
 * swing-amplitude answer has the slope `show` gives and keeps to a span; bad
 * parameters are 400 naming them, unknown runs and fibres 404; the store file
 * is not changed by anything served.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { request } from 'node:http';
import { runCliAsync } from '../helpers/cli.js';
import { buildDashboardStore, CONFIG_TRUTH, MARKUP_FIBRE } from './dashboard-store.js';
import { getJson, startServe, type ServeProcess } from './serve-process.js';

let dir: string;
let db: string;
let srv: ServeProcess;
let storeHash: string;
let configRun: number;
const hash = (p: string) => createHash('sha256').update(readFileSync(p)).digest('hex');

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'fw-serve-api-'));
  ({ db, configRun } = await buildDashboardStore(dir));
  storeHash = hash(db);
  srv = await startServe(db);
}, 120_000);
afterAll(async () => {
  expect(await srv?.stop()).toBe(0);
  rmSync(dir, { recursive: true, force: true });
});

/** The CLI's --json output for the same store. */
async function cliJson(...args: string[]): Promise<unknown> {
  const r = await runCliAsync([...args, '--json', '--db', db]);
  expect(r.status, `${args.join(' ')}: ${r.stderr}`).toBe(0);
  return JSON.parse(r.stdout);
}

/** API answer at `path`, which must be 200. */
async function api(path: string): Promise<any> {
  const r = await getJson(srv.base, path);
  expect(r.status, `${path}: ${JSON.stringify(r.body)}`).toBe(200);
  return r.body;
}

describe('every endpoint answers as the CLI does with --json', () => {
  it('runs, with and without filters', async () => {
    const cases: [string, string[]][] = [
      ['/api/runs', []],
      ['/api/runs?fibre=W25-a', ['--fibre', 'W25-a']],
      ['/api/runs?station=bench-b', ['--station', 'bench-b']],
      ['/api/runs?since=2026-03-05&until=2026-03-11', ['--since', '2026-03-05', '--until', '2026-03-11']],
      [`/api/runs?fibre=${encodeURIComponent(MARKUP_FIBRE)}`, ['--fibre', MARKUP_FIBRE]],
    ];
    for (const [path, args] of cases) {
      const [got, want] = await Promise.all([api(path), cliJson('runs', ...args)]);
      expect(got, path).toEqual(want);
    }
    expect((await api('/api/runs')).length).toBe(5);
  });

  it('one run: summary, windows, events, noise', async () => {
    for (const run of [1, 2, 3, 4]) {
      const pairs: [string, string[]][] = [
        [`/api/runs/${run}`, ['show', String(run)]],
        [`/api/runs/${run}/windows`, ['windows', String(run)]],
        [`/api/runs/${run}/events`, ['events', String(run)]],
      ];
      for (const [path, args] of pairs) {
        const [got, want] = await Promise.all([api(path), cliJson(...args)]);
        expect(got, path).toEqual(want);
      }
    }
    // asked twice: the kept answer is the same
    expect(await api('/api/runs/1')).toEqual(await cliJson('show', '1'));
    const [noise, noiseCli] = await Promise.all([api('/api/runs/1/noise'), cliJson('noise', '1')]);
    expect(noise).toEqual(noiseCli);
    expect(noise.frequency_Hz.length).toBeGreaterThan(10);
    const [span, spanCli] = await Promise.all([api('/api/runs/1/noise?from_s=700&to_s=2000'), cliJson('noise', '1', '--from-s', '700', '--to-s', '2000')]);
    expect(span).toEqual(spanCli);
    expect(span.from_s).toBeGreaterThanOrEqual(700);
  });

  it('compare: two configurations, a span of them, and a run with one configuration (no differences, a note)', async () => {
    const run = String(configRun);
    const [c, cCli] = await Promise.all([api(`/api/runs/${run}/compare`), cliJson('compare', run)]);
    expect(c).toEqual(cCli);
    expect(c.source).toBe('state');
    expect(c.configurations.map((x: { label: string }) => x.label)).toEqual(['1', '2']);
    expect(c.differences).toHaveLength(1);
    expect(c.differences[0].delta_equilibrium_rad).toBeGreaterThan(0);
    const [span, spanCli] = await Promise.all([api(`/api/runs/${run}/compare?from_s=600&to_s=3000`), cliJson('compare', run, '--from-s', '600', '--to-s', '3000')]);
    expect(span).toEqual(spanCli);
    expect([span.from_s, span.to_s]).toEqual([600, 3000]);
    expect(span.excluded.outside_span).toBeGreaterThan(0);
    const one = await api('/api/runs/1/compare');
    expect(one).toEqual(await cliJson('compare', '1'));
    expect(one.configurations).toHaveLength(1);
    expect(one.differences).toEqual([]);
    expect(one.notes.join(' ')).toMatch(/one configuration/);
  });

  it('amplitude: the slope show gives, points and bins in SI, a span keeps to its windows', async () => {
    const run = String(configRun);
    const [a, show] = await Promise.all([api(`/api/runs/${run}/amplitude`), cliJson('show', run) as Promise<Record<string, unknown>>]);
    expect(a.run).toBe(configRun);
    expect(a.period_amplitude_slope_s_per_rad).toBe(show.period_amplitude_slope_s_per_rad);
    expect(a.period_amplitude_slope_sigma_s_per_rad).toBe(show.period_amplitude_slope_sigma_s_per_rad);
    // the simulated fibre's slope, within 5σ
    expect(Math.abs(a.period_amplitude_slope_s_per_rad - CONFIG_TRUTH.slope_s_per_rad)).toBeLessThan(5 * a.period_amplitude_slope_sigma_s_per_rad);
    expect(a.temperature_removed).toBe(false);
    expect(a.line.period_ref_s).toBeGreaterThan(19);
    const n = a.points.amplitude_rad.length;
    expect(n).toBeGreaterThan(20);
    for (const k of ['t_mid_s', 'period_s', 'period_sigma_s', 'q', 'q_sigma']) expect(a.points[k], k).toHaveLength(n);
    // SI: a swing of a few mrad in rad, a period near 20 s
    expect(Math.max(...a.points.amplitude_rad)).toBeLessThan(0.006);
    expect(Math.min(...a.points.amplitude_rad)).toBeGreaterThan(0.001);
    expect(a.bins.amplitude_rad.length).toBeGreaterThan(2);
    for (const k of ['amplitude_lo_rad', 'amplitude_hi_rad', 'windows', 'period_s', 'period_sigma_s', 'q', 'q_sigma']) expect(a.bins[k], k).toHaveLength(a.bins.amplitude_rad.length);
    const span = await api(`/api/runs/${run}/amplitude?from_s=1200&to_s=3000`);
    expect(span.points.t_mid_s.length).toBeGreaterThan(5);
    expect(span.points.t_mid_s.length).toBeLessThan(n);
    expect(span.points.t_mid_s.every((t: number) => t > 1200 && t < 3000)).toBe(true);
    // asked again: the kept answer
    expect(await api(`/api/runs/${run}/amplitude`)).toEqual(a);
    // a run without a configuration change has its dependence too
    expect((await api('/api/runs/1/amplitude')).points.amplitude_rad.length).toBeGreaterThan(0);
  });

  it('fibres and one fibre\'s history (the markup name too)', async () => {
    expect(await api('/api/fibres')).toEqual(await cliJson('fibres'));
    for (const name of ['W25-a', 'QZ-b', MARKUP_FIBRE]) {
      expect(await api(`/api/fibres/${encodeURIComponent(name)}`), name).toEqual(await cliJson('fibre', name));
    }
  });

  it('healthz', async () => {
    expect(await api('/healthz')).toEqual({ ok: true });
  });
});

describe('samples: min/max per bucket', () => {
  let samples: { t_s: number; angle_rad: number | null; flags: number }[];
  beforeAll(async () => {
    const r = await runCliAsync(['export', '1', '--what', 'samples', '--format', 'json', '--db', db]);
    expect(r.status, r.stderr).toBe(0);
    samples = JSON.parse(r.stdout);
  });

  /** The reference: every usable sample scanned for each bucket [from + k·w, from + (k+1)·w). */
  function reference(from: number, to: number, w: number) {
    const n = Math.round((to - from) / w);
    const out: { t: number; lo: number; hi: number }[] = [];
    for (let k = 0; k < n; k++) {
      const a = from + k * w, b = from + (k + 1) * w;
      let lo = Infinity, hi = -Infinity;
      for (const s of samples) {
        if (s.t_s < a || s.t_s >= b || s.angle_rad === null || s.flags & 8) continue;
        lo = Math.min(lo, s.angle_rad);
        hi = Math.max(hi, s.angle_rad);
      }
      if (lo <= hi) out.push({ t: a + w / 2, lo, hi });
    }
    return out;
  }

  it('equals a brute-force scan of the exported samples, from the grid and from the chunks', async () => {
    expect(samples.length).toBe(11_850);
    for (const path of ['/api/runs/1/samples?points=100', '/api/runs/1/samples', '/api/runs/1/samples?from_s=100&to_s=400&points=50', '/api/runs/1/samples?from_s=590&to_s=650&points=7']) {
      const a = await api(path);
      expect(a.t_s.length, path).toBeGreaterThan(0);
      expect(a.t_s.length, path).toBeLessThanOrEqual(Number(new URL(path, 'http://x').searchParams.get('points') ?? 2000));
      expect(a.bucket_s, path).not.toBeNull();
      const ref = reference(a.from_s, a.to_s, a.bucket_s);
      expect(a.t_s.length, path).toBe(ref.length);
      ref.forEach((r, i) => {
        expect(a.t_s[i]).toBeCloseTo(r.t, 6);
        expect(a.min_rad[i]).toBe(r.lo);
        expect(a.max_rad[i]).toBe(r.hi);
      });
      expect(a.samples).toBe(samples.filter((s) => s.t_s >= a.from_s && s.t_s < a.to_s && s.angle_rad !== null && !(s.flags & 8)).length);
    }
    // the 30 s gap at 600 s: no bucket inside it
    const g = await api('/api/runs/1/samples?from_s=590&to_s=650&points=7');
    const half = g.bucket_s / 2;
    expect(g.t_s.some((t: number) => t - half > 601 && t + half < 629)).toBe(false);
    expect(g.t_s.length).toBeLessThan(7);
  });

  it('gives the samples themselves when there are no more than `points`', async () => {
    const a = await api('/api/runs/1/samples?from_s=100&to_s=110&points=2000');
    const want = samples.filter((s) => s.t_s >= 100 && s.t_s < 110);
    expect(a.bucket_s).toBeNull();
    expect(a.t_s).toEqual(want.map((s) => s.t_s));
    expect(a.min_rad).toEqual(want.map((s) => s.angle_rad));
    expect(a.max_rad).toEqual(a.min_rad);
  });
});

describe('the live stream', () => {
  it('opens with the run\'s row (as runs --json) and keeps the connection', async () => {
    const ac = new AbortController();
    const r = await fetch(`${srv.base}/api/runs/2/stream`, { signal: ac.signal });
    expect(r.status).toBe(200);
    expect(r.headers.get('content-type')).toMatch(/^text\/event-stream/);
    expect(r.headers.get('content-security-policy')).toContain("script-src 'self'");
    const reader = r.body!.getReader();
    let text = '';
    while (!text.includes('\n\nevent: status') || !/event: status\ndata: .*\n\n/.test(text)) text += new TextDecoder().decode((await reader.read()).value);
    ac.abort();
    expect(text).toMatch(/^retry: \d+\n\n/);
    const row = JSON.parse(/event: status\ndata: (.*)\n\n/.exec(text)![1]);
    expect(row).toEqual((await cliJson('runs', '--station', 'bench-b') as unknown[])[0]);
  });
});

describe('bad requests', () => {
  it('400 naming the parameter', async () => {
    const cases: [string, RegExp][] = [
      ['/api/runs/abc', /^run: must be a run number/],
      ['/api/runs/0/windows', /^run: must be a run number/],
      ['/api/runs?since=yesterday', /^since: "yesterday" is not YYYY-MM-DD/],
      ['/api/runs?since=2026-03-05&until=2026-03-01', /^until: must be after since/],
      ['/api/runs?fibre=a&fibre=b', /^fibre: give it once/],
      ['/api/runs?fibres=W25-a', /^fibres: unknown parameter/],
      ['/api/runs/1/samples?points=0', /^points: must be a whole number from 1 to 20000/],
      ['/api/runs/1/samples?points=2.5', /^points: /],
      ['/api/runs/1/samples?points=100000', /^points: /],
      ['/api/runs/1/samples?from_s=x', /^from_s: must be a number of seconds/],
      ['/api/runs/1/samples?from_s=10&to_s=5', /^to_s: must be after from_s/],
      ['/api/runs/1/samples?form_s=10', /^form_s: unknown parameter \(this path takes from_s, to_s, points\)/],
      ['/api/runs/1/noise?from_s=-1', /^from_s: /],
      ['/api/runs/1/noise?from_s=1e6', /^from_s: run 1 has no samples/],
      ['/api/runs/1?json=1', /^json: unknown parameter/],
      ['/api/runs/1/amplitude?from_s=soon', /^from_s: must be a number of seconds/],
      ['/api/runs/1/amplitude?to_s=-5', /^to_s: must be a number of seconds ≥ 0/],
      ['/api/runs/1/amplitude?bins=4', /^bins: unknown parameter \(this path takes from_s, to_s\)/],
      ['/api/runs/1/compare?from_s=-1', /^from_s: must be a number of seconds ≥ 0/],
      ['/api/runs/1/compare?from_s=100&to_s=50', /^to_s: must be after from_s/],
      ['/api/runs/x/compare', /^run: must be a run number/],
    ];
    for (const [path, msg] of cases) {
      const r = await getJson(srv.base, path);
      expect(r.status, path).toBe(400);
      expect(r.body.error, path).toMatch(msg);
    }
  });

  it('404 for an unknown run, fibre or path; pages too', async () => {
    for (const path of ['/api/runs/99', '/api/runs/99/windows', '/api/runs/99/events', '/api/runs/99/samples', '/api/runs/99/stream', '/api/runs/99/noise', '/api/runs/99/amplitude', '/api/runs/99/compare']) {
      const r = await getJson(srv.base, path);
      expect(r.status, path).toBe(404);
      expect(r.body.error).toMatch(/^run 99: no such run/);
    }
    const f = await getJson(srv.base, '/api/fibres/no-such-fibre');
    expect(f.status).toBe(404);
    expect(f.body.error).toMatch(/fibre "no-such-fibre": not in this store/);
    expect((await getJson(srv.base, '/api/nothing')).status).toBe(404);
    for (const page of ['/runs/99', '/fibres/nope', '/nothing']) {
      const r = await fetch(srv.base + page);
      expect(r.status, page).toBe(404);
      expect(r.headers.get('content-type')).toMatch(/^text\/html/);
      expect(await r.text()).not.toMatch(/<script/);
    }
  });

  it('a run page takes the comparison\'s span in its address, checked as the API checks it', async () => {
    expect((await fetch(`${srv.base}/runs/1?compare_from_s=600&compare_to_s=1200`)).status).toBe(200);
    for (const [page, msg] of [['/runs/1?compare_from_s=-1', /compare_from_s: must be a number of seconds ≥ 0/], ['/runs/1?compare_from_s=60&compare_to_s=10', /compare_to_s: must be after compare_from_s/], ['/runs/1?from_s=1', /from_s: unknown parameter/]] as const) {
      const r = await fetch(srv.base + page);
      expect(r.status, page).toBe(400);
      expect(await r.text(), page).toMatch(msg);
    }
  });

  it('nothing changes the store: other methods are refused, the file is as it was', async () => {
    for (const method of ['POST', 'PUT', 'DELETE', 'PATCH']) {
      const r = await fetch(`${srv.base}/api/runs/1`, { method, body: method === 'DELETE' ? undefined : 'x'.repeat(5000), headers: { 'content-type': 'application/json' } });
      expect(r.status, method).toBeGreaterThanOrEqual(400);
      expect(r.status).toBeLessThan(500);
    }
    expect(hash(db)).toBe(storeHash);
  });

  it('answers only requests addressed to a loopback name when bound to loopback', async () => {
    // fetch may not set Host: a plain request does, as a rebound name in a browser would
    const r = await new Promise<{ status: number; body: string }>((resolve, reject) => {
      const q = request({ host: '127.0.0.1', port: srv.port, path: '/api/runs', headers: { host: `rebound.example:${srv.port}` } }, (res) => {
        let body = '';
        res.setEncoding('utf8').on('data', (d) => (body += d)).on('end', () => resolve({ status: res.statusCode!, body }));
      });
      q.on('error', reject).end();
    });
    expect(r.status).toBe(403);
    expect(JSON.parse(r.body).error).toMatch(/loopback/);
  });
});

describe('pages and headers', () => {
  it('pages are shells with no inline script or style, names escaped, and a strict Content-Security-Policy', async () => {
    for (const page of ['/', '/runs/1', '/runs/1/noise', `/fibres/${encodeURIComponent(MARKUP_FIBRE)}`]) {
      const r = await fetch(srv.base + page);
      expect(r.status, page).toBe(200);
      const csp = r.headers.get('content-security-policy')!;
      expect(csp).toContain("default-src 'none'");
      expect(csp).toContain("script-src 'self'");
      expect(csp).not.toContain('unsafe-inline');
      expect(r.headers.get('x-content-type-options')).toBe('nosniff');
      const html = await r.text();
      expect(html).not.toMatch(/<script(?![^>]*\bsrc=)[^>]*>/);
      expect(html).not.toMatch(/\sstyle=/);
      expect(html).not.toContain('<img');
    }
    const js = await fetch(`${srv.base}/assets/dashboard.js`);
    expect(js.headers.get('content-type')).toMatch(/javascript/);
    expect((await js.text()).length).toBeGreaterThan(30_000);
    expect((await fetch(`${srv.base}/favicon.ico`)).status).toBe(200);
  });
});
