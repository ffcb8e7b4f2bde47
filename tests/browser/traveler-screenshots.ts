// Renders the current travelers of the given units, on A4 and US Letter, from a running database, and
// turns each page into a PNG with pdftoppm (poppler-utils) for review:
//   DATABASE_URL=postgres://… npx tsx tests/browser/traveler-screenshots.ts SERIAL [SERIAL…]
// Files go to the git-ignored .data/shots unless SHOTS_DIR says otherwise. Nothing is stored or audited.
import { execFileSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { and, desc, eq, inArray } from 'drizzle-orm';
import { createDatabase } from '#server/db/client';
import { calibrations } from '#server/modules/calibrations/calibrations.table';
import { renderTravelerPdf } from '#server/modules/travelers/traveler.render';
import { travelerData } from '#server/modules/travelers/travelers.service';
import { findUnitBySerial } from '#server/modules/units/units.service';

async function main() {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('Set DATABASE_URL to the database of a running line.');
  const outDir = process.env.SHOTS_DIR ?? path.resolve('.data', 'shots');
  mkdirSync(outDir, { recursive: true });
  const database = createDatabase(url, { max: 2, applicationName: 'traveler-screenshots' });
  try {
    for (const serial of process.argv.slice(2)) {
      const unit = await findUnitBySerial(database.db, serial);
      if (!unit) throw new Error(`No unit ${serial}.`);
      const [latest] = await database.db
        .select({ id: calibrations.id })
        .from(calibrations)
        .where(
          and(
            eq(calibrations.unitId, unit.id),
            eq(calibrations.purpose, 'station'),
            inArray(calibrations.verdict, ['pass', 'fail']),
          ),
        )
        .orderBy(desc(calibrations.computedAt))
        .limit(1);
      for (const size of ['A4', 'LETTER'] as const) {
        const pdf = await renderTravelerPdf(await travelerData(database.pool, latest.id, 1, size, new Date()));
        const base = path.join(outDir, `traveler-${serial}-${size}`);
        writeFileSync(`${base}.pdf`, pdf);
        execFileSync('pdftoppm', ['-r', '80', '-png', `${base}.pdf`, base]);
        console.log(`saved ${base}.pdf and its pages as PNG`);
      }
    }
  } finally {
    await database.close();
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exitCode = 1;
});
