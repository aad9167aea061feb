/**
 * SVG plot of a lookup table over wheel speed × wheel torque: system efficiency as filled
 * bands, each mode region outlined (`<path class="mode-region" data-mode="…">`) and labelled,
 * the wheel-torque envelope as `<path id="envelope">`, axes with units and a legend.
 */
import { MODES, type Mode } from '../../solver/types.js';
import { modeCode, modesPresent, type LookupTable } from '../../solver/tableResult.js';
import { contourPath, finiteExtent, toContourGrid } from './contour.js';
import { axesSvg, bandColour, bandLegend, efficiencyThresholds, makeFrame, openSvg, STYLE, type Frame } from './frame.js';
import { attrs, fmt, textEl } from './xml.js';

/** Outline colour and dash pattern of each mode: muted, told apart by dash as well as hue. */
export const MODE_STYLE: Record<Mode, { stroke: string; dash: string | undefined }> = {
  split: { stroke: '#3a3a3a', dash: undefined },
  'ring-held': { stroke: '#8c2d4a', dash: '7 3' },
  'sun-held': { stroke: '#2d5f8c', dash: '2 3' },
  locked: { stroke: '#5a6b2d', dash: '9 3 2 3' },
};

/**
 * Cell of a mode region farthest (city-block distance, grid edges counting as boundary) from
 * any other cell: a label placed there sits inside the region.
 */
export function labelCell(mask: Uint8Array, nx: number, ny: number): number {
  const d = new Int32Array(nx * ny);
  for (let i = 0; i < nx; i++) {
    for (let j = 0; j < ny; j++) {
      const c = i * ny + j;
      if (!mask[c]) {
        d[c] = 0;
        continue;
      }
      const up = i > 0 ? d[c - ny]! : 0;
      const left = j > 0 ? d[c - 1]! : 0;
      d[c] = Math.min(up, left) + 1;
    }
  }
  let best = -1;
  let bestD = 0;
  for (let i = nx - 1; i >= 0; i--) {
    for (let j = ny - 1; j >= 0; j--) {
      const c = i * ny + j;
      if (!mask[c]) continue;
      const down = i < nx - 1 ? d[c + ny]! : 0;
      const right = j < ny - 1 ? d[c + 1]! : 0;
      d[c] = Math.min(d[c]!, down + 1, right + 1);
      if (d[c]! >= bestD) {
        bestD = d[c]!;
        best = c;
      }
    }
  }
  return best;
}

/**
 * Envelope as signed wheel torque: upper line = motoring limit at forward speeds (braking limit
 * in reverse), lower line = −braking limit forward (−motoring limit in reverse).
 */
function envelopePath(t: LookupTable, f: Frame): string {
  const { maxMotoringWheelNm: mot, maxBrakingWheelNm: brk } = t.envelope;
  let d = '';
  for (const side of [1, -1]) {
    let pen = false;
    for (let i = 0; i < t.nSpeed; i++) {
      const fwd = t.speedRpm[i]! >= 0;
      const v = side > 0 ? (fwd ? mot[i]! : brk[i]!) : -(fwd ? brk[i]! : mot[i]!);
      if (!Number.isFinite(v)) {
        pen = false;
        continue;
      }
      d += `${pen ? 'L' : 'M'}${fmt(f.x(t.speedRpm[i]!))},${fmt(f.y(v))}`;
      pen = true;
    }
  }
  return d;
}

