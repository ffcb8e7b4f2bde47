import { mkdirSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { axeFindings, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';

describe('containment search on the demo line', () => {
  it('opens a search from its address, saves it under a name, reopens it from the list and deletes it', async () => {
    const browser = await launchChromium();
    try {
      const { page: p, context, pageErrors } = await freshPage(browser, { width: 1440, height: 900 }, true);
      await signInWithPassword(p, DEMO.quality.username, DEMO.quality.password);
      // The filter is in the address: the form shows it and the search runs.
      await p.goto('/quality?view=search&hallBoardLot=HB-2446-C&verdict=pass');
      await p.getByTestId('search-total').waitFor();
      expect(await p.getByLabel('Hall-board lot').inputValue()).toBe('HB-2446-C');
      expect(await p.getByLabel('Verdict of a station result').inputValue()).toBe('pass');
      const total = (await p.getByTestId('search-total').textContent())!;
      expect(total).toMatch(/^\d+ units? found/);

      const name = `Lot HB-2446-C passes ${Date.now()}`;
      await p.getByLabel('Name for this search').fill(name);
      await p.getByRole('button', { name: 'Save this search' }).click();
      await p.getByTestId('saved-searches').getByText(name).waitFor();
      expect(await axeFindings(p)).toEqual([]);
      const dir = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');
      mkdirSync(dir, { recursive: true });
      await p.screenshot({ path: path.join(dir, 'quality-search-form.png'), fullPage: true });

      // Cleared, then reopened from the list: the same filter, in the form and in the address.
      await p.getByRole('button', { name: 'Clear', exact: true }).click();
      expect(await p.getByLabel('Hall-board lot').inputValue()).toBe('');
      await p.getByRole('button', { name: `Open saved search ${name}` }).click();
      await p.getByTestId('search-total').waitFor();
      expect(await p.getByLabel('Hall-board lot').inputValue()).toBe('HB-2446-C');
      expect(new URL(p.url()).searchParams.get('hallBoardLot')).toBe('HB-2446-C');
      expect(await p.getByTestId('search-total').textContent()).toBe(total);

      await p.getByRole('button', { name: `Delete saved search ${name}` }).click();
      await p.getByTestId('saved-searches').getByText(name).waitFor({ state: 'detached' });
      expect(pageErrors).toEqual([]);
      await context.close();
    } finally {
      await browser.close();
    }
  });
});
