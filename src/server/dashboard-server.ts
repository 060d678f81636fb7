/**
 * `fibrewatch serve`: a read-only web dashboard and JSON API over a store
 * (docs/dashboard.md). fastify does the HTTP; every answer comes from the same
 * functions the commands use (ReadStore, buildSummary, fibreHistory,
 * buildNoiseBudget), so `GET /api/runs/3` is `show 3 --json`. The store is
 * only read: no route writes, and no read holds SQLite's WAL between batches.
 */
import Fastify, { type FastifyInstance, type FastifyReply } from 'fastify';
import rateLimit from '@fastify/rate-limit';
import type { AddressInfo } from 'node:net';
import type { ReadStore } from '../../db/read-store.js';
import { UsageError } from '../domain/errors.js';
import { loadWebAssets } from '../report/web-assets.js';
import { hostName, isLoopback, MIN_TOKEN_LENGTH, tokenCookie, tokenMatcher, tokenOf } from './access.js';
import { registerApi } from './api-routes.js';
import { registerPages, errorPage } from './page-routes.js';
import { LiveFeed } from './live-feed.js';
import { SECURITY_HEADERS } from './security-headers.js';
import { RunAnswers } from './run-answers.js';

/** Options of startDashboard (SI units, times in ms where named so). */
export interface DashboardOptions {
  store: ReadStore;
  /** address to bind (default 127.0.0.1); anything but loopback needs `token` */
  host?: string;
  /** port (default 8177; 0: any free port) */
  port?: number;
  /** the token every request must carry; required beyond loopback */
  token?: string;
  /** how often the live feed reads the store's change token, ms (default 500) */
  poll_ms?: number;
  /** requests a client (IP address) may make per minute (default 1200) */
  requestsPerMinute?: number;
  /** live streams open at once (default 64): more are refused with 503 */
  maxStreams?: number;
  /** where problems the server meets are told (default: stderr) */
  log?: (line: string) => void;
  /** runs to read ahead after starting (recording ones first, then the newest; default 4, 0: none) */
  readAhead?: number;
}

/** A running dashboard. */
export interface Dashboard {
  app: FastifyInstance;
  /** the address to open, e.g. http://127.0.0.1:8177/ */
  url: string;
  port: number;
  /** the read-ahead of the likely first pages, running after the start */
  readAhead: Promise<{ runs: number; s: number } | null>;
  close(): Promise<void>;
}

/** Refuse a binding beyond loopback without a token, and a token too short to resist guessing. */
export function checkExposure(host: string, token: string | undefined): void {
  if (token !== undefined && token.length < MIN_TOKEN_LENGTH) {
    throw new UsageError(`--token: must be at least ${MIN_TOKEN_LENGTH} characters (e.g. the output of \`openssl rand -hex 16\`)`);
  }
  if (!isLoopback(host) && token === undefined) {
    throw new UsageError(`--host ${host}: serving beyond this machine needs a token (--token or FIBREWATCH_TOKEN); or keep the default 127.0.0.1 and use an SSH tunnel`);
  }
}

const wantsHtml = (url: string): boolean => !url.startsWith('/api/') && url !== '/healthz' && !url.startsWith('/healthz?');

