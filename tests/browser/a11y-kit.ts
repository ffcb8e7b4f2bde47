import { createRequire } from 'node:module';
import type { Page } from 'playwright-core';

const require = createRequire(import.meta.url);
const AXE_PATH = require.resolve('axe-core/axe.min.js');

export type AxeFinding = { id: string; impact: string | null; help: string; nodes: string[] };

/**
 * Runs axe-core (https://github.com/dequelabs/axe-core, WCAG 2.x A/AA rules, colour contrast included)
 * on the page as it stands and returns the serious and critical findings.
 */
export async function seriousAxeFindings(page: Page): Promise<AxeFinding[]> {
  await page.addScriptTag({ path: AXE_PATH });
  const findings = await page.evaluate(async () => {
    const axe = (
      window as unknown as {
        axe: {
          run: (c: Document) => Promise<{
            violations: {
              id: string;
              impact: string | null;
              help: string;
              nodes: { target: unknown[]; failureSummary?: string }[];
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
      nodes: v.nodes.slice(0, 5).map((n) => `${String(n.target[0])} ${n.failureSummary ?? ''}`.slice(0, 300)),
    }));
  });
  return findings.filter((f) => f.impact === 'serious' || f.impact === 'critical');
}
