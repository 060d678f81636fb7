/**
 * The dashboard's client bundle (src/web, bundled with uPlot by
 * `npm run build` into dist/web/): the server serves it, the report inlines it.
 * Found from this module's place, in the sources as in dist/.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { RuntimeError } from '../domain/errors.js';

/** The bundle's script and style sheet, as text. */
export interface WebAssets {
  js: string;
  css: string;
}

/** Where the bundle is: the first dist/web (or web/ inside dist) above this module. */
function webAssetsDir(): string | undefined {
  let d = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 6; i++) {
    for (const c of [join(d, 'dist', 'web'), join(d, 'web')]) if (existsSync(join(c, 'dashboard.js'))) return c;
    const up = dirname(d);
    if (up === d) break;
    d = up;
  }
  return undefined;
}

let cached: WebAssets | undefined;

/** Read the bundle (once); a RuntimeError saying how to build it when it is missing. */
export function loadWebAssets(): WebAssets {
  if (cached) return cached;
  const dir = webAssetsDir();
  if (!dir) throw new RuntimeError('the dashboard\'s client bundle (dist/web/dashboard.js) is missing: run `npm run build` in the fibrewatch checkout');
  cached = { js: readFileSync(join(dir, 'dashboard.js'), 'utf8'), css: readFileSync(join(dir, 'dashboard.css'), 'utf8') };
  return cached;
}
