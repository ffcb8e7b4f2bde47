/** Figures as people read them: a fixed number of decimals and the unit, or a dash when there is none. */
export function fmt(value: number | null | undefined, unit = '', digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  const text = value.toLocaleString('en-GB', {
    minimumFractionDigits: digits,
    maximumFractionDigits: digits,
  });
  return unit ? `${text} ${unit}` : text;
}

export function fmtP(p: number | null | undefined): string {
  if (p === null || p === undefined) return '—';
  return p < 0.0001 ? 'p below 0.0001' : `p = ${p.toFixed(4)}`;
}

export const READING_TEXT = {
  capable: 'Capable: Cpk is 1.67 or more, the usual bar for a new process.',
  'conditionally-capable': 'Acceptable with watching: Cpk is between 1.33 and 1.67.',
  'not-capable': 'Not capable: Cpk is below 1.33. Centre the process or reduce its spread.',
} as const;
