import { afterEach, describe, expect, it } from 'vitest';
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { createWebhookSink } from '../../src/alerts/webhook-sink.js';
import type { AlertRecord } from '../../src/alerts/alert-record.js';

const alert = (i: number): AlertRecord => ({
  run: 7, station: 'bench-a', t: new Date(Date.UTC(2026, 0, 1, 0, i)).toISOString(), t_s: 60 * i,
  kind: 'equilibrium-drift', severity: 'warning', state: 'raised', message: `alert ${i}`, value: i, threshold: 1, data: { unit: 'rad/s' },
});

type Handler = (req: IncomingMessage, body: string, res: ServerResponse) => void;
const servers: Server[] = [];
function listen(handler: Handler, port = 0): Promise<Server> {
  const srv = createServer((req, res) => {
    let body = '';
    req.setEncoding('utf8');
    req.on('data', (c) => (body += c));
    req.on('end', () => handler(req, body, res));
  });
  servers.push(srv);
  return new Promise((resolve, reject) => {
    srv.once('error', reject);
    srv.listen(port, '127.0.0.1', () => resolve(srv));
  });
}
const stop = (srv: Server) => new Promise<void>((r) => { srv.closeAllConnections(); srv.close(() => r()); });
const waitFor = async (cond: () => boolean, ms = 5000) => {
  const end = Date.now() + ms;
  while (!cond()) {
    if (Date.now() > end) throw new Error('timed out waiting');
    await new Promise((r) => setTimeout(r, 10));
  }
};
afterEach(async () => { await Promise.all(servers.splice(0).map((s) => (s.listening ? stop(s) : undefined))); });

const cfg = (url: string, o = {}) => ({ url, timeout_s: 1, retries: 1000, max_delay_s: 0.2, queue_max: 100, ...o });

