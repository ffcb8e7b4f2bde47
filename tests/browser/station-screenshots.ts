// Saves PNGs of the station screen in each state, at 1366×768 and 1920×1080, for review:
//   PHASEWRIGHT_BASE_URL=http://127.0.0.1:3000 npx tsx tests/browser/station-screenshots.ts
// Needs a running server with the demo line seeded. It makes its own bench station and key, and posts
// simulated measurements with that key: a good one (pass), one just outside the offset window (fail, a
// retest may help), and one with a dead hall sensor (held for repair at once). PNGs go to the git-ignored
// .data/shots unless SHOTS_DIR says otherwise.
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { buildMeasurement, ensureTestBench, freshSerial, postMeasurement } from './line-kit';

process.env.PHASEWRIGHT_BASE_URL ??= 'http://127.0.0.1:3000';
const outDir = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');

async function main() {
  await mkdir(outDir, { recursive: true });
  const bench = await ensureTestBench();
  const recipe = bench.model.activeRecipe!.body;
  const browser = await launchChromium();
  const shot = async (page: Page, name: string, fullPage = false) => {
    await page.waitForTimeout(300);
    const file = path.join(outDir, `${name}.png`);
    await page.screenshot({ path: file, fullPage });
    console.log(`saved ${file}`);
  };
  const scan = async (page: Page, serial: string) => {
    await page.keyboard.type(serial, { delay: 8 });
    await page.keyboard.press('Enter');
  };
  const register = async (page: Page, serial: string) => {
    await scan(page, serial);
    await page.getByTestId('unit-unknown').waitFor();
    await page.keyboard.press('F2');
    await page
      .getByRole('dialog')
      .getByRole('button', { name: new RegExp(bench.model.code) })
      .click();
    await page.getByTestId('unit-card').waitFor();
  };
  try {
    for (const [w, h] of [
      [1366, 768],
      [1920, 1080],
    ] as const) {
      const tag = `${w}x${h}`;
      const { context, page } = await freshPage(browser, { width: w, height: h });
      // Screenshots only: keep a handle on the page's event streams so the "computing" state, which
      // lasts a few milliseconds on a real line, can be held on screen long enough to photograph.
      await page.addInitScript(() => {
        const Native = window.EventSource;
        const sources: EventSource[] = [];
        (window as unknown as { __sources: EventSource[] }).__sources = sources;
        window.EventSource = class extends Native {
          constructor(url: string | URL, init?: EventSourceInit) {
            super(url, init);
            sources.push(this);
          }
        } as typeof EventSource;
      });
      await signInWithPassword(page, DEMO.operator.username, DEMO.operator.password);
      await page.goto(`/station/${bench.station.id}`);
      await page.getByTestId('station-screen').waitFor();
      await page.getByTestId('recent-units').waitFor();
      await shot(page, `station-idle-${tag}`);

      const passing = freshSerial('SN');
      await register(page, passing);
      await page.evaluate(
        ({ serial, stationId }) => {
          const sources = (window as unknown as { __sources: EventSource[] }).__sources;
          const data = JSON.stringify({
            type: 'calibration.computing',
            stationId,
            unitId: '00000000-0000-4000-8000-000000000000',
            serial,
            measurementId: 'held-for-screenshot',
            at: new Date().toISOString(),
          });
          for (const s of sources) s.dispatchEvent(new MessageEvent('calibration.computing', { data }));
        },
        { serial: passing, stationId: bench.station.id },
      );
      await page.getByTestId('computing').waitFor();
      await shot(page, `station-live-${tag}`);
      await postMeasurement(bench.key, buildMeasurement(bench.model, passing, 21).measurement);
      await page.locator('[data-verdict="pass"]').waitFor({ timeout: 20_000 });
      await shot(page, `station-pass-${tag}`);

      // The same unit scanned again: its stored result is history, the live area waits for the station.
      await scan(page, passing);
      await page.getByTestId('history-result').waitFor();
      await shot(page, `station-history-${tag}`);

      await scan(page, 'x!');
      await page.getByTestId('scan-refused').waitFor();
      await shot(page, `station-wrong-scan-${tag}`);

      const failing = freshSerial('SN');
      await register(page, failing);
      const near = recipe.limits.offsetDeg[1] + 3;
      await postMeasurement(bench.key, buildMeasurement(bench.model, failing, 31, 'none', near).measurement);
      await page.locator('[data-verdict="fail"]').waitFor({ timeout: 20_000 });
      await shot(page, `station-fail-${tag}`);

      const held = freshSerial('SN');
      await register(page, held);
      await postMeasurement(bench.key, buildMeasurement(bench.model, held, 40, 'dead-sensor').measurement);
      await page.getByTestId('hold-state').waitFor({ timeout: 20_000 });
      await shot(page, `station-held-${tag}`);
      await page.keyboard.press('F8');
      await page.getByTestId('confirm-print').waitFor();
      await shot(page, `station-print-confirm-${tag}`);
      await page.keyboard.press('Escape');
      await context.close();
    }
  } finally {
    await browser.close();
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
