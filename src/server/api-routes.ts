/**
 * The JSON API's routes (docs/dashboard.md): parameters checked here (400
 * naming them), answers from RunAnswers — each what the matching command
 * prints with --json — and the live stream (Server-Sent Events fed by the
 * server's one LiveFeed).
 */
import type { FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import type { ReadStore } from '../../db/read-store.js';
import type { RunRecord } from '../../db/runs.js';
import { checkQuery, dateParam, integerParam, runParam, runSpanParams, secondsParam, spanParams, textParam } from './params.js';
import { SECURITY_HEADERS } from './security-headers.js';
import type { LiveFeed } from './live-feed.js';
import type { RunAnswers } from './run-answers.js';

/** What the routes share. */
export interface ApiContext {
  store: ReadStore;
  answers: RunAnswers;
  feed: LiveFeed;
  maxStreams: number;
}

/** Buckets of the samples answer when `points` is not given, and the most it may ask for. */
const DEFAULT_POINTS = 2000;
const MAX_POINTS = 20_000;

const json = (reply: FastifyReply, text: string) => reply.header('cache-control', 'no-store').type('application/json; charset=utf-8').send(text);

/** Register /api/* and /healthz. */
export function registerApi(app: FastifyInstance, ctx: ApiContext): void {
  const { store, feed, answers } = ctx;
  /** The run of `:run`, or 404. */
  const runOf = (req: FastifyRequest): Promise<RunRecord> => answers.run(runParam((req.params as { run?: string }).run));

  app.get('/healthz', async (req, reply) => {
    checkQuery(req.query, []);
    return json(reply, JSON.stringify({ ok: true }));
  });

  app.get('/api/runs', async (req, reply) => {
    const q = checkQuery(req.query, ['fibre', 'station', 'since', 'until']);
    const { from: since_ms, to: until_ms } = spanParams(q, 'since', 'until', dateParam);
    const rows = await store.listRuns({ fibre: textParam(q, 'fibre'), station: textParam(q, 'station'), since_ms, until_ms });
    return json(reply, JSON.stringify(rows));
  });

  app.get('/api/runs/:run', async (req, reply) => {
    checkQuery(req.query, []);
    const r = await runOf(req);
    return json(reply, await answers.summary(r));
  });

  app.get('/api/runs/:run/windows', async (req, reply) => {
    checkQuery(req.query, []);
    const r = await runOf(req);
    return json(reply, await answers.windows(r));
  });

  app.get('/api/runs/:run/events', async (req, reply) => {
    checkQuery(req.query, []);
    const r = await runOf(req);
    return json(reply, await answers.events(r));
  });

  app.get('/api/runs/:run/samples', async (req, reply) => {
    const q = checkQuery(req.query, ['from_s', 'to_s', 'points']);
    const { from, to } = spanParams(q, 'from_s', 'to_s', secondsParam);
    const points = integerParam(q, 'points', 1, MAX_POINTS) ?? DEFAULT_POINTS;
    const r = await runOf(req);
    return json(reply, await answers.samples(r, from, to, points));
  });

  app.get('/api/runs/:run/noise', async (req, reply) => {
    const { from, to } = runSpanParams(checkQuery(req.query, ['from_s', 'to_s']));
    const r = await runOf(req);
    const text = await answers.noise(r, from, to);
    return json(reply, text);
  });

  app.get('/api/runs/:run/amplitude', async (req, reply) => {
    const { from, to } = runSpanParams(checkQuery(req.query, ['from_s', 'to_s']));
    const r = await runOf(req);
    return json(reply, await answers.amplitude(r, from, to));
  });

  app.get('/api/runs/:run/compare', async (req, reply) => {
    const { from, to } = runSpanParams(checkQuery(req.query, ['from_s', 'to_s']));
    const r = await runOf(req);
    return json(reply, await answers.compare(r, from, to));
  });

  app.get('/api/fibres', async (req, reply) => {
    checkQuery(req.query, []);
    return json(reply, JSON.stringify(await store.listFibres()));
  });

  app.get('/api/fibres/:name', async (req, reply) => {
    checkQuery(req.query, []);
    return json(reply, await answers.fibre((req.params as { name: string }).name));
  });

  let streams = 0;
  app.get('/api/runs/:run/stream', async (req, reply) => {
    checkQuery(req.query, []);
    const r = await runOf(req);
    // a HEAD asks whether the stream is there, not for the stream
    if (req.method === 'HEAD') return reply.type('text/event-stream; charset=utf-8').send();
    if (streams >= ctx.maxStreams) {
      return reply.code(503).header('retry-after', '10').send({ error: `too many live streams open (${ctx.maxStreams}); close a page and try again` });
    }
    streams++;
    reply.hijack();
    const res = reply.raw;
    res.writeHead(200, {
      ...SECURITY_HEADERS,
      'content-type': 'text/event-stream; charset=utf-8',
      'cache-control': 'no-store',
      connection: 'keep-alive',
      'x-accel-buffering': 'no',
    });
    // EventSource reconnects by itself after a lost connection; ask it to try again after 2 s
    res.write('retry: 2000\n\n');
    let closed = false;
    const send = (event: string, data: unknown) => {
      if (!closed) res.write(`event: ${event}\ndata: ${JSON.stringify(data)}\n\n`);
    };
    const comment = () => {
      if (!closed) res.write(': still here\n\n');
    };
    let unsubscribe: (() => void) | undefined;
    const done = () => {
      if (closed) return;
      closed = true;
      streams--;
      unsubscribe?.();
    };
    req.raw.on('close', done);
    res.on('close', done);
    unsubscribe = await feed.subscribe(r.run, send, comment);
    if (closed) unsubscribe();
  });
}