/** Build the server (routes, limits, access) without listening. */
async function buildDashboard(opts: DashboardOptions): Promise<{ app: FastifyInstance; feed: LiveFeed; answers: RunAnswers }> {
  const host = opts.host ?? '127.0.0.1';
  checkExposure(host, opts.token);
  const log = opts.log ?? ((l: string) => process.stderr.write(`fibrewatch: serve: ${l}\n`));
  const assets = loadWebAssets();
  const app = Fastify({
    logger: false,
    // GET only: a request body has no business here
    bodyLimit: 1024,
    routerOptions: { maxParamLength: 1000 },
    // closing ends the live streams too
    forceCloseConnections: true,
    return503OnClosing: true,
  });
  const feed = new LiveFeed(opts.store, { poll_ms: opts.poll_ms, onError: (e) => log(`live feed: ${(e as Error).message ?? e}`) });
  app.addHook('onClose', async () => feed.stop());

  app.addHook('onRequest', async (_req, reply) => {
    reply.headers(SECURITY_HEADERS);
  });
  await app.register(rateLimit, {
    max: opts.requestsPerMinute ?? 1200,
    timeWindow: 60_000,
    errorResponseBuilder: (_req, ctx) => Object.assign(new Error(`too many requests: at most ${ctx.max} a minute from one address; try again in ${ctx.after}`), { statusCode: ctx.statusCode }),
  });

  // access: after the rate limit (onRequest), so guessing tokens is limited too
  const match = opts.token !== undefined ? tokenMatcher(opts.token) : undefined;
  app.addHook('preHandler', async (req, reply) => {
    if (!match) {
      if (!isLoopback(hostName(req.headers.host))) {
        return deny(reply, 403, 'this dashboard is bound to the loopback interface and answers only requests to 127.0.0.1 or localhost (start serve with --token to reach it from elsewhere)', req.url);
      }
      return;
    }
    const got = tokenOf(req.headers, req.query);
    if (!match(got.token)) {
      reply.header('www-authenticate', 'Bearer realm="fibrewatch"');
      return deny(reply, 401, got.token === undefined ? 'a token is needed: Authorization: Bearer T, or open the page once with ?token=T' : 'wrong token', req.url);
    }
    if (got.from === 'query') {
      reply.header('set-cookie', tokenCookie(opts.token!));
      // take the token out of the address bar and the history
      if (wantsHtml(req.url) && req.method === 'GET') {
        const u = new URL(req.url, 'http://x');
        u.searchParams.delete('token');
        return reply.code(303).header('location', u.pathname + u.search).send();
      }
    }
  });

  app.setErrorHandler((err: Error & { statusCode?: number }, req, reply) => {
    const code = err instanceof UsageError ? 400 : err.statusCode && err.statusCode >= 400 ? err.statusCode : 500;
    if (code >= 500 && code !== 503) log(`${req.method} ${req.url}: ${err.stack ?? err.message}`);
    const msg = code === 500 && !(err as { exitCode?: number }).exitCode ? `internal error: ${err.name}: ${err.message}` : err.message;
    if (wantsHtml(req.url)) return reply.code(code).type('text/html; charset=utf-8').send(errorPage(code, msg));
    return reply.code(code).send({ error: msg });
  });
  app.setNotFoundHandler((req, reply) => {
    const msg = `no such path: ${req.method} ${req.url.replace(/([?&])token=[^&]*/g, '$1token=…')}`;
    if (wantsHtml(req.url)) return reply.code(404).type('text/html; charset=utf-8').send(errorPage(404, msg));
    return reply.code(404).send({ error: msg });
  });

  const answers = new RunAnswers(opts.store);
  registerApi(app, { store: opts.store, answers, feed, maxStreams: opts.maxStreams ?? 64 });
  registerPages(app, { store: opts.store, assets });
  return { app, feed, answers };
}

function deny(reply: FastifyReply, code: number, msg: string, url: string): FastifyReply {
  if (wantsHtml(url)) return reply.code(code).type('text/html; charset=utf-8').send(errorPage(code, msg));
  return reply.code(code).send({ error: msg });
}

/** Build and listen; resolves once the port is open. */
export async function startDashboard(opts: DashboardOptions): Promise<Dashboard> {
  const host = opts.host ?? '127.0.0.1';
  const { app, answers } = await buildDashboard(opts);
  await app.listen({ host, port: opts.port ?? 8177 });
  const port = (app.server.address() as AddressInfo).port;
  const shown = host.includes(':') ? `[${host}]` : host;
  const ahead = opts.readAhead ?? 4;
  const readAhead = ahead > 0 ? timedReadAhead(answers, ahead) : Promise.resolve(null);
  return { app, port, url: `http://${shown}:${port}/`, readAhead, close: () => app.close() };
}

/** Read ahead in the background; resolves with the runs read and the time taken (null when it failed: requests then read as they come). */
async function timedReadAhead(answers: RunAnswers, runs: number): Promise<{ runs: number; s: number } | null> {
  const t0 = performance.now();
  try {
    return { runs: await answers.readAhead(runs), s: (performance.now() - t0) / 1000 };
  } catch {
    return null;
  }
}
