/**
 * The dashboard's screenshots in docs/screenshots/ (`npm run screenshots`,
 * after a build): the demo's store — its invented story run through `demo`,
 * plus two earlier runs of the same fibre made by `simulate` and `import` —
 * served by `fibrewatch serve` and photographed in chromium: the runs, the
 * demo run, the fibre's history, the noise budget.
 */
import { mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { runCliAsync } from '../helpers/cli.js';
import { startServe } from '../server/serve-process.js';
import { launchChromium, pageReady, watchConsole } from './chromium.js';

const OUT = fileURLToPath(new URL('../../docs/screenshots/', import.meta.url));

async function cli(args: string[], env: NodeJS.ProcessEnv = {}): Promise<string> {
  const r = await runCliAsync(args, { env });
  if (r.status !== 0) throw new Error(`fibrewatch ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
  return r.stdout;
}

async function main(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), 'fw-screenshots-'));
  mkdirSync(OUT, { recursive: true });
  try {
    const demo = join(dir, 'demo');
    // the demo's own wall-clock budget, shortened: the story is the same
    const told = await cli(['demo', '--in-process', '--out', demo], { FIBREWATCH_DEMO_WALL_S: '10' });
    // the demo's run page as the demo points at it: the comparison over the second half, where the source masses move
    const runPath = /http:\/\/127\.0\.0\.1:\d+(\/runs\/1\S*)/.exec(told)?.[1] ?? '/runs/1';
    const db = join(demo, 'fibrewatch.db');
    const station = join(demo, 'station.json');
    const fibre = (JSON.parse(readFileSync(station, 'utf8')) as { fibre: { name: string } }).fibre.name;
    // two earlier runs of the same fibre, for its history
    for (const [i, day] of ['2026-11-10', '2026-11-20'].entries()) {
      const file = join(dir, `earlier-${i}.txt`);
      await cli(['simulate', '--scenario', join(demo, 'scenario.json'), '--device', file, '--speed', '0', '--duration', '21600', '--seed', String(40 + i)]);
      await cli(['import', file, '--station', station, '--db', db, '--started-at', `${day}T08:00:00Z`]);
    }
    const [srv, browser] = await Promise.all([startServe(db), launchChromium()]);
    try {
      const shots: [string, string][] = [['runs', '/'], ['run', runPath], ['fibre', `/fibres/${encodeURIComponent(fibre)}`], ['noise', '/runs/1/noise']];
      for (const [name, path] of shots) {
        const page = await browser.newPage({ viewport: { width: 1280, height: 900 }, deviceScaleFactor: 1 });
        const problems = watchConsole(page);
        await page.goto(srv.base + path);
        await pageReady(page, 60_000);
        await page.waitForTimeout(300);
        await page.screenshot({ path: join(OUT, `${name}.png`), fullPage: true });
        if (problems.length) throw new Error(`${path}: ${problems.join('; ')}`);
        process.stdout.write(`docs/screenshots/${name}.png: ${path}\n`);
        await page.close();
      }
    } finally {
      await browser.close();
      await srv.stop();
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

main().catch((e) => {
  process.stderr.write(`screenshots: ${(e as Error).stack ?? e}\n`);
  process.exit(1);
});
