import type { TravelerData } from './traveler.types';

// The text a traveler's Data Matrix carries: written by the renderer, read back by scanners and tests.

//
// Format PW1, our own, kept short so the symbol stays small (a 22–32 module square):
//   PW1|SN=<serial>|OFS=<offsetDeg, signed, 2 decimals>|CNT=<offsetCounts>/<countsPerTurn>|RCP=<recipe>@<version>|V=<P|F>
// Fields are separated by '|'; each is KEY=value. Serials and recipe names never contain '|' or '='
// (the input schema forbids them), so no escaping is needed. Readers must ignore keys they do not know.

export const TRAVELER_CODE_FORMAT = 'PW1';

export interface TravelerCode {
  serial: string;
  offsetDeg: number;
  offsetCounts: number;
  countsPerTurn: number;
  recipeName: string;
  recipeVersion: number;
  verdict: 'pass' | 'fail';
}

export function formatTravelerCode(data: TravelerData): string {
  return [
    TRAVELER_CODE_FORMAT,
    `SN=${data.serial}`,
    `OFS=${signed(data.offsetDeg, 2)}`,
    `CNT=${data.offsetCounts}/${data.countsPerTurn}`,
    `RCP=${data.recipe.name}@${data.recipe.version}`,
    `V=${data.verdict === 'pass' ? 'P' : 'F'}`,
  ].join('|');
}

export function parseTravelerCode(text: string): TravelerCode {
  const [format, ...fields] = text.split('|');
  if (format !== TRAVELER_CODE_FORMAT)
    throw new Error(`not a ${TRAVELER_CODE_FORMAT} traveler code: "${text}"`);
  const values = new Map(
    fields.map((f) => {
      const at = f.indexOf('=');
      return [f.slice(0, at), f.slice(at + 1)] as const;
    }),
  );
  const need = (key: string): string => {
    const value = values.get(key);
    if (value === undefined || value === '') throw new Error(`traveler code lacks ${key}: "${text}"`);
    return value;
  };
  const counts = /^(-?\d+)\/(\d+)$/.exec(need('CNT'));
  const recipe = /^(.+)@(\d+)$/.exec(need('RCP'));
  const offsetDeg = Number(need('OFS'));
  const verdict = need('V');
  if (!counts || !recipe || !Number.isFinite(offsetDeg) || (verdict !== 'P' && verdict !== 'F')) {
    throw new Error(`malformed traveler code: "${text}"`);
  }
  return {
    serial: need('SN'),
    offsetDeg,
    offsetCounts: Number(counts[1]),
    countsPerTurn: Number(counts[2]),
    recipeName: recipe[1],
    recipeVersion: Number(recipe[2]),
    verdict: verdict === 'P' ? 'pass' : 'fail',
  };
}

// ---- Barcode images -----------------------------------------------------------------------------------
//

/** A number with its sign always written (+1.50, -0.25); zero is written without a sign. */
export function signed(value: number, decimals: number): string {
  const text = Math.abs(value).toFixed(decimals);
  if (Number(text) === 0) return (0).toFixed(decimals);
  return `${value < 0 ? '-' : '+'}${text}`;
}
