import { buttonClass } from '#src/components/ui/button';

function download(href: string, name: string) {
  const a = document.createElement('a');
  a.href = href;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
}

function svgText(svg: SVGSVGElement): string {
  const copy = svg.cloneNode(true) as SVGSVGElement;
  copy.setAttribute('xmlns', 'http://www.w3.org/2000/svg');
  return new XMLSerializer().serializeToString(copy);
}

/** Rasterises an SVG at twice its drawn size and hands back a PNG data URL. */
async function svgToPng(svg: SVGSVGElement): Promise<string> {
  const box = svg.viewBox.baseVal;
  const scale = 2;
  const img = new Image();
  img.src = `data:image/svg+xml;charset=utf-8,${encodeURIComponent(svgText(svg))}`;
  await img.decode();
  const canvas = document.createElement('canvas');
  canvas.width = box.width * scale;
  canvas.height = box.height * scale;
  const ctx = canvas.getContext('2d')!;
  ctx.drawImage(img, 0, 0, canvas.width, canvas.height);
  return canvas.toDataURL('image/png');
}

/** Download buttons for an SVG figure on the page (by element id): as SVG and as PNG. */
export function SvgExport({ targetId, name }: { targetId: string; name: string }) {
  const svg = () => document.getElementById(targetId) as SVGSVGElement | null;
  return (
    <div className="flex flex-wrap gap-2">
      <button
        type="button"
        className={buttonClass('quiet', 'md')}
        onClick={() => {
          const s = svg();
          if (s)
            download(URL.createObjectURL(new Blob([svgText(s)], { type: 'image/svg+xml' })), `${name}.svg`);
        }}
      >
        Save as SVG
      </button>
      <button
        type="button"
        className={buttonClass('quiet', 'md')}
        onClick={() => {
          const s = svg();
          if (s) void svgToPng(s).then((url) => download(url, `${name}.png`));
        }}
      >
        Save as PNG
      </button>
    </div>
  );
}

export type SeriesForSvg = {
  title: string;
  unit: string;
  values: number[];
  center: number[];
  ucl: number[];
  lcl: number[];
  flagged: boolean[];
};

/** A control chart as a stand-alone SVG document (the on-screen chart is a canvas). */
export function controlChartSvg(s: SeriesForSvg): string {
  const W = 1000;
  const H = 360;
  const P = { l: 60, r: 16, t: 36, b: 36 };
  const all = [...s.values, ...s.ucl, ...s.lcl].filter(Number.isFinite);
  const lo = Math.min(...all);
  const hi = Math.max(...all);
  const span = hi - lo || 1;
  const sx = (i: number) => P.l + (i / Math.max(1, s.values.length - 1)) * (W - P.l - P.r);
  const sy = (v: number) => H - P.b - ((v - lo + span * 0.05) / (span * 1.1)) * (H - P.t - P.b);
  const line = (ys: number[], color: string, dash = '') =>
    `<polyline fill="none" stroke="${color}" stroke-width="1.2" ${dash ? `stroke-dasharray="${dash}"` : ''} points="${ys
      .map((y, i) => `${sx(i).toFixed(1)},${sy(y).toFixed(1)}`)
      .join(' ')}"/>`;
  const marks = s.values
    .map((v, i) =>
      s.flagged[i]
        ? `<circle cx="${sx(i).toFixed(1)}" cy="${sy(v).toFixed(1)}" r="3.5" fill="#e0604c"/>`
        : '',
    )
    .join('');
  const esc = (t: string) => t.replace(/&/g, '&amp;').replace(/</g, '&lt;');
  return `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" font-family="Barlow, sans-serif">
<rect width="${W}" height="${H}" fill="#ffffff"/>
<text x="${P.l}" y="22" font-size="15" fill="#161c21">${esc(s.title)} (${esc(s.unit)})</text>
<text x="8" y="${sy(hi)}" font-size="12" fill="#46535d">${hi.toFixed(2)}</text>
<text x="8" y="${sy(lo)}" font-size="12" fill="#46535d">${lo.toFixed(2)}</text>
${line(s.ucl, '#c0392b', '6 4')}${line(s.lcl, '#c0392b', '6 4')}${line(s.center, '#2e7d4f')}${line(s.values, '#1f6fa3')}${marks}
</svg>`;
}

/**
 * Download buttons for a control chart: the canvas as PNG, and an SVG drawn from the same figures. `series`
 * is asked for on the click only: with 10,000 points, building it on every render cost the page for nothing.
 */
export function CanvasChartExport({
  hostId,
  name,
  series,
}: {
  hostId: string;
  name: string;
  series: () => SeriesForSvg;
}) {
  return (
    <div className="flex flex-wrap gap-2">
      <button
        type="button"
        className={buttonClass('quiet', 'md')}
        onClick={() => {
          const canvas = document.querySelector<HTMLCanvasElement>(`#${hostId} canvas`);
          if (canvas) download(canvas.toDataURL('image/png'), `${name}.png`);
        }}
      >
        Save as PNG
      </button>
      <button
        type="button"
        className={buttonClass('quiet', 'md')}
        onClick={() =>
          download(
            URL.createObjectURL(new Blob([controlChartSvg(series())], { type: 'image/svg+xml' })),
            `${name}.svg`,
          )
        }
      >
        Save as SVG
      </button>
    </div>
  );
}
