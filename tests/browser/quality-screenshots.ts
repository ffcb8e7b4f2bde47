// Saves PNGs of the quality workspace for review: `npx tsx tests/browser/quality-screenshots.ts`.
// Needs a running server (PHASEWRIGHT_BASE_URL) with the demo data. Files go to the git-ignored
// .data/shots unless SHOTS_DIR says otherwise. It only reads: nothing is held or released.
import { mkdirSync } from 'node:fs';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';

async function main() {
  const outDir = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');
  mkdirSync(outDir, { recursive: true });
  const browser = await launchChromium();
  const shot = async (page: Page, name: string) => {
    await page.waitForLoadState('networkidle');
    const file = path.join(outDir, `${name}.png`);
    await page.screenshot({ path: file, fullPage: true });
    console.log(`saved ${file}`);
  };
  try {
    const { page, context } = await freshPage(browser, { width: 1440, height: 900 });
    await signInWithPassword(page, DEMO.quality.username, DEMO.quality.password);
    await page.goto('/quality');
    await page.getByTestId('held-count').waitFor();
    await shot(page, 'quality-held');
    await page.goto('/quality?view=search&lot=HB-2446-C');
    await page.getByTestId('search-total').waitFor();
    await shot(page, 'quality-search');
    const firstSerial = (await page.getByTestId('search-rows').locator('a').first().textContent())!.trim();
    await page.getByRole('button', { name: /^Hold all/ }).click();
    await page.getByRole('dialog').waitFor();
    await page.getByLabel('Investigation').selectOption('new');
    await page.screenshot({ path: path.join(outDir, 'quality-hold-dialog.png') });
    await page.keyboard.press('Escape');
    await page.goto('/quality?view=investigations');
    await page.getByRole('heading', { name: 'Open an investigation' }).waitFor();
    await shot(page, 'quality-investigations');
    const firstCase = page.getByTestId('investigation-rows').getByRole('link').first();
    if (await firstCase.isVisible().catch(() => false)) {
      await firstCase.click();
      await page.getByRole('heading', { name: 'Case' }).waitFor();
      await shot(page, 'quality-investigation');
    }
    await page.goto(`/units/${encodeURIComponent(firstSerial)}`);
    await page.getByTestId('raw-timings').locator('canvas').first().waitFor();
    await page.getByRole('button', { name: 'Verify against the stored SHA-256' }).click();
    await page.getByTestId('sha-check').waitFor();
    await shot(page, 'quality-unit-raw-timings');
    await page.getByTestId('unit-record').screenshot({ path: path.join(outDir, 'quality-unit-record.png') });
    await page.goto('/quality?view=audit');
    await page.getByTestId('trail-count').waitFor();
    await shot(page, 'quality-audit');
    await page.getByLabel('Unit serial').fill('NO-SUCH-UNIT');
    await page.getByRole('button', { name: 'Show entries' }).click();
    await page.getByTestId('trail-empty').waitFor();
    await shot(page, 'quality-audit-empty');
    await page.goto('/quality');
    await page.getByTestId('held-count').waitFor();
    const release = page.getByRole('button', { name: 'Release…' }).first();
    if (await release.isVisible().catch(() => false)) {
      await release.click();
      await page.getByRole('dialog').waitFor();
      await page.screenshot({ path: path.join(outDir, 'quality-release-dialog.png') });
    }
    await context.close();
  } finally {
    await browser.close();
  }
}

void main().catch((e: unknown) => {
  console.error(e);
  process.exit(1);
});
