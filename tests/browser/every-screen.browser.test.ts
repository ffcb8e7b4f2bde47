import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser, Page } from 'playwright-core';
import { seriousAxeFindings } from './a11y-kit';
import { DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { apiSession, buildMeasurement, ensureTestBench, freshSerial, postMeasurement } from './line-kit';

let browser: Browser;
beforeAll(async () => {
  browser = await launchChromium();
}, 60_000);
afterAll(async () => {
  await browser?.close();
});

type Screen = { path: string; ready: (page: Page) => Promise<unknown> };

const heading = (page: Page) => page.getByRole('heading', { level: 1 }).first().waitFor();

// Every screen of the product, as the role that opens it sees it.
const SIGNED_OUT: Screen[] = [
  { path: '/sign-in', ready: heading },
  { path: '/forgot-password', ready: heading },
  { path: '/set-password', ready: heading },
];
const ADMIN: Screen[] = [
  { path: '/', ready: heading },
  { path: '/units', ready: heading },
  { path: '/admin/people', ready: (p) => p.getByTestId('people-rows').first().waitFor() },
  { path: '/admin/outbox', ready: heading },
  { path: '/admin/audit', ready: heading },
  { path: '/admin/system', ready: heading },
  { path: '/admin/stations', ready: heading },
  { path: '/admin/jobs', ready: heading },
  { path: '/no-such-page', ready: heading },
];

async function expectClean(page: Page, path: string) {
  await page.waitForLoadState('networkidle').catch(() => {});
  await page.waitForTimeout(250);
  expect(await seriousAxeFindings(page), path).toEqual([]);
}

describe(
  'every screen passes axe (no serious or critical findings, text contrast ≥ 4.5:1)',
  { timeout: 120_000 },
  () => {
    it('signed out', async () => {
      const { context, page } = await freshPage(browser, undefined, true);
      for (const s of SIGNED_OUT) {
        await page.goto(s.path);
        await s.ready(page);
        await expectClean(page, s.path);
      }
      await context.close();
    });

    it('as an administrator', async () => {
      const { context, page } = await freshPage(browser, { width: 1366, height: 768 }, true);
      await signInWithPassword(page, DEMO.admin.username, DEMO.admin.password);
      for (const s of ADMIN) {
        await page.goto(s.path);
        await s.ready(page);
        await expectClean(page, s.path);
      }
      await context.close();
    });

    it('as an operator: overview, station chooser, station screen, unit page; and as quality: not allowed, the quality workspace', async () => {
      const bench = await ensureTestBench();
      const { context, page } = await freshPage(browser, { width: 1366, height: 768 }, true);
      await signInWithPassword(page, DEMO.operator.username, DEMO.operator.password);
      await page.goto('/station?choose=1');
      await heading(page);
      await expectClean(page, '/station?choose=1');
      await page.goto(`/station/${bench.station.id}`);
      await page.getByTestId('station-screen').waitFor();
      await expectClean(page, '/station/:id');
      const serial = await page
        .getByTestId('recent-serial')
        .first()
        .textContent({ timeout: 5000 })
        .then((t) => t?.trim())
        .catch(() => undefined);
      if (serial) {
        await page.goto(`/units/${serial}`);
        await page.getByTestId('unit-card').waitFor();
        await expectClean(page, '/units/:serial');
      }
      await context.close();

      const q = await freshPage(browser, undefined, true);
      await signInWithPassword(q.page, DEMO.quality.username, DEMO.quality.password);
      // Station qualification and gauge studies, as quality reads them (the demo seed fills both).
      await q.page.goto('/qualification');
      await heading(q.page);
      await expectClean(q.page, '/qualification');
      await q.page.goto('/qualification/studies');
      await heading(q.page);
      await expectClean(q.page, '/qualification/studies');
      await q.page.goto('/qualification/shifts');
      await q.page.getByTestId('shift-rows').waitFor();
      await expectClean(q.page, '/qualification/shifts');
      await q.page.goto('/admin/people');
      await q.page.getByTestId('not-allowed').waitFor();
      await expectClean(q.page, 'not allowed');
      await q.page.goto('/quality');
      await q.page.getByTestId('held-count').waitFor();
      await expectClean(q.page, '/quality (held units)');
      await q.page.goto('/quality?view=search&lot=HB-2446-C');
      await q.page.getByTestId('search-total').waitFor();
      await expectClean(q.page, '/quality?view=search');
      const links = q.page.getByTestId('search-rows').locator('a');
      const found = (await links.count()) > 0 ? (await links.first().textContent())?.trim() : undefined;
      if (found) {
        await q.page.goto(`/units/${encodeURIComponent(found)}`);
        await q.page.getByTestId('raw-timings').locator('canvas').first().waitFor();
        await expectClean(q.page, '/units/:serial (raw timings)');
      }
      await q.page.goto('/quality?view=investigations');
      await q.page.getByRole('heading', { name: 'Open an investigation' }).waitFor();
      await expectClean(q.page, '/quality?view=investigations');
      await q.page.goto('/quality?view=audit');
      await q.page.getByTestId('trail-count').waitFor();
      await expectClean(q.page, '/quality?view=audit');
      const firstCase = q.page.getByTestId('investigation-rows').getByRole('link').first();
      if (await firstCase.isVisible().catch(() => false)) {
        await firstCase.click();
        await q.page.getByRole('heading', { name: 'Case' }).waitFor();
        await expectClean(q.page, '/quality/investigations/:id');
      }
      await q.context.close();
    });
  },
);

describe('the shell at 1366 px', { timeout: 60_000 }, () => {
  it("keeps an administrator's navigation on one row", async () => {
    const { context, page } = await freshPage(browser, { width: 1366, height: 768 });
    await signInWithPassword(page, DEMO.admin.username, DEMO.admin.password);
    const tops = await page
      .getByRole('navigation', { name: 'Main' })
      .getByRole('link')
      .evaluateAll((links) => links.map((l) => Math.round(l.getBoundingClientRect().top)));
    expect(new Set(tops).size).toBe(1);
    await context.close();
  });

  it('gives "Skip to content" a target of at least 44 × 44 px when it has the focus', async () => {
    const { context, page } = await freshPage(browser, { width: 1366, height: 768 });
    await signInWithPassword(page, DEMO.admin.username, DEMO.admin.password);
    await page.goto('/');
    await page.getByTestId('signed-in-as').waitFor();
    await page.keyboard.press('Tab');
    const skip = page.getByRole('link', { name: 'Skip to content' });
    expect(await skip.evaluate((el) => el === document.activeElement)).toBe(true);
    const box = await skip.boundingBox();
    expect(box?.width).toBeGreaterThanOrEqual(44);
    expect(box?.height).toBeGreaterThanOrEqual(44);
    await context.close();
  });

  it('draws the focus outline inside the controls of a scrolling list, where it cannot be clipped', async () => {
    const bench = await ensureTestBench();
    // The station's recent-units list needs a unit measured there: this test makes its own.
    const operator = await apiSession(DEMO.operator.username, DEMO.operator.password);
    const serial = freshSerial();
    await operator.call('POST', '/api/units', { serial, modelId: bench.model.id });
    const posted = await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 31).measurement);
    expect(posted, JSON.stringify(posted.body)).toMatchObject({ status: 202 });
    const { context, page } = await freshPage(browser, { width: 1366, height: 768 });
    await signInWithPassword(page, DEMO.operator.username, DEMO.operator.password);
    await page.goto(`/station/${bench.station.id}`);
    const first = page.getByTestId('recent-units').locator('ul button').first();
    await first.waitFor();
    await page.keyboard.press('Tab');
    await first.focus();
    const outline = await first.evaluate((el) => {
      const cs = getComputedStyle(el);
      return {
        offset: parseFloat(cs.outlineOffset),
        width: parseFloat(cs.outlineWidth),
        style: cs.outlineStyle,
      };
    });
    expect(outline.style).toBe('solid');
    expect(outline.offset + outline.width).toBeLessThanOrEqual(0);
    await context.close();
  });
});
