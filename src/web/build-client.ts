/**
 * Bundle the dashboard's client (src/web/main.ts with uPlot) and its style
 * sheet (src/web/dashboard.css with uPlot's) into dist/web/dashboard.js and
 * dist/web/dashboard.css: what `serve` serves and `report` inlines. Run by
 * `npm run build` after tsc (node dist/src/web/build-client.js); esbuild is a
 * development dependency, so an installed package ships the built files.
 */
import { build } from 'esbuild';
import { mkdirSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

// from dist/src/web (built) or src/web (sources) up to the checkout
const here = dirname(fileURLToPath(import.meta.url));
const root = here.includes(`${join('dist', 'src', 'web')}`) ? join(here, '..', '..', '..') : join(here, '..', '..');
const out = join(root, 'dist', 'web');

// uPlot is MIT-licensed: its notice travels with every copy (the minifier drops comments)
const NOTICE = `/*! fibrewatch dashboard client (MIT). Includes uPlot 1.6.32, Copyright (c) 2022 Leon Sorokin, MIT License:
 * Permission is hereby granted, free of charge, to any person obtaining a copy of this software and associated
 * documentation files (the "Software"), to deal in the Software without restriction, including without limitation
 * the rights to use, copy, modify, merge, publish, distribute, sublicense, and/or sell copies of the Software, and to
 * permit persons to whom the Software is furnished to do so, subject to the following conditions: The above copyright
 * notice and this permission notice shall be included in all copies or substantial portions of the Software.
 * THE SOFTWARE IS PROVIDED "AS IS", WITHOUT WARRANTY OF ANY KIND, EXPRESS OR IMPLIED, INCLUDING BUT NOT LIMITED TO THE
 * WARRANTIES OF MERCHANTABILITY, FITNESS FOR A PARTICULAR PURPOSE AND NONINFRINGEMENT. IN NO EVENT SHALL THE AUTHORS OR
 * COPYRIGHT HOLDERS BE LIABLE FOR ANY CLAIM, DAMAGES OR OTHER LIABILITY, WHETHER IN AN ACTION OF CONTRACT, TORT OR
 * OTHERWISE, ARISING FROM, OUT OF OR IN CONNECTION WITH THE SOFTWARE OR THE USE OR OTHER DEALINGS IN THE SOFTWARE. */`;

/** Build both files; resolves with their sizes, bytes. */
export async function buildClient(): Promise<{ js: number; css: number }> {
  mkdirSync(out, { recursive: true });
  const common = { bundle: true, minify: true, legalComments: 'none' as const, logLevel: 'warning' as const, absWorkingDir: root, metafile: true };
  const js = await build({
    ...common,
    entryPoints: [join(root, 'src', 'web', 'main.ts')],
    outfile: join(out, 'dashboard.js'),
    format: 'iife',
    platform: 'browser',
    target: ['chrome109', 'firefox115', 'safari16'],
    banner: { js: NOTICE },
  });
  const css = await build({
    ...common,
    entryPoints: [join(root, 'src', 'web', 'dashboard.css')],
    outfile: join(out, 'dashboard.css'),
    banner: { css: '/*! fibrewatch dashboard styles; includes uPlot\'s (MIT, Copyright (c) 2022 Leon Sorokin) */' },
  });
  const size = (m: typeof js.metafile) => Object.values(m!.outputs).reduce((n, o) => n + o.bytes, 0);
  return { js: size(js.metafile), css: size(css.metafile) };
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  buildClient().then(
    (s) => process.stdout.write(`dist/web: dashboard.js ${(s.js / 1024).toFixed(0)} KiB, dashboard.css ${(s.css / 1024).toFixed(1)} KiB\n`),
    (e) => {
      process.stderr.write(`client bundle failed: ${(e as Error).message}\n`);
      process.exit(1);
    },
  );
}
