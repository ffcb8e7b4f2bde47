// Saves PNGs of the qualification screens for review:
//   PHASEWRIGHT_BASE_URL=http://127.0.0.1:3000 npx tsx tests/browser/qualification-screenshots.ts
// Needs a running server with the demo line seeded (reference units, policies and readings). PNGs go to
// the git-ignored .data/shots unless SHOTS_DIR says otherwise, with axe's serious findings printed.
import { mkdir } from 'node:fs/promises';
import path from 'node:path';
import type { Page } from 'playwright-core';
import { axeFindings, DEMO, freshPage, launchChromium, signInWithPassword } from './browser-kit';
import { apiSession } from './line-kit';

process.env.PHASEWRIGHT_BASE_URL ??= 'http://127.0.0.1:3000';
const outDir = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');

async function main() {
  await mkdir(outDir, { recursive: true });
  const browser = await launchChromium();
  const shot = async (page: Page, name: string, fullPage = false) => {
    await page.waitForLoadState('networkidle').catch(() => {});
    await page.waitForTimeout(400);
    const file = path.join(outDir, `${name}.png`);
    await page.screenshot({ path: file, fullPage });
    console.log(`saved ${file}; axe: ${JSON.stringify(await axeFindings(page))}`);
  };
  const admin = await apiSession(DEMO.admin.username, DEMO.admin.password);
  const { stations } = await admin.call<{ stations: { id: string; name: string }[] }>('GET', '/api/stations');
  const byName = (n: string) => stations.find((s) => s.name === n)!;

  const op = await freshPage(browser, { width: 1366, height: 768 }, true);
  await signInWithPassword(op.page, DEMO.operator.username, DEMO.operator.password);
  for (const name of ['EOL-21', 'EOL-23']) {
    await op.page.goto(`/station/${byName(name).id}`);
    await op.page.getByTestId('qualification-banner').waitFor();
    await shot(op.page, `qualification-station-${name}`);
  }
  await op.context.close();

  const eng = await freshPage(browser, { width: 1366, height: 768 }, true);
  await signInWithPassword(eng.page, DEMO.engineer.username, DEMO.engineer.password);
  await eng.page.goto('/qualification');
  await eng.page.getByLabel('Station', { exact: true }).selectOption({ label: 'EOL-21' });
  await eng.page.getByTestId('bias-chart').waitFor();
  await shot(eng.page, 'qualification-page', true);
  await eng.page.getByLabel('Station', { exact: true }).selectOption({ label: 'EOL-23' });
  await eng.page.getByTestId('bias-chart').waitFor();
  await shot(eng.page, 'qualification-page-eol23', true);
  await eng.page.goto('/qualification/studies');
  await eng.page
    .getByRole('button', { name: /fortnight close/ })
    .first()
    .click();
  await eng.page.getByTestId('study-charts').waitFor();
  await shot(eng.page, 'gauge-studies', true);
  await eng.page.getByLabel('Who are the appraisers?').selectOption('operator');
  await eng.page.getByLabel('Station where the operators measure').waitFor();
  await eng.page.getByRole('form', { name: 'Design a gauge study' }).scrollIntoViewIfNeeded();
  await shot(eng.page, 'gauge-studies-design-operators');
  await eng.page.goto('/qualification/shifts');
  await eng.page.getByTestId('shift-rows').waitFor();
  await shot(eng.page, 'qualification-shifts', true);
  // A duplicate start: the form says which field, before anything is sent.
  await eng.page.getByLabel('Shift 2 starts at').fill('06:00');
  await eng.page.getByRole('button', { name: 'Save the shifts' }).click();
  await shot(eng.page, 'qualification-shifts-error', true);
  await eng.page.goto('/qualification');
  await eng.page.getByRole('button', { name: 'From readings…' }).first().click();
  await eng.page.getByTestId('certify-figures').waitFor();
  await eng.page.getByTestId('certify-panel').scrollIntoViewIfNeeded();
  await shot(eng.page, 'qualification-certify');
  await eng.page.goto('/analysis');
  await eng.page.getByTestId('bias-chart').waitFor({ timeout: 30_000 });
  await eng.page.getByTestId('bias-chart').scrollIntoViewIfNeeded();
  await shot(eng.page, 'analysis-station-bias');
  await eng.context.close();
  await browser.close();
}

await main();
