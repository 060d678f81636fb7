/** The dashboard's pages (HTML shells the client fills in) and its files: the bundle, the style sheet, the icon. */
import type { FastifyInstance } from 'fastify';
import type { ReadStore } from '../../db/read-store.js';
import type { WebAssets } from '../report/web-assets.js';
import { FAVICON_SVG, pageShell } from './page-shell.js';
import { NotFound, checkQuery, nonNegativeSecondsParam, runParam, spanParams } from './params.js';

/** What the page routes need. */
export interface PageContext {
  store: ReadStore;
  assets: WebAssets;
}

const html = 'text/html; charset=utf-8';

/** A page for a refusal or a missing thing: status and message as text, no script. */
export function errorPage(code: number, message: string): string {
  return pageShell({ page: 'error', title: `fibrewatch · ${code}`, body: message });
}

/** Register the pages and files. */
export function registerPages(app: FastifyInstance, ctx: PageContext): void {
  const { store, assets } = ctx;
  const runOf = async (v: unknown) => {
    const id = runParam(v);
    const r = await store.getRun(id);
    if (!r) throw new NotFound(`run ${id}: no such run in this store`);
    return r;
  };

  app.get('/', async (req, reply) => {
    checkQuery(req.query, ['fibre', 'station', 'since', 'until']);
    return reply.type(html).send(pageShell({ page: 'runs', title: 'fibrewatch · runs' }));
  });

  app.get('/runs/:run', async (req, reply) => {
    // the comparison's span, as compare --from-s --to-s (the page hands it to /api/runs/N/compare)
    const q = checkQuery(req.query, ['compare_from_s', 'compare_to_s']);
    spanParams(q, 'compare_from_s', 'compare_to_s', nonNegativeSecondsParam);
    const r = await runOf((req.params as { run: string }).run);
    return reply.type(html).send(pageShell({ page: 'run', title: `fibrewatch · run ${r.run}`, data: { run: String(r.run) } }));
  });

  app.get('/runs/:run/noise', async (req, reply) => {
    checkQuery(req.query, ['from_s', 'to_s']);
    const r = await runOf((req.params as { run: string }).run);
    return reply.type(html).send(pageShell({ page: 'noise', title: `fibrewatch · run ${r.run} · noise`, data: { run: String(r.run) } }));
  });

  app.get('/fibres/:name', async (req, reply) => {
    checkQuery(req.query, []);
    const name = (req.params as { name: string }).name;
    if (!(await store.listFibres()).some((f) => f.name === name)) throw new NotFound(`fibre "${name}": not in this store`);
    return reply.type(html).send(pageShell({ page: 'fibre', title: `fibrewatch · fibre ${name}`, data: { fibre: name } }));
  });

  app.get('/assets/dashboard.js', async (_req, reply) => reply.header('cache-control', 'no-cache').type('text/javascript; charset=utf-8').send(assets.js));
  app.get('/assets/dashboard.css', async (_req, reply) => reply.header('cache-control', 'no-cache').type('text/css; charset=utf-8').send(assets.css));
  // browsers ask for /favicon.ico by themselves: answer it rather than log a 404 in every page's console
  for (const p of ['/favicon.svg', '/favicon.ico']) {
    app.get(p, async (_req, reply) => reply.header('cache-control', 'max-age=86400').type('image/svg+xml').send(FAVICON_SVG));
  }
}
