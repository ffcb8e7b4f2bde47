import { describe, expect, it } from 'vitest';
import type { UnitDetail } from '#shared/schemas/units';
import type { RecipeVersionView, WhatIfRunView } from '#shared/schemas/recipes';
import { axeFindings, baseUrl, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { apiSession, buildMeasurement, ensureTestBench, freshSerial, postMeasurement } from './line-kit';

describe('the recipe desk on the demo line', () => {
  it('a narrowed offset window, checked on past units, reviewed by a second engineer, judges the next measurement', async () => {
    const browser = await launchChromium();
    try {
      // An engineer copies the version in force of the first model and narrows its offset window.
      const evan = await freshPage(browser, { width: 1440, height: 900 }, true);
      const p = evan.page;
      await signInWithPassword(p, DEMO.engineer.username, DEMO.engineer.password);
      await p.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Recipes' }).click();
      await p.getByRole('table', { name: 'Motor models' }).getByRole('link').first().click();
      await p
        .getByRole('row')
        .filter({ hasText: 'In force' })
        .getByRole('button', { name: /Copy into a new draft/ })
        .click();
      await p.getByRole('form', { name: /Edit draft/ }).waitFor();
      await p.getByLabel('Offset window, lowest (°e)').fill('-3.5');
      await p.getByLabel('Offset window, highest (°e)').fill('3.5');
      await p.getByRole('button', { name: 'Save draft' }).click();
      await p.getByText('Saved as revision 2').waitFor();
      const recipeId = p.url().split('/').pop()!;

      // The what-if over past units: the bad hall-board lot (about +4 °e off) would now fail.
      // The whole fortnight of the demo line (the lot was built in its first week).
      await p.getByLabel('Most recent units (units)').fill('5000');
      await p.getByRole('button', { name: 'Run what-if' }).click();
      await p.getByTestId('what-if-summary').waitFor({ timeout: 120_000 });
      expect(await axeFindings(p)).toEqual([]);
      const engineer = await apiSession(DEMO.engineer.username, DEMO.engineer.password);
      const { runs } = await engineer.call<{ runs: WhatIfRunView[] }>(
        'GET',
        `/api/recipes/${recipeId}/what-if`,
      );
      const changed = runs[0].summary!.changed.filter(
        (c) => c.before.verdict === 'pass' && c.after.verdict === 'fail',
      );
      expect(changed.length).toBeGreaterThan(0);
      const lots = await Promise.all(
        changed.map((c) =>
          engineer
            .call<UnitDetail>('GET', `/api/units/${encodeURIComponent(c.serial)}`)
            .then((u) => u.unit.lots.hallBoard),
        ),
      );
      expect(lots).toContain('HB-2446-C');

      await p.getByLabel('Reason for the change').fill('Catch hall boards placed like lot HB-2446-C');
      await p.getByRole('button', { name: 'Submit for review' }).click();
      await p.getByRole('link', { name: 'Open the review' }).click();
      await p.getByText('Waiting for a second engineer').waitFor();
      await evan.context.close();

      // A second engineer approves it: it is in force from now on.
      const rosa = await freshPage(browser, { width: 1440, height: 900 }, true);
      await signInWithPassword(rosa.page, DEMO.engineer2.username, DEMO.engineer2.password);
      await rosa.page.goto(`/recipes/versions/${recipeId}/review`);
      await rosa.page.getByTestId('what-if-summary').waitFor();
      await rosa.page.getByRole('button', { name: 'Approve and release' }).click();
      // The review page itself has an "In force" column (the what-if table), so wait on the version's
      // state, with the page still open while its request is on the way.
      await expect
        .poll(
          async () => (await engineer.call<RecipeVersionView>('GET', `/api/recipes/${recipeId}`)).status,
          {
            timeout: 15_000,
          },
        )
        .toBe('released');
      await rosa.context.close();
      const released = await engineer.call<RecipeVersionView>('GET', `/api/recipes/${recipeId}`);
      expect(released.status).toBe('released');

      // A station's next measurement is judged by the new version.
      const bench = await ensureTestBench('BT-RECIPES');
      expect(bench.model.activeRecipe!.id).toBe(recipeId);
      const serial = freshSerial('BTR');
      const posted = await postMeasurement(bench.key, buildMeasurement(bench.model, serial, 7).measurement);
      expect(posted.status).toBe(202);
      const result = await fetch(
        `${baseUrl()}/api/station/measurements/${encodeURIComponent(posted.body.measurementId!)}/result?waitMs=15000`,
        { headers: { 'x-station-key': bench.key } },
      ).then((r) => r.json() as Promise<{ calibration: { recipe: { id: string; version: number } } }>);
      expect(result.calibration.recipe).toMatchObject({ id: recipeId, version: released.version });
    } finally {
      await browser.close();
    }
  }, 300_000);
});
