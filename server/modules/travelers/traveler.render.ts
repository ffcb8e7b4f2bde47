import PDFDocument from 'pdfkit';
import { barlowFontSources, prepareDocumentFonts } from './fonts';
import { batchPdfOutput } from './pdf-output';
import type { TravelerDataInput } from './traveler.types';
import { parseTravelerData } from './traveler.types';
import { formatTravelerCode } from './traveler.code';
import { code128Symbol, dataMatrixSymbol } from './traveler.barcodes';
import { drawTraveler } from './traveler.layout';
import { dispositionOf, MARGIN } from './traveler.page';
import { SAFETY_CAUTIONS } from '#shared/wording';

export { SAFETY_CAUTIONS };
export { formatTravelerCode, parseTravelerCode } from './traveler.code';

// The unit traveler: one page that follows a calibrated unit down the line and into the plant's files.
// Pure: data in, PDF bytes out. The same data (generatedAt included) gives the same bytes, so the stored
// sha256 of a traveler can be reproduced. The parts: traveler.code.ts (the Data Matrix text),
// traveler.barcodes.ts (symbols drawn as vector paths), traveler.page.ts (drawing kit) and
// traveler.layout.ts (the sections, top to bottom).

export const PAGE_SIZES_PT = {
  A4: [595.28, 841.89],
  LETTER: [612, 792],
} as const;

/**
 * Renders the unit traveler. Rejects invalid data with a TravelerDataError naming every bad field.
 * Times print in data.timeZone (UTC unless given); the PDF's CreationDate is data.generatedAt.
 */
export async function renderTravelerPdf(input: TravelerDataInput): Promise<Buffer> {
  const data = parseTravelerData(input);
  const code128 = code128Symbol(data.serial);
  const matrix = dataMatrixSymbol(formatTravelerCode(data));
  const generatedAt = new Date(data.generatedAt);

  const doc = new PDFDocument({
    size: [...PAGE_SIZES_PT[data.pageSize]],
    margin: MARGIN,
    bufferPages: true,
    autoFirstPage: true,
    font: '',
    lang: 'en',
    displayTitle: true,
    info: {
      Title: `Unit calibration traveler ${data.serial}`,
      Author: `${data.companyName}, ${data.plantName}`,
      Subject: `Hall offset calibration of unit ${data.serial}: ${data.verdict.toUpperCase()}${dispositionOf(data) === 'release' ? '' : dispositionOf(data) === 'hold' ? ', ON HOLD' : ', REJECT'}`,
      Keywords: `traveler ${data.serial} ${data.recipe.name}@${data.recipe.version} print ${data.printNumber}`,
      Creator: 'Phasewright',
      Producer: 'Phasewright traveler renderer',
      CreationDate: generatedAt,
      ModDate: generatedAt,
    },
  });
  batchPdfOutput(doc);
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('data', (chunk: Buffer) => chunks.push(chunk));
    doc.on('end', () => resolve(Buffer.concat(chunks)));
    doc.on('error', reject);
  });

  // pdfkit's types admit only bytes or a path, but it takes a parsed font too (see fonts.ts).
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);
  prepareDocumentFonts(doc);

  drawTraveler(doc, data, { code128, matrix });

  doc.end();
  return done;
}
