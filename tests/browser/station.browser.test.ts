import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { seriousAxeFindings } from './a11y-kit';
import { baseUrl, DEMO, freshPage, launchChromium } from './browser-kit';
import { buildMeasurement, ensureTestBench, freshSerial, postMeasurement, type TestBench } from './line-kit';


let browser: Browser;
let bench: TestBench;
beforeAll(async () => {
  browser = await launchChromium();
  bench = await ensureTestBench();
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

async function signInByBadge(page: Page) {
  await page.goto('/sign-in?next=%2Fstation');
  await page.getByRole('button', { name: 'Badge and PIN' }).click();
  await page.getByLabel('Badge', { exact: true }).waitFor();
  await page.keyboard.type(DEMO.operator.badge, { delay: 5 });
  await page.keyboard.press('Enter');
  await page.keyboard.type(DEMO.operator.pin);
  await page.keyboard.press('Enter');
  await page.getByTestId('signed-in-as').waitFor();
}

async function openBench(page: Page) {
  await signInByBadge(page);
  await page.goto('/station?choose=1');
  await page.getByRole('button', { name: new RegExp(`^${bench.station.name}`) }).click();
  await page.getByTestId('station-screen').waitFor();
}

/** Types like a keyboard-wedge scanner: a fast burst, then Enter. */
async function scan(page: Page, text: string) {
  await page.keyboard.type(text, { delay: 8 });
  await page.keyboard.press('Enter');
}

/** Scans a serial the product has never seen and registers it against the bench's model (F2). */
async function registerFreshUnit(page: Page): Promise<string> {
  const serial = freshSerial();
  await scan(page, serial);
  await page.getByTestId('unit-unknown').waitFor();
  await page.keyboard.press('F2');
  await page
    .getByRole('dialog')
    .getByRole('button', { name: new RegExp(bench.model.code) })
    .click();
  await page.getByTestId('unit-card').waitFor();
  return serial;
}

describe('the station screen', { timeout: 90_000 }, () => {
  it('registers a scanned serial, shows the pushed result without reloading, and prints the traveler', async () => {
    const { context, page, pageErrors } = await freshPage(browser);
    await openBench(page);
    const scanInput = page.getByTestId('scan-input');
    expect(await scanInput.evaluate((el) => el === document.activeElement)).toBe(true);

    // A click elsewhere hands the focus back to the scan field.
    await page.getByRole('heading', { level: 1 }).click();
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'scan-input');

    // Too short to be a serial: refused with a message, nothing looked up.
    await scan(page, 'X1');
    await page.getByText('is too short for a serial').waitFor();

    const serial = freshSerial();
    await scan(page, serial);
    await page.getByTestId('unit-unknown').waitFor();
    await page.keyboard.press('F2');
    const dialog = page.getByRole('dialog');
    await dialog.waitFor();
    await dialog.getByRole('button', { name: new RegExp(bench.model.code) }).click();
    await page.getByTestId('unit-card').waitFor();
    expect(await page.getByTestId('unit-serial').textContent()).toBe(serial);
    expect(await page.getByTestId('live-progress').getAttribute('data-phase')).toBe('waiting');
    // After the dialog the scanner's keys land in the scan field again.
    await page.keyboard.type('ZZ', { delay: 8 });
    expect(await scanInput.inputValue()).toBe('ZZ');
    await page.keyboard.press('Escape');
    expect(await page.getByRole('button', { name: /Print traveler/ }).isDisabled()).toBe(true);

    const loadsBefore = await page.evaluate(() => performance.getEntriesByType('navigation').length);
    const { measurement, truth } = buildMeasurement(bench.model, serial, 11);
    const posted = await postMeasurement(bench.key, measurement);
    expect(posted.status).toBe(202);

    const verdict = page.getByTestId('verdict');
    await verdict.waitFor({ timeout: 20_000 });
    expect(await verdict.getAttribute('data-verdict')).toBe('pass');
    expect((await verdict.textContent())?.trim()).toBe('Pass');
    // The simulator's ground truth is the offset the engine should recover; 0.5° is the common-practice
    // tolerance of the engine's own simulated-ground-truth tests (no external source).
    const offsetText = (await page.getByTestId('offset-deg').textContent()) ?? '';
    const shown = Number(offsetText.replace('−', '-').replace(/[^\d.+-]/g, ''));
    expect(Math.abs(shown - truth.offsetDeg)).toBeLessThan(0.5);
    expect(await page.getByTestId('offset-counts').textContent()).toMatch(/counts$/);
    expect(await page.getByTestId('hall-polar').locator('svg path').count()).toBeGreaterThan(6);
    expect(await page.evaluate(() => performance.getEntriesByType('navigation').length)).toBe(loadsBefore);

    // Printing opens the traveler PDF; the button waits for the traveler job.
    const printButton = page.getByRole('button', { name: /Print traveler/ });
    await page.waitForFunction(
      () => !(document.querySelector('[aria-keyshortcuts="F8"]') as HTMLButtonElement | null)?.disabled,
      undefined,
      { timeout: 20_000 },
    );
    const popup = context.waitForEvent('page');
    await printButton.click();
    await (await popup).close();
    const link = page.getByTestId('print-link');
    await link.waitFor();
    expect(await page.getByTestId('print-result').textContent()).toContain('Print 1');
    const href = (await link.getAttribute('href')) ?? '';
    const pdf = await page.request.get(href);
    expect(pdf.status()).toBe(200);
    expect(pdf.headers()['content-type']).toBe('application/pdf');
    expect((await pdf.body()).subarray(0, 5).toString('latin1')).toBe('%PDF-');

    // The unit joins the station's recent list.
    await page.getByTestId('recent-units').getByText(serial).waitFor();
    expect(pageErrors).toEqual([]);
    await context.close();
  });

  it('clears keys typed without an Enter after a pause', async () => {
    const { context, page } = await freshPage(browser);
    await openBench(page);
    await page.keyboard.type('ab', { delay: 200 });
    expect(await page.getByTestId('scan-input').inputValue()).toBe('ab');
    await page.getByText('Cleared “ab”').waitFor({ timeout: 8_000 });
    expect(await page.getByTestId('scan-input').inputValue()).toBe('');
    await context.close();
  });

  it('has no serious or critical accessibility findings on the station screen with a result', async () => {
    // The app's Content-Security-Policy forbids injected scripts; this context lets the checker in.
    const context = await browser.newContext({
      baseURL: baseUrl(),
      viewport: { width: 1280, height: 800 },
      bypassCSP: true,
    });
    const page = await context.newPage();
    await openBench(page);
    const serial = freshSerial();
    await scan(page, serial);
    await page.getByTestId('unit-unknown').waitFor();
    // Axe checks WCAG 2.x A/AA rules (tests/browser/a11y-kit.ts): run it idle, unknown, and with a result.
    const check = () => seriousAxeFindings(page);
    expect(await check()).toEqual([]);
    await page.keyboard.press('F2');
    await page
      .getByRole('dialog')
      .getByRole('button', { name: new RegExp(bench.model.code) })
      .click();
    await page.getByTestId('unit-card').waitFor();
    // Just outside the offset window: a fail that a retest may mend.
    const near = bench.model.activeRecipe!.body.limits.offsetDeg[1] + 3;
    await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 12, 'none', near).measurement);
    await page.getByTestId('verdict').waitFor({ timeout: 20_000 });
    expect(await page.getByTestId('verdict').getAttribute('data-verdict')).toBe('fail');
    expect(await page.getByTestId('failed-checks').count()).toBe(1);
    expect(await check()).toEqual([]);
    await context.close();
  });

  it('clears the last verdict at once when a scan is refused, and shows the refusal as large as a verdict', async () => {
    const { context, page } = await freshPage(browser, { width: 1366, height: 768 });
    await openBench(page);
    const serial = await registerFreshUnit(page);
    await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 61).measurement);
    await page.locator('[data-verdict="pass"]').waitFor({ timeout: 20_000 });

    await scan(page, 'X!');
    const refused = page.getByTestId('scan-refused');
    await refused.waitFor();
    expect(await page.getByTestId('verdict').count()).toBe(0);
    expect(await page.getByTestId('unit-card').count()).toBe(0);
    const titleSize = await refused
      .getByRole('heading')
      .evaluate((el) => parseFloat(getComputedStyle(el).fontSize));
    const verdictSize = 6.5 * 17; // the live verdict's word: 6.5 rem at the 17 px root
    expect(titleSize).toBeGreaterThanOrEqual(verdictSize * 0.8);
    expect(await refused.locator('svg').count()).toBeGreaterThan(0); // a shape, not colour alone

    // Scanning the measured unit again shows its result as dated history, not as a live verdict.
    await scan(page, serial);
    const history = page.getByTestId('history-result');
    await history.waitFor();
    expect(await page.getByTestId('verdict').count()).toBe(0);
    expect(await page.getByTestId('history-when').textContent()).toMatch(/measured .+ at /);
    expect(await page.getByTestId('history-attempt').textContent()).toMatch(/attempt 1 of \d/);
    expect(await page.getByTestId('live-waiting').textContent()).toMatch(/has not measured this unit/);
    await context.close();
  });

  it('shows a unit a dead sensor put on hold in its own full-width state above the fold, with no programming step', async () => {
    const { context, page } = await freshPage(browser, { width: 1366, height: 768 });
    await openBench(page);
    const serial = await registerFreshUnit(page);
    await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 62, 'dead-sensor').measurement);
    const hold = page.getByTestId('hold-state');
    await hold.waitFor({ timeout: 20_000 });
    // Not an ordinary FAIL: the hold state replaces the verdict, with the reason and what to do.
    expect(await page.getByTestId('verdict').count()).toBe(0);
    expect(await page.getByTestId('hold-reason').textContent()).toMatch(/repair/);
    expect(await page.getByTestId('hold-action').textContent()).toMatch(/Do not retest/);
    // Readable from two metres (at least 24 px) and above the fold at 1366 × 768.
    for (const id of ['hold-reason', 'hold-action', 'next-action']) {
      const size = await page.getByTestId(id).evaluate((el) => parseFloat(getComputedStyle(el).fontSize));
      expect(size, id).toBeGreaterThanOrEqual(24);
    }
    const box = await page.getByTestId('hold-reason').boundingBox();
    expect((box?.y ?? 9999) + (box?.height ?? 0)).toBeLessThanOrEqual(768);
    expect(await page.getByTestId('programming').count()).toBe(0);
    expect(await page.getByTestId('no-programming').textContent()).toMatch(/Do not program/);

    // Its traveler is printed only after a confirmation, as a hold traveler.
    await page.keyboard.press('F8');
    const confirm = page.getByTestId('confirm-print');
    await confirm.waitFor();
    const popup = context.waitForEvent('page');
    await confirm.getByRole('button', { name: 'Print ON HOLD traveler' }).click();
    await (await popup).close();
    const href = (await page.getByTestId('print-link').getAttribute('href')) ?? '';
    const pdf = await page.request.get(href);
    expect(pdf.status()).toBe(200);
    await context.close();
  });
});