export function plotTable(t: LookupTable, options: { title?: string } = {}): string {
  const xs = t.speedRpm;
  const ys = t.torqueNm;
  const f = makeFrame([xs[0]!, xs[xs.length - 1]!], [ys[0]!, ys[ys.length - 1]!], 'table');
  const title = options.title ?? `Lookup table: ${t.drivetrain}`;
  const parts: string[] = [
    openSvg(
      f,
      title,
      `System efficiency of the battery-optimal setting over wheel speed and wheel torque, with mode regions and the wheel-torque envelope. Hash: ${t.hash ?? 'none'}.`,
    ),
  ];

  // Efficiency bands (painter's order: each level covers the ones below it).
  const eff = t.cells.systemEfficiency;
  const [lo, hi] = finiteExtent(eff);
  const levels = efficiencyThresholds(lo, hi);
  const grid = toContourGrid(eff, t.nSpeed, t.nTorque);
  parts.push(`<g class="efficiency" clip-path="url(#${f.id}-clip)">`);
  levels.forEach((level, k) => {
    const d = contourPath(grid, xs, ys, level, f);
    if (d) parts.push(`<path${attrs({ class: 'band', 'data-min': String(level), d, fill: bandColour(k, levels.length), stroke: 'none' })}/>`);
  });
  parts.push('</g>');

  // Mode regions: the 0.5 level of each mode's indicator grid.
  const present = modesPresent(t);
  const n = t.nSpeed * t.nTorque;
  const labels: string[] = [];
  parts.push(`<g class="modes" clip-path="url(#${f.id}-clip)" fill="none">`);
  for (const mode of present) {
    const code = modeCode(mode);
    const mask = new Uint8Array(n);
    for (let k = 0; k < n; k++) mask[k] = t.cells.mode[k] === code ? 1 : 0;
    const d = contourPath(toContourGrid(mask, t.nSpeed, t.nTorque), xs, ys, 0.5, f);
    const st = MODE_STYLE[mode];
    parts.push(`<path${attrs({ d, stroke: '#ffffff', 'stroke-width': 3.2, 'stroke-opacity': 0.75 })}/>`);
    parts.push(
      `<path${attrs({ class: 'mode-region', 'data-mode': mode, d, stroke: st.stroke, 'stroke-width': 1.6, 'stroke-dasharray': st.dash })}/>`,
    );
    const c = labelCell(mask, t.nSpeed, t.nTorque);
    if (c >= 0) {
      const i = Math.floor(c / t.nTorque);
      const j = c - i * t.nTorque;
      labels.push(
        textEl(
          {
            class: 'mode-label',
            'data-mode': mode,
            x: f.x(xs[i]!),
            y: f.y(ys[j]!) + 4,
            'text-anchor': 'middle',
            fill: st.stroke,
            stroke: '#ffffff',
            'stroke-width': 3,
            'paint-order': 'stroke',
            'font-weight': 'bold',
          },
          mode,
        ),
      );
    }
  }
  parts.push('</g>');
  parts.push(`<g class="mode-labels">${labels.join('')}</g>`);

  parts.push(
    `<g clip-path="url(#${f.id}-clip)"><path${attrs({ id: 'envelope', d: envelopePath(t, f), fill: 'none', stroke: '#111111', 'stroke-width': 2.2 })}/></g>`,
  );
  parts.push(axesSvg(f, 'Wheel speed (rpm)', 'Wheel torque (N·m)'));

  const legend = bandLegend(f, levels, 'System efficiency');
  parts.push(legend.svg);
  parts.push(modeLegend(f, legend.y, present));
  parts.push('</svg>\n');
  return parts.join('\n');
}

function modeLegend(f: Frame, y0: number, present: Mode[]): string {
  const x = f.x1 + 22;
  let y = y0;
  const parts = ['<g class="legend">', textEl({ x, y: y + 8, fill: STYLE.ink, 'font-weight': 'bold' }, 'Modes')];
  y += 20;
  for (const mode of MODES) {
    if (!present.includes(mode)) continue;
    const st = MODE_STYLE[mode];
    parts.push(`<line${attrs({ x1: x, x2: x + 22, y1: y, y2: y, stroke: st.stroke, 'stroke-width': 1.6, 'stroke-dasharray': st.dash })}/>`);
    parts.push(textEl({ x: x + 28, y: y + 4, fill: STYLE.ink }, mode));
    y += 16;
  }
  parts.push(`<line${attrs({ x1: x, x2: x + 22, y1: y, y2: y, stroke: '#111111', 'stroke-width': 2.2 })}/>`);
  parts.push(textEl({ x: x + 28, y: y + 4, fill: STYLE.ink }, 'torque envelope'));
  parts.push('</g>');
  return parts.join('\n');
}
