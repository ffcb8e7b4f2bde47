import path from 'node:path';
import { mkdir } from 'node:fs/promises';
import type { Browser, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { axeFindings, baseUrl, DEMO, launchChromium, signInWithPassword } from './browser-kit';

/** Set SHOTS_DIR to keep a PNG of each view for review. */
const shotsDir = process.env.SHOTS_DIR;

let browser: Browser;
let page: Page;
let pageErrors: string[];

async function shot(name: string) {
  if (!shotsDir) return;
  await mkdir(shotsDir, { recursive: true });
  await page.screenshot({ path: path.join(shotsDir, `${name}.png`), fullPage: true });
}

beforeAll(async () => {
  browser = await launchChromium();
  // axe-core is injected as a script, which the app's Content Security Policy would refuse.
  const context = await browser.newContext({
    baseURL: baseUrl(),
    viewport: { width: 1440, height: 900 },
    bypassCSP: true,
  });
  page = await context.newPage();
  pageErrors = [];
  page.on('pageerror', (error) => pageErrors.push(error.message));
  await signInWithPassword(page, DEMO.engineer.username, DEMO.engineer.password);
}, 60_000);

afterAll(async () => {
  await browser?.close();
});

describe('chart alerts on the demo line', () => {
  it('shows open alerts on the engineer’s overview, including the drifting station', async () => {
    await page.goto('/');
    await page.getByRole('heading', { name: 'Chart alerts' }).waitFor();
    await expect
      .poll(() => page.getByText(/EOL-23 · CV-57B/).count(), { timeout: 60_000 })
      .toBeGreaterThan(0);
    await shot('alerts-overview');
    expect(await axeFindings(page)).toEqual([]);
  });
});

describe('line statistics on the demo line', () => {
  it('is in the engineer’s navigation and asks for a model first', async () => {
    await page
      .getByRole('navigation', { name: 'Main' })
      .getByRole('link', { name: 'Line statistics' })
      .click();
    await page.getByText('Every view looks at one model at a time').waitFor();
    expect(await axeFindings(page)).toEqual([]);
  });

  it('shows the distribution with capability once a model is chosen, and keeps the filter in the URL', async () => {
    const model = page.getByLabel('Model');
    const value = await model.locator('option', { hasText: 'CV-57B' }).getAttribute('value');
    await model.selectOption(value!);
    await page.getByRole('table', { name: 'Capability with 95 % confidence intervals' }).waitFor();
    expect(page.url()).toContain(`model=${value}`);
    await shot('analysis-distribution');
    expect(await axeFindings(page)).toEqual([]);
  });

  it('draws the control chart of the drifting station with its violations listed', async () => {
    const station = page.getByLabel('Station', { exact: true });
    const eol23 = await station.locator('option', { hasText: 'EOL-23' }).getAttribute('value');
    await station.selectOption(eol23!);
    await page.getByRole('link', { name: 'Control charts' }).click();
    await page.getByRole('heading', { name: /Rule violations/ }).waitFor();
    await page.locator('.analysis-plot canvas').first().waitFor();
    await shot('analysis-control-chart');
    expect(await axeFindings(page)).toEqual([]);
    await page.getByLabel('Chart', { exact: true }).selectOption('ewma');
    await page
      .getByText(/EWMA of Offset/)
      .first()
      .waitFor();
    await shot('analysis-ewma');
    await page.goBack();
    await page
      .getByText(/Individuals: Offset/)
      .first()
      .waitFor();
  });

  it('names hall-board lot HB-2446-C in the lot comparison', async () => {
    await page.getByLabel('Station', { exact: true }).selectOption('');
    await page.getByLabel('Verdict').selectOption('pass');
    await page.getByRole('link', { name: 'Comparisons' }).click();
    await page.getByLabel('Compare by').selectOption('hallBoardLot');
    await page.getByRole('table', { name: /Groups by hall-board lot/ }).waitFor();
    await expect.poll(() => page.getByRole('alert').textContent()).toContain('HB-2446-C');
    await shot('analysis-comparison');
    expect(await axeFindings(page)).toEqual([]);
  });

  it('shows line health with failed checks in plain words', async () => {
    await page.getByLabel('Verdict').selectOption('all');
    await page.getByRole('link', { name: 'Line health' }).click();
    await page.getByRole('heading', { name: 'Why units failed (most frequent first)' }).waitFor();
    await shot('analysis-line-health');
    expect(await axeFindings(page)).toEqual([]);
    expect(pageErrors).toEqual([]);
  });
});
