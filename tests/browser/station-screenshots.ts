// Saves PNGs of the station screen in each state and of Admin → Stations for review:
//   PHASEWRIGHT_BASE_URL=http://127.0.0.1:3000 npx tsx tests/browser/station-screenshots.ts
// Needs a running server with the demo line seeded. It makes its own bench station and key, and posts
// simulated measurements with that key: a good one (pass), one with the offset beyond the window (fail),
// and three fails in a row for one unit (on hold).
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { buildMeasurement, ensureTestBench, freshSerial, postMeasurement } from './line-kit';

process.env.PHASEWRIGHT_BASE_URL ??= 'http://127.0.0.1:3000';
const outDir = process.env.SHOTS_DIR ?? '/work/notes/shots';

async function main() {
  await mkdir(outDir, { recursive: true });
  const bench = await ensureTestBench();
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
    const { context, page } = await freshPage(browser, { width: 1280, height: 800 });
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
    await page.goto('/station?choose=1');
    await shot(page, 'station-choose');
    await page.getByRole('button', { name: new RegExp(`^${bench.station.name}`) }).click();
    await page.getByTestId('station-screen').waitFor();
    await page.getByTestId('recent-units').waitFor();
    await shot(page, 'station-idle');

    const unknown = freshSerial('SN');
    await scan(page, unknown);
    await page.getByTestId('unit-unknown').waitFor();
    await shot(page, 'station-unknown');
    await page.keyboard.press('F2');
    await page.getByRole('dialog').waitFor();
    await shot(page, 'station-register');
    await page
      .getByRole('dialog')
      .getByRole('button', { name: new RegExp(bench.model.code) })
      .click();
    await page.getByTestId('unit-card').waitFor();
    await shot(page, 'station-waiting');

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
      { serial: unknown, stationId: bench.station.id },
    );
    await page.getByTestId('computing').waitFor();
    await shot(page, 'station-computing');

    await postMeasurement(bench.key, buildMeasurement(bench.model, unknown, 21).measurement);
    await page.locator('[data-verdict="pass"]').waitFor({ timeout: 20_000 });
    await page.waitForFunction(
      () => !(document.querySelector('[aria-keyshortcuts="F8"]') as HTMLButtonElement | null)?.disabled,
    );
    await shot(page, 'station-pass');
    await shot(page, 'station-pass-full', true);

    const failing = freshSerial('SN');
    await register(page, failing);
    await postMeasurement(bench.key, buildMeasurement(bench.model, failing, 31, 'large-offset').measurement);
    await page.locator('[data-verdict="fail"]').waitFor({ timeout: 20_000 });
    await shot(page, 'station-fail');
    await shot(page, 'station-fail-full', true);

    const held = freshSerial('SN');
    await register(page, held);
    const attempts = bench.model.activeRecipe!.body.maxAttempts;
    for (let i = 0; i < attempts; i += 1) {
      await postMeasurement(
        bench.key,
        buildMeasurement(bench.model, held, 40 + i, 'dead-sensor').measurement,
      );
      await page
        .getByText(`${i + 1} of ${attempts}`)
        .first()
        .waitFor({ timeout: 20_000 });
    }
    await page.getByText('On hold', { exact: true }).first().waitFor({ timeout: 20_000 });
    await shot(page, 'station-on-hold');
    await shot(page, 'station-on-hold-full', true);

    await page.goto(`/units/${encodeURIComponent(held)}`);
    await page.getByTestId('calibration-rows').waitFor();
    await shot(page, 'unit-page', true);
    await context.close();

    const admin = await freshPage(browser, { width: 1440, height: 900 });
    await signInWithPassword(admin.page, DEMO.admin.username, DEMO.admin.password);
    await admin.page.goto('/admin/stations');
    await admin.page.getByTestId('station-rows').waitFor();
    await shot(admin.page, 'admin-stations', true);
    await admin.page.getByRole('button', { name: `New key for ${bench.station.name}` }).click();
    await admin.page.getByLabel('Label').fill('Screenshot key');
    await admin.page.getByRole('button', { name: 'Create key' }).click();
    await admin.page.getByTestId('key-created').waitFor();
    await shot(admin.page, 'admin-station-key');
    await admin.page.getByRole('button', { name: 'I have stored it' }).click();
    await admin.page.goto('/admin/jobs');
    await admin.page.getByRole('table').waitFor();
    await shot(admin.page, 'admin-failed-jobs', true);
    await admin.context.close();
  } finally {
    await browser.close();
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
