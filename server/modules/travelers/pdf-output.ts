// pdfkit writes a PDF a line at a time: every drawing operator of a page is turned into its own small byte
// array, and every line of every object (its number, its dictionary, "stream", "endobj") is pushed through
// the document's readable stream on its own. For a traveler that is thousands of tiny arrays and stream
// pushes, about a tenth of a render. batchPdfOutput keeps the same bytes in the same order but turns
// each page's operators into bytes once, when the page's content is finished, and hands the stream the
// rest of the file in one piece when the document ends. When pdfkit's internals differ from what this
// expects, nothing is changed (only slower).

import { deflateSync } from 'node:zlib';

type Doc = PDFKit.PDFDocument;

// What this code expects of pdfkit (0.20): the page content stream object and the document's writer.
interface ContentRef {
  write(chunk: unknown): void;
  finalize(): void;
  compress: boolean;
  buffer: Uint8Array[];
  data: Record<string, unknown>;
}
interface Internals {
  page?: { content?: Partial<ContentRef> };
  _write?: (data: unknown) => void;
  _offset?: number;
  push(chunk: unknown): boolean;
}

// The page content (about 40 KiB of operators) is deflated at zlib's fastest level rather than its default:
// a third of the time for a stream about 1.5 KiB larger. Any level is read back alike (RFC 1950/1951).
export const CONTENT_DEFLATE = { level: 1, memLevel: 9 } as const;

function deflateContent(content: Partial<ContentRef>): void {
  const { buffer, data } = content;
  if (content.compress !== true || !Array.isArray(buffer) || buffer.length === 0) return;
  if (typeof data !== 'object' || data === null) return;
  const deflated = deflateSync(Buffer.concat(buffer), CONTENT_DEFLATE);
  // Already deflated: pdfkit writes it as it is, under the filter that says how to read it.
  content.compress = false;
  data.Filter = 'FlateDecode';
  // pdfkit encrypts the stream after this, when the document is encrypted.
  content.buffer = [deflated];
}

function batchPageContent(doc: Doc): void {
  const content = (doc as unknown as Internals).page?.content;
  if (typeof content?.write !== 'function' || typeof content.finalize !== 'function') return;
  const write = content.write.bind(content);
  const finalize = content.finalize.bind(content);
  let pending: string[] = [];
  const flush = () => {
    if (pending.length === 0) return;
    // One string, its lines joined and ended as pdfkit would have ended each of them, as its low bytes.
    const text = `${pending.join('\n')}\n`;
    pending = [];
    write(Buffer.from(text, 'latin1'));
  };
  content.write = (chunk: unknown) => {
    if (chunk instanceof Uint8Array) {
      flush();
      write(chunk);
    } else pending.push(`${chunk as string}`);
  };
  content.finalize = () => {
    flush();
    deflateContent(content);
    finalize();
  };
}

/** Call right after creating the document, before drawing. */
export function batchPdfOutput(doc: Doc): void {
  const d = doc as unknown as Internals;
  batchPageContent(doc);
  doc.on('pageAdded', () => batchPageContent(doc));
  if (typeof d._write !== 'function' || typeof d._offset !== 'number') return;
  const push = d.push.bind(doc);
  const parts: Buffer[] = [];
  let text = '';
  d._write = (data: unknown) => {
    if (data instanceof Uint8Array) {
      if (text) parts.push(Buffer.from(text, 'latin1'));
      text = '';
      parts.push(Buffer.from(data.buffer, data.byteOffset, data.byteLength));
      d._offset! += data.length;
    } else {
      // pdfkit writes each line as its low bytes (binary strings), ended by '\n'.
      const line = `${data as string}\n`;
      text += line;
      d._offset! += line.length;
    }
  };
  d.push = (chunk: unknown) => {
    if (chunk === null) {
      if (text) parts.push(Buffer.from(text, 'latin1'));
      text = '';
      if (parts.length) push(Buffer.concat(parts));
      parts.length = 0;
    }
    return push(chunk);
  };
}
