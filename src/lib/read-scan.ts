import { serialSchema } from '#shared/schemas/serial';

/** Checks a finished scan; returns the serial to look up or the reason it was refused. */
export function readScan(raw: string): { serial: string } | { error: string } {
  const text = raw.trim();
  if (text.length === 0)
    return { error: 'Nothing was scanned. Scan the serial label, or type it and press Enter.' };
  if (text.length < 3)
    return { error: `“${text}” is too short for a serial. Scan the label again, or type the whole serial.` };
  const parsed = serialSchema.safeParse(text);
  if (!parsed.success) return { error: parsed.error.issues[0].message };
  return { serial: parsed.data };
}
