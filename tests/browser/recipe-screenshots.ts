// Saves PNGs of the recipe desk's screens and checks each with axe: `npx tsx tests/browser/recipe-screenshots.ts`.
// Needs a running server (PHASEWRIGHT_BASE_URL) with the demo line. It copies the first model's released
// recipe into a draft, narrows its offset window and submits it for review (it does not approve it),
// then copies another draft and discards it.
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { axeFindings, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';

process.env.PHASEWRIGHT_BASE_URL ??= 'http://127.0.0.1:3000';
const outDir = process.env.SHOTS_DIR ?? '/tmp/phasewright-shots';

async function main() {
  await mkdir(outDir, { recursive: true });
  const browser = await launchChromium();
  let problems = 0;
  const shot = async (page: Page, name: string) => {
    await page.waitForLoadState('networkidle');
    const file = path.join(outDir, `${name}.png`);
    await page.screenshot({ path: file, fullPage: true });
    const findings = await axeFindings(page);
    problems += findings.length;
    console.log(
      `saved ${file}; axe serious/critical: ${findings.length ? JSON.stringify(findings) : 'none'}`,
    );
  };
  try {
    const evan = await freshPage(browser, { width: 1440, height: 900 }, true);
    const p = evan.page;
    await signInWithPassword(p, DEMO.engineer.username, DEMO.engineer.password);
    await p.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Recipes' }).click();
    await p.getByRole('table', { name: 'Motor models' }).waitFor();
    await shot(p, 'recipes-models');
    await p.getByRole('button', { name: 'New model' }).click();
    await p.getByRole('dialog').waitFor();
    await p.getByRole('button', { name: 'Create model' }).click();
    await p.screenshot({ path: path.join(outDir, 'recipes-model-create-errors.png') });
    await p.keyboard.press('Escape');
    await p.getByRole('table', { name: 'Motor models' }).getByRole('link').first().click();
    await p.getByRole('heading', { name: 'Recipe versions', exact: true }).waitFor();
    await shot(p, 'recipes-model-detail');
    await p
      .getByRole('button', { name: /Copy into a new draft/ })
      .first()
      .click();
    await p.getByRole('form', { name: /Edit draft/ }).waitFor();
    await shot(p, 'recipes-draft-editor');
    await p.getByLabel('Offset window, lowest (°e)').fill('6');
    await p.getByLabel('Offset window, highest (°e)').fill('-6');
    await p.getByLabel('Hall debounce (µs)').fill('');
    await p.getByRole('button', { name: 'Save draft' }).click();
    await p.getByText('Enter a number.').waitFor();
    await shot(p, 'recipes-draft-editor-errors');
    await p.getByLabel('Offset window, lowest (°e)').fill('-6');
    await p.getByLabel('Offset window, highest (°e)').fill('6');
    await p.getByLabel('Hall debounce (µs)').fill('2');
    await p.getByRole('button', { name: 'Save draft' }).click();
    await p.getByText('Saved as revision 2').waitFor();
    await p.getByLabel('Reason for the change').fill('Narrow the offset window to ±6 °e after field returns');
    await p.getByRole('button', { name: 'Submit for review' }).click();
    await p.getByRole('link', { name: 'Open the review' }).click();
    await p.getByRole('heading', { name: 'Your decision' }).waitFor();
    await p.getByRole('button', { name: 'Run what-if' }).click();
    await p.getByTestId('what-if-summary').waitFor({ timeout: 120_000 });
    await shot(p, 'recipes-review-author');
    const reviewUrl = p.url();
    // A second draft that goes nowhere: discarded with a reason, kept on record off the working list.
    await p.getByRole('link', { name: /All versions of/ }).click();
    await p.getByRole('heading', { name: 'Recipe versions', exact: true }).waitFor();
    await p
      .getByRole('button', { name: /Copy into a new draft/ })
      .first()
      .click();
    await p.getByRole('heading', { name: 'Discard this draft' }).waitFor();
    await shot(p, 'recipes-draft-discard');
    await p.getByLabel('Reason for discarding').fill('Copied by mistake');
    await p.getByRole('button', { name: /Discard draft/ }).click();
    await p.getByText(/Discarded drafts \(\d+\)/).click();
    await p.getByText('Copied by mistake').first().waitFor();
    await shot(p, 'recipes-model-discarded');
    await evan.context.close();

    const rosa = await freshPage(browser, { width: 1440, height: 900 }, true);
    await signInWithPassword(rosa.page, DEMO.engineer2.username, DEMO.engineer2.password);
    await rosa.page.goto(reviewUrl);
    await rosa.page.getByRole('button', { name: 'Approve and release' }).waitFor();
    await shot(rosa.page, 'recipes-review-reviewer');
    await rosa.context.close();

    const quinn = await freshPage(browser, { width: 1280, height: 800 }, true);
    await signInWithPassword(quinn.page, DEMO.quality.username, DEMO.quality.password);
    await quinn.page.goto('/recipes');
    await quinn.page.getByRole('table', { name: 'Motor models' }).waitFor();
    await shot(quinn.page, 'recipes-models-quality');
    await quinn.context.close();
  } finally {
    await browser.close();
  }
  if (problems) {
    console.error(`${problems} serious or critical accessibility findings`);
    process.exitCode = 1;
  }
}

void main();
