import { createRequire } from 'node:module';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { baseUrl, DEMO, freshPage, launchChromium } from './browser-kit';
import { buildMeasurement, ensureTestBench, freshSerial, postMeasurement, type TestBench } from './line-kit';

const require = createRequire(import.meta.url);

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
    // Axe (https://github.com/dequelabs/axe-core) checks WCAG 2.x A/AA rules: run it idle, unknown, and with a result.
    const axePath = require.resolve('axe-core/axe.min.js');
    const check = async () => {
      await page.addScriptTag({ path: axePath });
      const findings = await page.evaluate(async () => {
        const axe = (
          window as unknown as {
            axe: {
              run: (c: Document) => Promise<{
                violations: {
                  id: string;
                  impact: string | null;
                  help: string;
                  nodes: { target: unknown[] }[];
                }[];
              }>;
            };
          }
        ).axe;
        const r = await axe.run(document);
        return r.violations.map((v) => ({
          id: v.id,
          impact: v.impact,
          help: v.help,
          nodes: v.nodes.map((n) => String(n.target[0])),
        }));
      });
      return findings.filter((f) => f.impact === 'serious' || f.impact === 'critical');
    };
    expect(await check()).toEqual([]);
    await page.keyboard.press('F2');
    await page
      .getByRole('dialog')
      .getByRole('button', { name: new RegExp(bench.model.code) })
      .click();
    await page.getByTestId('unit-card').waitFor();
    await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 12, 'large-offset').measurement);
    await page.getByTestId('verdict').waitFor({ timeout: 20_000 });
    expect(await page.getByTestId('verdict').getAttribute('data-verdict')).toBe('fail');
    expect(await page.getByTestId('failed-checks').count()).toBe(1);
    expect(await check()).toEqual([]);
    await context.close();
  });
});
