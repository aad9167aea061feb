/**
 * SVG plot of a machine map (machine with inverter) over forward speed × torque: efficiency as
 * filled bands from the interpolated loss (DESIGN.md §2–3), the torque envelope as
 * `<path id="envelope">` (closed at the speed limit), axes with units and a legend.
 * Efficiency below zero (a braking point where the loss exceeds the shaft power) and at zero
 * shaft power (where it is undefined; its limit with standing losses is 0) is drawn as 0.
 */
import { lossAt, maxTorqueAt, minTorqueAt, type MachineMap } from '../../machine/map.js';
import { efficiencyFromLoss, RAD_S_PER_RPM } from '../../units.js';
import { contourPath, finiteExtent, toContourGrid } from './contour.js';
import { axesSvg, bandColour, bandLegend, efficiencyThresholds, makeFrame, openSvg, type Frame } from './frame.js';
import { attrs, fmt } from './xml.js';

/** Samples per axis of the efficiency grid. */
const SAMPLES = 121;

function envelopePath(map: MachineMap, f: Frame): string {
  const wMax = map.maxSpeedRadS;
  const speeds: number[] = [];
  for (let i = 0; i < map.nSpeed; i++) if (map.speedRadS[i]! < wMax) speeds.push(map.speedRadS[i]!);
  speeds.push(wMax);
  const up = speeds.map((w) => `${fmt(f.x(w / RAD_S_PER_RPM))},${fmt(f.y(maxTorqueAt(map, w)))}`);
  const down = speeds.map((w) => `${fmt(f.x(w / RAD_S_PER_RPM))},${fmt(f.y(minTorqueAt(map, w)))}`).reverse();
  return `M${up.join('L')}L${down.join('L')}Z`;
}

export function plotMachine(map: MachineMap, options: { title?: string } = {}): string {
  const maxRpm = map.maxSpeedRadS / RAD_S_PER_RPM;
  let tLo = 0;
  let tHi = 0;
  for (let i = 0; i < map.nSpeed; i++) {
    tLo = Math.min(tLo, map.minTorqueNm[i]!);
    tHi = Math.max(tHi, map.maxTorqueNm[i]!);
  }
  const pad = 0.04 * (tHi - tLo || 1);
  const f = makeFrame([0, maxRpm], [tLo - pad, tHi + pad], 'machine');
  const title = options.title ?? `Machine map: ${map.name}`;
  const parts = [
    openSvg(f, title, 'Efficiency of machine and inverter (DC terminals to shaft) over speed and torque, with the torque envelope.'),
  ];

  const xs = new Float64Array(SAMPLES);
  const ys = new Float64Array(SAMPLES);
  for (let k = 0; k < SAMPLES; k++) {
    xs[k] = (maxRpm * k) / (SAMPLES - 1);
    ys[k] = tLo + ((tHi - tLo) * k) / (SAMPLES - 1);
  }
  const eff = new Float64Array(SAMPLES * SAMPLES);
  for (let i = 0; i < SAMPLES; i++) {
    const w = xs[i]! * RAD_S_PER_RPM;
    for (let j = 0; j < SAMPLES; j++) {
      const tq = ys[j]!;
      const loss = lossAt(map, w, tq);
      if (Number.isNaN(loss)) {
        eff[i * SAMPLES + j] = Number.NaN;
        continue;
      }
      const e = efficiencyFromLoss(tq * w, loss);
      eff[i * SAMPLES + j] = e === null ? 0 : Math.max(0, e);
    }
  }
  const [lo, hi] = finiteExtent(eff);
  const levels = efficiencyThresholds(lo, hi);
  const grid = toContourGrid(eff, SAMPLES, SAMPLES);
  parts.push(`<g class="efficiency" clip-path="url(#${f.id}-clip)">`);
  levels.forEach((level, k) => {
    const d = contourPath(grid, xs, ys, level, f);
    if (d) parts.push(`<path${attrs({ class: 'band', 'data-min': String(level), d, fill: bandColour(k, levels.length), stroke: 'none' })}/>`);
  });
  parts.push('</g>');
  parts.push(
    `<g clip-path="url(#${f.id}-clip)"><path${attrs({ id: 'envelope', d: envelopePath(map, f), fill: 'none', stroke: '#111111', 'stroke-width': 2.2 })}/></g>`,
  );
  parts.push(axesSvg(f, 'Speed (rpm)', 'Torque (N·m)'));
  parts.push(bandLegend(f, levels, 'Efficiency').svg);
  parts.push('</svg>\n');
  return parts.join('\n');
}
