import { describe, expect, it } from 'vitest';
import type { HeldUnitRow } from '../../shared/schemas/quality';
import { axeFindings, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { apiSession } from './line-kit';

describe('the quality workspace on the demo line', () => {
  it("quality searches lot HB-2446-C, holds the result under a new investigation and opens one unit's raw timings", async () => {
    const browser = await launchChromium();
    try {
      const { page: p, context, pageErrors } = await freshPage(browser, { width: 1440, height: 900 }, true);
      await signInWithPassword(p, DEMO.quality.username, DEMO.quality.password);
      await p.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Quality' }).click();
      await p.getByTestId('held-count').waitFor();

      // The suspect hall-board lot (placed about +4 °e off), narrowed to its units calibrated furthest off.
      await p.getByRole('link', { name: 'Containment search' }).click();
      await p.getByLabel('Lot (any of the three)').fill('HB-2446-C');
      await p.getByLabel('Offset at least (°)').fill('7.5');
      await p.getByRole('button', { name: 'Search', exact: true }).click();
      let totalText = (await p.getByTestId('search-total').textContent())!;
      if (/No unit matches/.test(totalText)) {
        // A shorter demo history (the suite seeds part of the fortnight): the whole lot, then.
        await p.getByLabel('Offset at least (°)').fill('');
        await p.getByRole('button', { name: 'Search', exact: true }).click();
        await p.getByText(/units? found/).waitFor();
        totalText = (await p.getByTestId('search-total').textContent())!;
      }
      const total = Number(/(\d+) units? found/.exec(totalText)?.[1]);
      expect(total).toBeGreaterThan(0);
      const serials = (await p.getByTestId('search-rows').locator('a').allTextContents()).map((s) =>
        s.trim(),
      );
      expect(serials.length).toBe(Math.min(total, 50));
      expect(await axeFindings(p)).toEqual([]);

      const title = `Lot HB-2446-C offsets high ${Date.now()}`;
      await p.getByRole('button', { name: `Hold all ${total} found` }).click();
      const dialog = p.getByRole('dialog');
      await dialog.getByLabel('Reason for the hold').fill('Hall-board lot HB-2446-C placed off nominal');
      await dialog.getByLabel('Investigation').selectOption('new');
      await dialog.getByLabel('Case title').fill(title);
      await dialog.getByLabel('Customer reference').fill('RMA-2446');
      await dialog.getByRole('button', { name: `Hold ${total} unit${total === 1 ? '' : 's'}` }).click();
      const notice = p.getByText('Hold placed');
      await notice.waitFor();
      const reference = (await p.getByRole('link', { name: /^INV-\d{4}$/ }).textContent())!.trim();

      // Every unit of the result is held once under the new case (a repeat of this test holds none twice).
      const quality = await apiSession(DEMO.quality.username, DEMO.quality.password);
      const { holds } = await quality.call<{ holds: HeldUnitRow[] }>('GET', '/api/quality/holds');
      const held = holds.filter((h) => serials.includes(h.serial));
      expect(held.map((h) => h.serial).sort()).toEqual([...serials].sort());
      expect(new Set(held.map((h) => h.serial)).size).toBe(held.length);

      // The case lists the units; the held-units view names the case.
      await p.getByRole('link', { name: reference }).click();
      await p.getByRole('heading', { name: 'Case' }).waitFor();
      expect(await p.getByTestId('linked-units').locator('li').count()).toBe(total);
      expect(await axeFindings(p)).toEqual([]);
      await p.goto('/quality');
      await p.getByTestId('held-rows').waitFor();
      // (Held by an earlier run of this test, a unit stays under that run's case: held once, not twice.)
      const rowsText = await p.getByTestId('held-rows').getByRole('row').allTextContents();
      expect(rowsText.some((t) => serials.some((s) => t.includes(s)) && /INV-\d{4}/.test(t))).toBe(true);

      // One unit's page shows it on hold, its raw timings, and the file as posted checks out.
      await p.goto(`/units/${encodeURIComponent(serials[0])}`);
      await p.getByTestId('unit-card').waitFor();
      expect(await p.getByTestId('unit-card').textContent()).toMatch(/On hold/);
      await p.getByTestId('raw-timings').locator('canvas').first().waitFor();
      expect(await p.getByTestId('edge-residuals').locator('tbody tr').count()).toBe(6);
      await p.getByRole('button', { name: 'Verify against the stored SHA-256' }).click();
      expect(await p.getByTestId('sha-check').textContent()).toMatch(/Verified/);
      const download = p.waitForEvent('download');
      await p.getByRole('link', { name: /Download as posted/ }).click();
      expect((await download).suggestedFilename()).toContain(serials[0]);
      expect(pageErrors).toEqual([]);
      await context.close();
    } finally {
      await browser.close();
    }
  }, 180_000);
});