describe('webhook sink on a real local HTTP server', () => {
  it('POSTs each alert as JSON, in order', async () => {
    const got: { method?: string; type?: string; body: AlertRecord }[] = [];
    const srv = await listen((req, body, res) => { got.push({ method: req.method, type: req.headers['content-type'], body: JSON.parse(body) }); res.end('ok'); });
    const url = `http://127.0.0.1:${(srv.address() as AddressInfo).port}/hook`;
    const sink = createWebhookSink(cfg(url));
    for (let i = 0; i < 5; i++) expect(sink.send(alert(i))).toBeUndefined(); // synchronous enqueue
    await waitFor(() => got.length === 5);
    expect(got.map((g) => g.body.message)).toEqual(['alert 0', 'alert 1', 'alert 2', 'alert 3', 'alert 4']);
    expect(got[0]).toEqual({ method: 'POST', type: 'application/json', body: alert(0) });
    expect(await sink.close(1000)).toEqual({ delivered: 5, failed: 0, dropped: 0, pending: 0 });
  });

  it('survives the receiver being down: queued alerts all arrive, in order, once it is back', async () => {
    const got: string[] = [];
    const handler: Handler = (_req, body, res) => { got.push(JSON.parse(body).message); res.end(); };
    const srv = await listen(handler);
    const port = (srv.address() as AddressInfo).port;
    const errors: string[] = [];
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${port}/`), { minDelay_s: 0.02, onError: (m) => errors.push(m) });
    sink.send(alert(0));
    sink.send(alert(1));
    await waitFor(() => got.length === 2);
    await stop(srv); // receiver goes down
    for (let i = 2; i < 12; i++) sink.send(alert(i));
    await new Promise((r) => setTimeout(r, 700));
    expect(got).toHaveLength(2);
    expect(sink.stats().pending).toBe(10);
    await listen(handler, port); // back on the same port
    await waitFor(() => got.length === 12);
    expect(got).toEqual(Array.from({ length: 12 }, (_, i) => `alert ${i}`));
    // the first failure is the kept-alive socket closing, or a refused connection
    expect(errors[0]).toMatch(/UND_ERR_SOCKET|ECONNREFUSED|ECONNRESET/);
    expect(errors[0]).toMatch(/retrying with backoff \(queue 10\)/);
    expect(errors.at(-1)).toMatch(/delivering again/);
    expect(await sink.close(500)).toEqual({ delivered: 12, failed: 0, dropped: 0, pending: 0 });
  });

  it('caps the queue: the oldest are dropped and counted, the next delivery says how many', async () => {
    const got: (AlertRecord & { dropped_before?: number })[] = [];
    const handler: Handler = (_req, body, res) => { got.push(JSON.parse(body)); res.end(); };
    const probe = await listen(handler);
    const port = (probe.address() as AddressInfo).port;
    await stop(probe); // start down: the receiver comes up late
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${port}/`, { queue_max: 4 }), { minDelay_s: 0.02 });
    for (let i = 0; i < 10; i++) sink.send(alert(i));
    // alert 0 is in flight when the rest arrive; 1–5 are pushed out by 6–9 (ring of 4 holds 0→ then 6..9)
    expect(sink.stats().dropped).toBe(6);
    await new Promise((r) => setTimeout(r, 100));
    await listen(handler, port);
    await waitFor(() => got.length >= 4);
    await new Promise((r) => setTimeout(r, 100));
    expect(got.map((g) => g.message)).toEqual(['alert 6', 'alert 7', 'alert 8', 'alert 9']);
    expect(got[0].dropped_before).toBe(6);
    expect(got[1].dropped_before).toBeUndefined();
    await sink.close(200);
  });

  it('times out a hung attempt and retries; a 400 is given up, not retried; a 503 is retried', async () => {
    let n = 0;
    const got: string[] = [];
    const srv = await listen((_req, body, res) => {
      n++;
      const m = JSON.parse(body).message;
      if (n === 1) return; // hang: never answer
      if (m === 'alert 1') { res.statusCode = 400; res.end('bad'); return; }
      if (m === 'alert 2' && !got.includes('503')) { got.push('503'); res.statusCode = 503; res.end(); return; }
      got.push(m);
      res.end();
    });
    const errors: string[] = [];
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${(srv.address() as AddressInfo).port}/`, { timeout_s: 0.3 }), { minDelay_s: 0.02, onError: (e) => errors.push(e) });
    const t0 = Date.now();
    for (let i = 0; i < 4; i++) sink.send(alert(i));
    await waitFor(() => got.includes('alert 3'));
    expect(Date.now() - t0).toBeGreaterThanOrEqual(290);
    expect(got).toEqual(['alert 0', '503', 'alert 2', 'alert 3']);
    expect(errors.some((e) => /timed out after 0\.3 s/.test(e))).toBe(true);
    expect(errors.some((e) => /refused equilibrium-drift raised .* not retried/.test(e))).toBe(true);
    expect(await sink.close(200)).toEqual({ delivered: 3, failed: 1, dropped: 0, pending: 0 });
  });

  it('close(grace) returns within the grace with what is undelivered; bad config names the field', async () => {
    const probe = await listen((_q, _b, res) => res.end());
    const port = (probe.address() as AddressInfo).port;
    await stop(probe);
    const errors: string[] = [];
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${port}/`, { max_delay_s: 10 }), { minDelay_s: 5, onError: (e) => errors.push(e) });
    sink.send(alert(0));
    sink.send(alert(1));
    const t0 = Date.now();
    const st = await sink.close(300);
    expect(Date.now() - t0).toBeLessThan(1500);
    expect(st).toEqual({ delivered: 0, failed: 0, dropped: 0, pending: 2 });
    expect(errors.at(-1)).toMatch(/closing with 2 alert\(s\) undelivered/);
    expect(() => createWebhookSink(cfg('not a url'))).toThrow(/alerts\.webhook\.url: not a URL/);
    expect(() => createWebhookSink(cfg('http://127.0.0.1:1/', { timeout_s: 0 }))).toThrow(/alerts\.webhook\.timeout_s: must be > 0/);
  });

  it('close(grace) drains a long queue to a slow but live receiver: the grace restarts on each delivery', async () => {
    const got: number[] = [];
    const srv = await listen((_q, body, res) => { setTimeout(() => { got.push(JSON.parse(body).value); res.end('ok'); }, 120); });
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${(srv.address() as AddressInfo).port}/`));
    for (let i = 0; i < 8; i++) sink.send(alert(i));
    const t0 = Date.now();
    // 8 × 120 ms is well past a 500 ms grace, but each answer comes within it
    expect(await sink.close(500)).toEqual({ delivered: 8, failed: 0, dropped: 0, pending: 0 });
    expect(Date.now() - t0).toBeGreaterThan(8 * 120);
    expect(got).toEqual([0, 1, 2, 3, 4, 5, 6, 7]);
  });

  it('gives up after `retries` and moves on', async () => {
    const probe = await listen((_q, _b, res) => res.end());
    const port = (probe.address() as AddressInfo).port;
    await stop(probe);
    const errors: string[] = [];
    const sink = createWebhookSink(cfg(`http://127.0.0.1:${port}/`, { retries: 2 }), { minDelay_s: 0.01, onError: (e) => errors.push(e) });
    sink.send(alert(0));
    sink.send(alert(1));
    await waitFor(() => sink.stats().failed === 2);
    expect(errors.filter((e) => /gave up .* after 3 attempts/.test(e))).toHaveLength(2);
    await sink.close(100);
  });
});
