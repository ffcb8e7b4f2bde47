// A Data Matrix (ECC 200, ISO/IEC 16022) encoder for the traveler's code: square symbols, ASCII
// encodation. bwip-js runs the whole Barcode Writer in Pure PostScript to make the same symbol and took
// about 6 ms of CPU per traveler, a quarter of a render; this takes a few hundredths of that. Text it does
// not cover (a character above 127, more than a 104 × 104 symbol holds) returns null, and the caller
// falls back to bwip-js. datamatrix.test.ts checks it module for module against bwip-js given the same
// codewords.

/** [symbol side in modules, data regions per side, error correction codewords, interleaved blocks]. */
const SQUARE_SIZES: readonly (readonly [number, number, number, number])[] = [
  [10, 1, 5, 1],
  [12, 1, 7, 1],
  [14, 1, 10, 1],
  [16, 1, 12, 1],
  [18, 1, 14, 1],
  [20, 1, 18, 1],
  [22, 1, 20, 1],
  [24, 1, 24, 1],
  [26, 1, 28, 1],
  [32, 2, 36, 1],
  [36, 2, 42, 1],
  [40, 2, 48, 1],
  [44, 2, 56, 1],
  [48, 2, 68, 1],
  [52, 2, 84, 2],
  [64, 4, 112, 2],
  [72, 4, 144, 4],
  [80, 4, 192, 4],
  [88, 4, 224, 4],
  [96, 4, 272, 4],
  [104, 4, 336, 6],
];

/** ASCII encodation: two digits in one codeword, any other character as its code plus one. */
export function asciiCodewords(text: string): number[] | null {
  const out: number[] = [];
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c > 127) return null;
    const d = i + 1 < text.length ? text.charCodeAt(i + 1) : -1;
    if (c >= 48 && c <= 57 && d >= 48 && d <= 57) {
      out.push(130 + (c - 48) * 10 + (d - 48));
      i++;
    } else out.push(c + 1);
  }
  return out;
}

// GF(256) with the field polynomial x^8 + x^5 + x^3 + x^2 + 1 (301), as ISO/IEC 16022 § 5.7 states.
const EXP = new Uint8Array(512);
const LOG = new Uint8Array(256);
for (let i = 0, x = 1; i < 255; i++) {
  EXP[i] = x;
  LOG[x] = i;
  x <<= 1;
  if (x & 0x100) x ^= 301;
}
for (let i = 255; i < 512; i++) EXP[i] = EXP[i - 255];
const mul = (a: number, b: number) => (a === 0 || b === 0 ? 0 : EXP[LOG[a] + LOG[b]]);

const generators = new Map<number, Uint8Array>();
// Coefficients of (x - α^1)(x - α^2)…(x - α^n), highest power first, the leading 1 left out.
function generator(n: number): Uint8Array {
  let g = generators.get(n);
  if (g) return g;
  let poly = [1];
  for (let i = 1; i <= n; i++) {
    const next = new Array<number>(poly.length + 1).fill(0);
    for (let j = 0; j < poly.length; j++) {
      next[j] ^= poly[j];
      next[j + 1] ^= mul(poly[j], EXP[i]);
    }
    poly = next;
  }
  g = Uint8Array.from(poly.slice(1));
  generators.set(n, g);
  return g;
}

function reedSolomon(data: number[], n: number): number[] {
  const g = generator(n);
  const ecc = new Array<number>(n).fill(0);
  for (const d of data) {
    const factor = d ^ ecc[0];
    for (let k = 0; k < n - 1; k++) ecc[k] = ecc[k + 1] ^ mul(factor, g[k]);
    ecc[n - 1] = mul(factor, g[n - 1]);
  }
  return ecc;
}

