import fs from 'node:fs/promises';
import { fileTypeFromFile } from 'file-type';

/**
 * What kind of file an upload is, judged by its bytes. Binary kinds are recognised by their
 * signatures ("magic numbers") through file-type; a file without one is accepted as text only when it
 * is valid UTF-8 without control characters (tab, line and page breaks allowed), and is called CSV when
 * its name ends in .csv. The browser's claimed type and the name's extension never decide.
 */
const ACCEPTED_BINARY: Record<string, string> = {
  png: 'image/png',
  jpg: 'image/jpeg',
  pdf: 'application/pdf',
  zip: 'application/zip',
};

/** Plain words for kinds people may try to attach; anything else is named by its usual extension. */
const REFUSED_WORDS: Record<string, string> = {
  exe: 'a Windows program (.exe)',
  elf: 'a Linux program (ELF)',
  macho: 'a macOS program (Mach-O)',
  msi: 'a Windows installer (.msi)',
  docx: 'a Word document (.docx)',
  xlsx: 'an Excel workbook (.xlsx)',
  pptx: 'a PowerPoint file (.pptx)',
  jar: 'a Java program (.jar)',
  apk: 'an Android app (.apk)',
  gif: 'a GIF picture',
  webp: 'a WebP picture',
  heic: 'a HEIC picture',
  mp4: 'an MP4 video',
  mov: 'a QuickTime video',
  '7z': 'a 7-Zip archive',
  rar: 'a RAR archive',
  gz: 'a gzip archive',
};

export type AttachmentKind = { accepted: true; contentType: string } | { accepted: false; found: string };

// Control characters other than tab (09), line feed (0A), vertical tab (0B), form feed (0C), return (0D).
// eslint-disable-next-line no-control-regex -- control characters are what is looked for
const CONTROL = /[\u0000-\u0008\u000E-\u001F\u007F]/;

export async function attachmentKind(filePath: string, fileName: string): Promise<AttachmentKind> {
  const found = await fileTypeFromFile(filePath);
  if (found) {
    const contentType = ACCEPTED_BINARY[found.ext];
    if (contentType) return { accepted: true, contentType };
    return {
      accepted: false,
      found: REFUSED_WORDS[found.ext] ?? `a file of type ${found.ext} (${found.mime})`,
    };
  }
  const bytes = await fs.readFile(filePath);
  if (bytes.length === 0) return { accepted: false, found: 'an empty file' };
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return { accepted: false, found: 'binary data of a kind we do not recognise' };
  }
  if (CONTROL.test(text)) return { accepted: false, found: 'binary data of a kind we do not recognise' };
  return {
    accepted: true,
    contentType: /\.csv$/i.test(fileName) ? 'text/csv; charset=utf-8' : 'text/plain; charset=utf-8',
  };
}
