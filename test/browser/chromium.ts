/**
 * The real browser for the dashboard and report tests: Debian's chromium
 * driven by playwright-core (never a downloaded browser), headless, without
 * the sandbox (the tests run as root). Missing chromium fails the test with
 * what to install; it is never skipped silently.
 */
import { existsSync } from 'node:fs';
import { chromium, type Browser, type Page } from 'playwright-core';

/** Where Debian puts chromium. */
export const CHROMIUM = '/usr/bin/chromium';

/** Launch the browser (one per test file). */
export async function launchChromium(): Promise<Browser> {
  if (!existsSync(CHROMIUM)) {
    throw new Error(`${CHROMIUM} is missing: the browser tests need Debian's chromium (apt-get install chromium; .ci/run installs it)`);
  }
  return chromium.launch({ executablePath: CHROMIUM, headless: true, args: ['--no-sandbox'] });
}

/** Collect the page's console errors and warnings, uncaught exceptions and failed requests. */
export function watchConsole(page: Page): string[] {
  const problems: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
  page.on('requestfailed', (r) => problems.push(`request failed: ${r.url()} (${r.failure()?.errorText})`));
  page.on('dialog', (d) => {
    problems.push(`dialog: ${d.message()}`);
    void d.dismiss();
  });
  return problems;
}

/** Wait until the client says the page is drawn (body data-ready), and that it did not fail. */
export async function pageReady(page: Page, timeout_ms = 20_000): Promise<void> {
  await page.waitForFunction(() => document.body.dataset.ready !== undefined, null, { timeout: timeout_ms });
  const ready = await page.evaluate(() => document.body.dataset.ready);
  if (ready !== 'true') throw new Error(`page failed: ${await page.evaluate(() => document.querySelector('.problem')?.textContent ?? '')}`);
}

/** Per chart on the page: its data points (data-points) and how many canvas pixels carry its first series' colour. */
export async function chartInk(page: Page): Promise<Record<string, { points: number; ink: number }>> {
  return page.evaluate(() => {
    const out: Record<string, { points: number; ink: number }> = {};
    for (const f of document.querySelectorAll<HTMLElement>('figure.chart')) {
      const canvas = f.querySelector('canvas');
      // the first series' colour, as the legend shows it
      const marker = f.querySelector<HTMLElement>('.u-series:nth-child(2) .u-marker');
      const rgb = marker ? getComputedStyle(marker).borderColor.match(/\d+/g)!.slice(0, 3).map(Number) : [0, 0, 0];
      let ink = 0;
      if (canvas) {
        // read a copy: the chart's own canvas is left as the page uses it (and the browser does not warn about readbacks)
        const copy = document.createElement('canvas');
        copy.width = canvas.width;
        copy.height = canvas.height;
        const cx = copy.getContext('2d', { willReadFrequently: true })!;
        cx.drawImage(canvas, 0, 0);
        const px = cx.getImageData(0, 0, copy.width, copy.height).data;
        for (let i = 0; i < px.length; i += 4) {
          if (px[i + 3] > 200 && Math.abs(px[i] - rgb[0]) < 24 && Math.abs(px[i + 1] - rgb[1]) < 24 && Math.abs(px[i + 2] - rgb[2]) < 24) ink++;
        }
      }
      out[f.dataset.chart ?? '?'] = { points: Number(f.dataset.points ?? 0), ink };
    }
    return out;
  });
}
