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

/** Ticks or clears one choice of a several-at-once filter (stations, lots…), leaving the picker closed. */
async function pick(label: string, option: string, on: boolean) {
  const field = page
    .locator('div', { has: page.getByText(label, { exact: true }) })
    .filter({ has: page.locator('details') })
    .last();
  await field.locator('summary').click();
  const box = page.getByRole('group', { name: label }).getByLabel(option, { exact: true });
  // The choice lands in the URL through a navigation, after which the box shows it: click, then wait.
  await box.click();
  await expect.poll(() => box.isChecked()).toBe(on);
  await field.locator('summary').click();
}

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
    await pick('Stations', 'EOL-23', true);
    expect(new URL(page.url()).searchParams.get('stations')?.split(',')).toHaveLength(1);
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

  it('freezes the drifting station’s limits from a baseline window, saying who set them and when', async () => {
    // The demo's fortnight ends today: its first days are the baseline.
    const day = (back: number) => new Date(Date.now() - back * 86_400_000).toISOString().slice(0, 10);
    await page.getByLabel('Limits from (local time)').fill(day(13));
    await page.getByLabel('Limits until (local time)').fill(day(9));
    await page.getByText(/held from the window .* \(not saved\)/).waitFor();
    await page
      .getByLabel('Why (kept with the limits and in the audit log)')
      .fill('Steady first days of the fortnight');
    await page.getByRole('button', { name: 'Save limits from the baseline window' }).click();
    await page.getByRole('table', { name: /Every version of the frozen limits/ }).waitFor();
    await page.getByText(/set by Evan Thorsby/).waitFor();
    // Without a window tried out, the chart uses the saved limits and says whose they are.
    await page.getByLabel('Limits from (local time)').fill('');
    await page.getByLabel('Limits until (local time)').fill('');
    await page.getByText(/frozen \(version \d+\) by Evan Thorsby/).waitFor();
    const watched = page.getByRole('table', { name: 'Watched charts of this model by station' });
    await watched.waitFor();
    await shot('analysis-frozen-limits');
    expect(await axeFindings(page)).toEqual([]);
  });

  it('shows the watched charts judging against the saved limits at once, and against their own once cleared', async () => {
    // Issue 12: the watched-charts table kept the limits it had read before a save or a clearing until a reload.
    const watched = page.getByRole('table', { name: 'Watched charts of this model by station' });
    const individuals = watched.getByRole('row', { name: /EOL-23.*Individuals/ });
    await expect
      .poll(() => individuals.textContent(), { timeout: 15_000 })
      .toMatch(/Frozen limits \(saved by an engineer\)/);
    await page
      .getByLabel('Why (kept with the limits and in the audit log)')
      .fill('Back to limits from the points shown');
    await page.getByRole('button', { name: 'Clear: compute limits from the points shown' }).click();
    await expect.poll(() => individuals.textContent(), { timeout: 15_000 }).not.toMatch(/Frozen limits/);
  });

  it('lets an engineer add a subgroup chart with Nelson’s rules to the watched charts', async () => {
    const form = page.getByRole('form', { name: 'Change a watched chart' });
    await form.getByLabel('Station').selectOption({ label: 'EOL-23' });
    await form.getByLabel('Chart to watch').selectOption('xbar-r');
    await form.getByLabel('Run rules').selectOption('nelson');
    await form.getByRole('button', { name: 'Save this chart' }).click();
    await page.getByText('Saved. The chart judges the calibrations from now on.').waitFor();
    await page
      .getByRole('table', { name: 'Watched charts of this model by station' })
      .getByRole('row', { name: /EOL-23.*Subgroup means and ranges.*Nelson 1, 2, 3, 4, 5, 6, 7, 8/ })
      .waitFor();
    await shot('analysis-watched-charts');
    expect(await axeFindings(page)).toEqual([]);
  });

  it('draws subgroups by shift in plant time', async () => {
    await page.getByLabel('Chart', { exact: true }).selectOption('xbar-r');
    await page.getByLabel('Subgroups').selectOption('shift');
    await page
      .getByText(/units per shift, plant time/)
      .first()
      .waitFor();
    await shot('analysis-subgroups-by-shift');
    expect(await axeFindings(page)).toEqual([]);
    await page.getByLabel('Subgroups').selectOption('count');
    await page.getByLabel('Chart', { exact: true }).selectOption('imr');
  });

  it('compares several stations and lots at once, the choice kept in the URL', async () => {
    await pick('Stations', 'EOL-21', true);
    expect(new URL(page.url()).searchParams.get('stations')?.split(',')).toHaveLength(2);
    await pick('Hall-board lots', 'HB-2446-C', true);
    await pick('Hall-board lots', 'HB-2446-A', true);
    await page.getByRole('link', { name: 'Comparisons' }).click();
    await page.getByLabel('Compare by').selectOption('station');
    const table = page.getByRole('table', { name: /Groups by station/ });
    await table.waitFor();
    await expect
      .poll(() =>
        table
          .getByRole('row')
          .filter({ hasText: /EOL-2[13]/ })
          .count(),
      )
      .toBe(2);
    expect(new URL(page.url()).searchParams.get('hallBoardLots')).toBe('HB-2446-C,HB-2446-A');
    // The closed picker names the lots chosen, in the order of the list.
    await page.locator('summary', { hasText: 'HB-2446-A, HB-2446-C' }).waitFor();
    await shot('analysis-several-stations-lots');
    expect(await axeFindings(page)).toEqual([]);
    await pick('Hall-board lots', 'HB-2446-C', false);
    await pick('Hall-board lots', 'HB-2446-A', false);
    await pick('Stations', 'EOL-21', false);
    await pick('Stations', 'EOL-23', false);
    expect(new URL(page.url()).searchParams.get('stations')).toBeNull();
  });

  it('names hall-board lot HB-2446-C in the lot comparison', async () => {
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
