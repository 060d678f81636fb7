/// <reference lib="dom" />
/**
 * The dashboard's client, bundled with uPlot into dist/web/dashboard.js (by
 * src/web/build-client.ts). The page says what it is in <body data-page>; the
 * server's pages read the API, the report reads the data inlined in it.
 */
import { mainElement, showProblem } from './dom.js';
import { runsPage } from './runs-page.js';
import { runPage } from './run-page.js';
import { fibrePage } from './fibre-page.js';
import { noisePage } from './noise-page.js';
import { reportPage } from './report-page.js';

async function boot(): Promise<void> {
  const b = document.body.dataset;
  const main = mainElement();
  try {
    switch (b.page) {
      case 'runs': return await runsPage(main);
      case 'run': return await runPage(main, Number(b.run));
      case 'noise': return await noisePage(main, Number(b.run));
      case 'fibre': return await fibrePage(main, b.fibre ?? '');
      case 'report': return await reportPage();
      default: return;
    }
  } catch (e) {
    // shown on the page, and in the console for whoever debugs it
    showProblem(main ?? document.body, `could not load this page: ${(e as Error).message ?? e}`);
    console.error(e);
    document.body.dataset.ready = 'error';
  }
}

if (document.readyState === 'loading') document.addEventListener('DOMContentLoaded', () => void boot());
else void boot();