// Codeword bits to module positions in the mapping matrix (ISO/IEC 16022 annex F). Each entry is
// codeword × 8 + bit (bit 0 the most significant), or -1 / -2 for the fixed light / dark corner modules.
function placement(nrow: number, ncol: number): Int32Array {
  const a = new Int32Array(nrow * ncol).fill(-3);
  const module = (row: number, col: number, chr: number, bit: number) => {
    if (row < 0) {
      row += nrow;
      col += 4 - ((nrow + 4) % 8);
    }
    if (col < 0) {
      col += ncol;
      row += 4 - ((ncol + 4) % 8);
    }
    a[row * ncol + col] = chr * 8 + bit;
  };
  const utah = (row: number, col: number, chr: number) => {
    module(row - 2, col - 2, chr, 0);
    module(row - 2, col - 1, chr, 1);
    module(row - 1, col - 2, chr, 2);
    module(row - 1, col - 1, chr, 3);
    module(row - 1, col, chr, 4);
    module(row, col - 2, chr, 5);
    module(row, col - 1, chr, 6);
    module(row, col, chr, 7);
  };
  const corner = (chr: number, cells: readonly (readonly [number, number])[]) =>
    cells.forEach(([r, c], bit) => module(r, c, chr, bit));
  let chr = 0;
  let row = 4;
  let col = 0;
  do {
    if (row === nrow && col === 0)
      corner(chr++, [
        [nrow - 1, 0],
        [nrow - 1, 1],
        [nrow - 1, 2],
        [0, ncol - 2],
        [0, ncol - 1],
        [1, ncol - 1],
        [2, ncol - 1],
        [3, ncol - 1],
      ]);
    if (row === nrow - 2 && col === 0 && ncol % 4 !== 0)
      corner(chr++, [
        [nrow - 3, 0],
        [nrow - 2, 0],
        [nrow - 1, 0],
        [0, ncol - 4],
        [0, ncol - 3],
        [0, ncol - 2],
        [0, ncol - 1],
        [1, ncol - 1],
      ]);
    if (row === nrow - 2 && col === 0 && ncol % 8 === 4)
      corner(chr++, [
        [nrow - 3, 0],
        [nrow - 2, 0],
        [nrow - 1, 0],
        [0, ncol - 2],
        [0, ncol - 1],
        [1, ncol - 1],
        [2, ncol - 1],
        [3, ncol - 1],
      ]);
    if (row === nrow + 4 && col === 2 && ncol % 8 === 0)
      corner(chr++, [
        [nrow - 1, 0],
        [nrow - 1, ncol - 1],
        [0, ncol - 3],
        [0, ncol - 2],
        [0, ncol - 1],
        [1, ncol - 3],
        [1, ncol - 2],
        [1, ncol - 1],
      ]);
    do {
      if (row < nrow && col >= 0 && a[row * ncol + col] === -3) utah(row, col, chr++);
      row -= 2;
      col += 2;
    } while (row >= 0 && col < ncol);
    row += 1;
    col += 3;
    do {
      if (row >= 0 && col < ncol && a[row * ncol + col] === -3) utah(row, col, chr++);
      row += 2;
      col -= 2;
    } while (row < nrow && col >= 0);
    row += 3;
    col += 1;
  } while (row < nrow || col < ncol);
  // Sizes whose mapping matrix leaves the bottom-right 2 × 2 unused fill it with a fixed pattern.
  for (let i = 0; i < a.length; i++) if (a[i] === -3) a[i] = -1;
  if (a[nrow * ncol - 1] === -1) {
    a[nrow * ncol - 1] = -2;
    a[(nrow - 1) * ncol - 2] = -2;
  }
  return a;
}
const placements = new Map<number, Int32Array>();

export interface DataMatrixModules {
  /** Dark modules, row by row from the top: 1 dark, 0 light; size × size entries. */
  pixs: Uint8Array;
  size: number;
}

/** Encodes ASCII text as the smallest square ECC 200 symbol; null when it is not ASCII or too long. */
export function encodeDataMatrix(text: string): DataMatrixModules | null {
  const data = asciiCodewords(text);
  if (!data) return null;
  const spec = SQUARE_SIZES.find(([side, regions, ecc]) => {
    const mapping = side - 2 * regions;
    return Math.floor((mapping * mapping) / 8) - ecc >= data.length;
  });
  if (!spec) return null;
  const [size, regions, eccCount, blocks] = spec;
  const mapping = size - 2 * regions;
  const capacity = Math.floor((mapping * mapping) / 8) - eccCount;
  // Padding: 129 first, then 129 scrambled by position (ISO/IEC 16022 § 5.2.3).
  for (let first = true; data.length < capacity; first = false) {
    if (first) data.push(129);
    else {
      const r = ((149 * (data.length + 1)) % 253) + 1;
      const pad = 129 + r;
      data.push(pad <= 254 ? pad : pad - 254);
    }
  }
  const codewords = data.slice();
  const perBlock = eccCount / blocks;
  for (let b = 0; b < blocks; b++) {
    const blockData: number[] = [];
    for (let i = b; i < capacity; i += blocks) blockData.push(data[i]);
    reedSolomon(blockData, perBlock).forEach((e, k) => (codewords[capacity + b + k * blocks] = e));
  }
  let place = placements.get(mapping);
  if (!place) placements.set(mapping, (place = placement(mapping, mapping)));
  const region = mapping / regions;
  const pixs = new Uint8Array(size * size);
  for (let r = 0; r < size; r++) {
    const lr = r % (region + 2);
    for (let c = 0; c < size; c++) {
      const lc = c % (region + 2);
      let dark: boolean;
      if (lc === 0 || lr === region + 1) dark = true;
      else if (lr === 0) dark = lc % 2 === 0;
      else if (lc === region + 1) dark = lr % 2 === 1;
      else {
        const dr = Math.floor(r / (region + 2)) * region + lr - 1;
        const dc = Math.floor(c / (region + 2)) * region + lc - 1;
        const p = place[dr * mapping + dc];
        dark = p === -2 || (p >= 0 && ((codewords[p >> 3] >> (7 - (p & 7))) & 1) === 1);
      }
      pixs[r * size + c] = dark ? 1 : 0;
    }
  }
  return { pixs, size };
}
