/**
 * Plot frame shared by the SVG plots: size and margins, linear scales (d3-scale), axes with
 * ticks and unit labels, a clip path for the plotting area, and the colour ramp.
 */
import { scaleLinear, type ScaleLinear } from 'd3-scale';
import { interpolateCividis } from 'd3-scale-chromatic';
import { attrs, escapeXml, fmt, textEl } from './xml.js';

export const STYLE = {
  width: 780,
  height: 520,
  left: 72,
  right: 190,
  top: 44,
  bottom: 56,
  background: '#fbfaf7',
  ink: '#2b2b2b',
  grid: '#e4e1da',
  noData: '#eeebe4',
  font: 'sans-serif',
} as const;

export interface Frame {
  x: ScaleLinear<number, number>;
  y: ScaleLinear<number, number>;
  /** Plotting area in SVG units. */
  x0: number;
  x1: number;
  y0: number;
  y1: number;
  /** Prefix for element ids, unique per plot kind. */
  id: string;
}

export function makeFrame(xDomain: [number, number], yDomain: [number, number], id: string): Frame {
  return frameIn(xDomain, yDomain, id, { x0: STYLE.left, x1: STYLE.width - STYLE.right, y0: STYLE.height - STYLE.bottom, y1: STYLE.top });
}

/**
 * A frame over a given plotting area (SVG units; y0 is the bottom edge, y1 the top), for plots
 * with several panels. A domain of zero width is widened by ±1.
 */
export function frameIn(
  xDomain: [number, number],
  yDomain: [number, number],
  id: string,
  area: { x0: number; x1: number; y0: number; y1: number },
): Frame {
  const { x0, x1, y0, y1 } = area;
  const widen = (d: [number, number]): [number, number] => (d[1] > d[0] ? d : [d[0] - 1, d[0] + 1]);
  return {
    x: scaleLinear().domain(widen(xDomain)).range([x0, x1]),
    y: scaleLinear().domain(widen(yDomain)).range([y0, y1]),
    x0,
    x1,
    y0,
    y1,
    id,
  };
}

/** XML declaration, opening tag, title, description and background of a plot `height` units tall. */
export function svgHeader(title: string, description: string, height: number = STYLE.height): string {
  return (
    `<?xml version="1.0" encoding="UTF-8"?>\n` +
    `<svg xmlns="http://www.w3.org/2000/svg"${attrs({
      width: STYLE.width,
      height,
      viewBox: `0 0 ${STYLE.width} ${height}`,
      'font-family': STYLE.font,
      'font-size': 12,
    })}>\n` +
    `<title>${escapeXml(title)}</title>\n<desc>${escapeXml(description)}</desc>\n` +
    `<rect${attrs({ x: 0, y: 0, width: STYLE.width, height, fill: STYLE.background })}/>\n`
  );
}

/** Clip path (id `<frame id>-clip`) and filled background of a frame's plotting area. */
export function plotArea(f: Frame, fill: string = STYLE.noData): string {
  return (
    `<defs><clipPath${attrs({ id: `${f.id}-clip` })}><rect${attrs({ x: f.x0, y: f.y1, width: f.x1 - f.x0, height: f.y0 - f.y1 })}/></clipPath></defs>\n` +
    `<rect${attrs({ x: f.x0, y: f.y1, width: f.x1 - f.x0, height: f.y0 - f.y1, fill })}/>\n`
  );
}

/** Opening tag, background, title and the clip path of the plotting area. */
export function openSvg(f: Frame, title: string, description: string): string {
  return svgHeader(title, description) + plotArea(f) + textEl({ x: f.x0, y: 24, 'font-size': 15, fill: STYLE.ink }, title) + '\n';
}

/**
 * Axes with ticks, light grid lines over the data and unit labels. With `xTickLabels: false` the
 * x axis keeps its ticks but has no numbers and no label (an upper panel sharing the x axis).
 */
