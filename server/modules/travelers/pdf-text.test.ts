import PDFDocument from 'pdfkit';
import { describe, expect, it } from 'vitest';
import { barlowFontSources } from './fonts';
import { lineWidth, paragraphHeight, writeLine, writeParagraph } from './pdf-text';

type Doc = PDFKit.PDFDocument;

// Two documents drawn the same way but for the text calls: pdfkit's own (the reference) and ours.
async function pdfOf(draw: (doc: Doc) => void): Promise<Buffer> {
  const at = new Date(Date.UTC(2026, 11, 3));
  const doc = new PDFDocument({
    size: 'A4',
    margin: 36,
    compress: false,
    info: { CreationDate: at, ModDate: at },
  });
  const chunks: Buffer[] = [];
  const done = new Promise<Buffer>((resolve) => doc.on('end', () => resolve(Buffer.concat(chunks))));
  doc.on('data', (c: Buffer) => chunks.push(c));
  for (const [face, source] of Object.entries(barlowFontSources())) doc.registerFont(face, source as Buffer);
  draw(doc);
  doc.end();
  return done;
}

const LINES = [
  'Unit calibration traveler',
  'CM57-24-008143',
  '2026-12-02 14:03:11 UTC',
  '−17.85 °e',
  'Zoë Ångström, Łódź',
  'office ﬁle fi ffl',
  'ends with a space ',
];
const PARAGRAPH =
  'Every hall edge sits within the allowed distance of the common offset, and the rotor speed stayed within the measuring window.';

describe('text written from remembered runs', () => {
  it('writes single lines with exactly the bytes of pdfkit’s doc.text(…, { lineBreak: false })', async () => {
    const draw = (ours: boolean) => (doc: Doc) => {
      LINES.forEach((line, i) => {
        doc.font(['regular', 'semiBold', 'bold'][i % 3]).fontSize(7 + i * 1.5);
        if (ours) expect(writeLine(doc, line, 40.5 + i, 60 + i * 30)).toBe(true);
        else doc.text(line, 40.5 + i, 60 + i * 30, { lineBreak: false });
      });
    };
    const [reference, written] = [await pdfOf(draw(false)), await pdfOf(draw(true))];
    expect(written.toString('latin1')).toBe(reference.toString('latin1'));
  });

  it('measures a line as doc.widthOfString does', async () => {
    await pdfOf((doc) => {
      for (const line of LINES) {
        doc.font('semiBold').fontSize(9.5);
        expect(lineWidth(doc, line)).toBe(doc.widthOfString(line));
      }
    });
  });

  it('wraps and writes a paragraph as doc.text(…, { width }) does, and gives its height as heightOfString', async () => {
    const heights: number[][] = [];
    const draw = (ours: boolean) => (doc: Doc) => {
      doc.font('regular').fontSize(7.5);
      [120, 230, 400].forEach((width, i) => {
        doc.y = 100.25 + i;
        heights.push([paragraphHeight(doc, PARAGRAPH, width), doc.heightOfString(PARAGRAPH, { width })]);
        if (ours) writeParagraph(doc, PARAGRAPH, 50, 100 + i * 120, width);
        else doc.text(PARAGRAPH, 50, 100 + i * 120, { width });
      });
    };
    const [reference, written] = [await pdfOf(draw(false)), await pdfOf(draw(true))];
    expect(written.toString('latin1')).toBe(reference.toString('latin1'));
    for (const [ours, theirs] of heights) expect(ours).toBe(theirs);
    expect(heights[0][0]).toBeGreaterThan(heights[2][0]);
  });
});