export function axesSvg(f: Frame, xLabel: string, yLabel: string, options: { xTickLabels?: boolean } = {}): string {
  const xText = options.xTickLabels ?? true;
  const parts: string[] = ['<g class="axes">'];
  const xt = f.x.ticks(8);
  const yt = f.y.ticks(8);
  const xf = f.x.tickFormat(8);
  const yf = f.y.tickFormat(8);
  for (const v of xt) {
    const px = f.x(v);
    parts.push(`<line${attrs({ x1: px, x2: px, y1: f.y1, y2: f.y0, stroke: STYLE.grid, 'stroke-width': 0.6, 'stroke-opacity': 0.7 })}/>`);
    parts.push(`<line${attrs({ x1: px, x2: px, y1: f.y0, y2: f.y0 + 5, stroke: STYLE.ink })}/>`);
    if (xText) parts.push(textEl({ x: px, y: f.y0 + 18, 'text-anchor': 'middle', fill: STYLE.ink }, xf(v)));
  }
  for (const v of yt) {
    const py = f.y(v);
    parts.push(`<line${attrs({ x1: f.x0, x2: f.x1, y1: py, y2: py, stroke: STYLE.grid, 'stroke-width': 0.6, 'stroke-opacity': 0.7 })}/>`);
    parts.push(`<line${attrs({ x1: f.x0 - 5, x2: f.x0, y1: py, y2: py, stroke: STYLE.ink })}/>`);
    parts.push(textEl({ x: f.x0 - 8, y: py + 4, 'text-anchor': 'end', fill: STYLE.ink }, yf(v)));
  }
  parts.push(
    `<rect${attrs({ x: f.x0, y: f.y1, width: f.x1 - f.x0, height: f.y0 - f.y1, fill: 'none', stroke: STYLE.ink, 'stroke-width': 1 })}/>`,
  );
  if (xText) parts.push(textEl({ x: (f.x0 + f.x1) / 2, y: f.y0 + 40, 'text-anchor': 'middle', fill: STYLE.ink }, xLabel));
  const cy = (f.y0 + f.y1) / 2;
  parts.push(textEl({ x: 18, y: cy, 'text-anchor': 'middle', fill: STYLE.ink, transform: `rotate(-90 18 ${fmt(cy)})` }, yLabel));
  parts.push('</g>');
  return parts.join('\n');
}

/** Efficiency levels to band at; each band runs from one level to the next. */
const LEVELS = [
  0, 0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.65, 0.7, 0.75, 0.8, 0.83, 0.86, 0.88, 0.9, 0.91, 0.92, 0.93, 0.94, 0.95, 0.96, 0.97,
  0.98, 0.99,
];

/** Band thresholds covering [lo, hi]: the highest level <= lo, then every level in (lo, hi]. */
export function efficiencyThresholds(lo: number, hi: number): number[] {
  if (!(Number.isFinite(lo) && Number.isFinite(hi))) return [];
  let base = Math.floor(lo * 10) / 10;
  for (const l of LEVELS) if (l <= lo) base = l;
  const out = [base];
  for (const l of LEVELS) if (l > lo && l <= hi && l > base) out.push(l);
  return out;
}

/** Colour of band k of n: the cividis ramp (perceptually uniform, colour-vision friendly), 0.08..0.95. */
export function bandColour(k: number, n: number): string {
  return interpolateCividis(n <= 1 ? 0.6 : 0.08 + (0.87 * k) / (n - 1));
}

/** Legend of efficiency bands at the right of the plot; returns the markup and the next free y. */
export function bandLegend(f: Frame, thresholds: number[], heading: string): { svg: string; y: number } {
  const x = f.x1 + 22;
  let y = f.y1 + 4;
  const parts = ['<g class="legend">', textEl({ x, y: y + 8, fill: STYLE.ink, 'font-weight': 'bold' }, heading)];
  y += 18;
  if (thresholds.length === 0) {
    parts.push(textEl({ x, y: y + 10, fill: STYLE.ink }, 'no values'));
    y += 18;
  }
  for (let k = thresholds.length - 1; k >= 0; k--) {
    const lo = thresholds[k]!;
    const label = k === thresholds.length - 1 ? `≥ ${pct(lo)}` : `${pct(lo)} – ${pct(thresholds[k + 1]!)}`;
    parts.push(`<rect${attrs({ x, y, width: 16, height: 12, fill: bandColour(k, thresholds.length), stroke: STYLE.ink, 'stroke-width': 0.4 })}/>`);
    parts.push(textEl({ x: x + 22, y: y + 10, fill: STYLE.ink }, label));
    y += 15;
  }
  parts.push(`<rect${attrs({ x, y, width: 16, height: 12, fill: STYLE.noData, stroke: STYLE.ink, 'stroke-width': 0.4 })}/>`);
  parts.push(textEl({ x: x + 22, y: y + 10, fill: STYLE.ink }, 'none / undefined'));
  y += 15;
  parts.push('</g>');
  return { svg: parts.join('\n'), y: y + 8 };
}

function pct(x: number): string {
  return `${Math.round(x * 1000) / 10} %`;
}
