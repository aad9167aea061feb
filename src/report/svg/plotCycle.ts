/**
 * SVG plot of a drive-cycle result (from a run with `series: true`): two panels sharing the
 * time axis. Upper: vehicle speed (mean of each step) over background bands showing the
 * mode used in each step (`<g class="mode-band" data-mode="…">`, one group per mode present), with
 * steps the drivetrain could not follow marked by ticks (`class="unfollowed"`). Lower: battery
 * power (vehicle auxiliary load included) as a step line with its area to the zero line;
 * discharge above zero, regeneration below. Series longer than {@link MAX_DRAWN_STEPS} steps are
 * reduced for drawing: each bucket of consecutive steps keeps its lowest and highest value, and
 * its band shows the mode that held longest in it.
 */
import { ModelError } from '../../problem.js';
import { MODES, type Mode } from '../../solver/types.js';
import type { CycleResult, CycleSeries } from '../../vehicle/cycleEnergy.js';
import { axesSvg, frameIn, plotArea, STYLE, svgHeader, type Frame } from './frame.js';
import { MODE_STYLE } from './plotTable.js';
import { attrs, fmt, textEl } from './xml.js';

/** Longest series drawn step by step; longer ones are reduced to REDUCED_BUCKETS buckets. */
export const MAX_DRAWN_STEPS = 4000;
const REDUCED_BUCKETS = 2000;

const HEIGHT = 660;
const SPEED_AREA = { x0: STYLE.left, x1: STYLE.width - STYLE.right, y1: STYLE.top, y0: 314 };
const POWER_AREA = { x0: STYLE.left, x1: STYLE.width - STYLE.right, y1: 336, y0: HEIGHT - STYLE.bottom };
const PANEL_FILL = '#ffffff';
const BAND_OPACITY = 0.13;
const LINE = '#111111';
const UNFOLLOWED = '#b03a2e';
const DISCHARGE = '#a0522d';
const REGEN = '#3b7d6e';
const AREA_OPACITY = 0.35;

/**
 * A polyline reduced for drawing: the vertices are split into `buckets` runs of consecutive
 * vertices and each run keeps its lowest and highest vertex, in their original order, so every
 * peak and trough keeps its height. Returned unchanged (as arrays) when there are at most
 * 2·buckets vertices. Non-finite vertices are dropped.
 */
export function reduceMinMax(x: ArrayLike<number>, y: ArrayLike<number>, buckets: number): { x: number[]; y: number[] } {
  const n = x.length;
  const ox: number[] = [];
  const oy: number[] = [];
  const keep = (k: number): void => {
    if (Number.isFinite(x[k]!) && Number.isFinite(y[k]!)) {
      ox.push(x[k]!);
      oy.push(y[k]!);
    }
  };
  if (n <= 2 * buckets) {
    for (let k = 0; k < n; k++) keep(k);
    return { x: ox, y: oy };
  }
  for (let b = 0; b < buckets; b++) {
    const a = Math.floor((b * n) / buckets);
    const e = Math.floor(((b + 1) * n) / buckets);
    let lo = -1;
    let hi = -1;
    for (let k = a; k < e; k++) {
      const v = y[k]!;
      if (!Number.isFinite(v) || !Number.isFinite(x[k]!)) continue;
      if (lo < 0 || v < y[lo]!) lo = k;
      if (hi < 0 || v > y[hi]!) hi = k;
    }
    if (lo < 0) continue;
    if (lo === hi) keep(lo);
    else if (lo < hi) {
      keep(lo);
      keep(hi);
    } else {
      keep(hi);
      keep(lo);
    }
  }
  return { x: ox, y: oy };
}

interface ModeRun {
  /** 0 where no setting existed, else 1 + index in MODES. */
  code: number;
  startS: number;
  endS: number;
}

/** Consecutive steps (or buckets of steps, for long series) of one mode merged into runs. */
function modeRuns(s: CycleSeries, n: number): ModeRun[] {
  const per = n > MAX_DRAWN_STEPS ? Math.ceil(n / REDUCED_BUCKETS) : 1;
  const time = new Float64Array(MODES.length + 1);
  const codeOf = (m: Mode | null): number => (m === null ? 0 : MODES.indexOf(m) + 1);
  const runs: ModeRun[] = [];
  for (let a = 0; a < n; a += per) {
    const e = Math.min(n, a + per);
    let code = codeOf(s.mode[a]!);
    if (e - a > 1) {
      time.fill(0);
      for (let k = a; k < e; k++) time[codeOf(s.mode[k]!)] += s.durationS[k]!;
      for (let c = 0; c < time.length; c++) if (time[c]! > time[code]!) code = c;
    }
    const startS = s.timeS[a]!;
    const endS = s.timeS[e - 1]! + s.durationS[e - 1]!;
    const last = runs[runs.length - 1];
    if (last && last.code === code) last.endS = endS;
    else runs.push({ code, startS, endS });
  }
  return runs;
}

function polyline(f: Frame, x: number[], y: number[]): string {
  let d = '';
  for (let k = 0; k < x.length; k++) d += `${k === 0 ? 'M' : 'L'}${fmt(f.x(x[k]!))},${fmt(f.y(y[k]!))}`;
  return d;
}

function niceFrame(
  xDomain: [number, number],
  yDomain: [number, number],
  id: string,
  area: { x0: number; x1: number; y0: number; y1: number },
): Frame {
  const f = frameIn(xDomain, yDomain, id, area);
  f.y.nice(8);
  return f;
}

function checkSeries(result: CycleResult): CycleSeries {
  const s = result.series;
  if (!s || s.timeS.length === 0) throw new ModelError('invalid-request', 'the cycle plot needs the per-step series', 'series');
  const n = s.timeS.length;
  for (const key of ['durationS', 'speedKph', 'mode', 'batteryW'] as const) {
    if (s[key].length !== n) {
      throw new ModelError('invalid-request', `series.${key} has ${s[key].length} steps but series.timeS has ${n}`, `series.${key}`);
    }
  }
  return s;
}

function one(x: number): string {
  return (Math.round(x * 10) / 10).toFixed(1);
}

export function plotCycle(result: CycleResult, options: { title?: string } = {}): string {
  const s = checkSeries(result);
  const n = s.timeS.length;
  const reduced = n > MAX_DRAWN_STEPS;
  const t0 = s.timeS[0]!;
  const tEnd = s.timeS[n - 1]! + s.durationS[n - 1]!;

  // Speed at step midpoints; power as a step line (constant over each step).
  const midS = new Float64Array(n);
  const stepX = new Float64Array(2 * n);
  const stepKw = new Float64Array(2 * n);
  let vMax = 0;
  let pLo = 0;
  let pHi = 0;
  for (let k = 0; k < n; k++) {
    const t = s.timeS[k]!;
    const d = s.durationS[k]!;
    midS[k] = t + d / 2;
    const kw = s.batteryW[k]! / 1000;
    stepX[2 * k] = t;
    stepX[2 * k + 1] = t + d;
    stepKw[2 * k] = kw;
    stepKw[2 * k + 1] = kw;
    const v = s.speedKph[k]!;
    if (v > vMax) vMax = v;
    if (kw < pLo) pLo = kw;
    if (kw > pHi) pHi = kw;
  }
  const speed = reduceMinMax(midS, s.speedKph, reduced ? REDUCED_BUCKETS : n);
  const power = reduceMinMax(stepX, stepKw, reduced ? REDUCED_BUCKETS : 2 * n);

  const fa = niceFrame([t0, tEnd], [0, Math.max(1, vMax * 1.08)], 'cycle-speed', SPEED_AREA);
  const pPad = 0.04 * (pHi - pLo || 1);
  const fb = niceFrame([t0, tEnd], [pLo < 0 ? pLo - pPad : 0, pHi + pPad], 'cycle-power', POWER_AREA);

  const title = options.title ?? `Drive cycle: ${result.cycle} on ${result.drivetrain}`;
  const description =
    `Vehicle speed (mean of each step) over bands showing the mode used in each step, with steps not followed marked; ` +
    `battery power over time, discharge positive and regeneration below zero. ${n} steps` +
    (reduced ? `, drawn reduced to the lowest and highest value of each of ${REDUCED_BUCKETS} buckets.` : '.');
  const parts: string[] = [
    svgHeader(title, description, HEIGHT) +
      plotArea(fa, PANEL_FILL) +
      plotArea(fb, PANEL_FILL) +
      textEl({ x: STYLE.left, y: 24, 'font-size': 15, fill: STYLE.ink }, title),
  ];

  // Upper panel: mode bands, one group per mode present, steps without a setting apart.
  const runs = modeRuns(s, n);
  const present = MODES.filter((m) => s.mode.includes(m));
  const hasNoSetting = s.mode.includes(null);
  const bandH = fa.y0 - fa.y1;
  parts.push(`<g class="mode-bands" clip-path="url(#${fa.id}-clip)">`);
  if (hasNoSetting) {
    parts.push(`<g${attrs({ class: 'no-setting', fill: STYLE.noData })}>`);
    for (const r of runs) {
      if (r.code === 0) parts.push(`<rect${attrs({ x: fa.x(r.startS), y: fa.y1, width: fa.x(r.endS) - fa.x(r.startS), height: bandH })}/>`);
    }
    parts.push('</g>');
  }
  for (const mode of present) {
    const code = MODES.indexOf(mode) + 1;
    const st = MODE_STYLE[mode];
    parts.push(`<g${attrs({ class: 'mode-band', 'data-mode': mode })}>`);
    let strip = '';
    for (const r of runs) {
      if (r.code !== code) continue;
      const x0 = fa.x(r.startS);
      const x1 = fa.x(r.endS);
      parts.push(`<rect${attrs({ x: x0, y: fa.y1, width: x1 - x0, height: bandH, fill: st.stroke, 'fill-opacity': BAND_OPACITY })}/>`);
      strip += `M${fmt(x0)},${fmt(fa.y1 + 2)}H${fmt(x1)}`;
    }
    if (strip) parts.push(`<path${attrs({ d: strip, fill: 'none', stroke: st.stroke, 'stroke-width': 3, 'stroke-dasharray': st.dash })}/>`);
    parts.push('</g>');
  }
  parts.push('</g>');
  parts.push(axesSvg(fa, 'Time (s)', 'Speed (km/h)', { xTickLabels: false }));
  parts.push(
    `<g clip-path="url(#${fa.id}-clip)"><path${attrs({ class: 'speed', d: polyline(fa, speed.x, speed.y), fill: 'none', stroke: LINE, 'stroke-width': reduced ? 1 : 1.6, 'stroke-linejoin': 'round' })}/></g>`,
  );

  // Steps not followed: one tick per occupied pixel column, below the mode strip.
  const cols = new Set<number>();
  for (const u of result.unfollowed) {
    const px = Math.round(fa.x(u.timeS + u.durationS / 2) * 2) / 2;
    if (px >= fa.x0 && px <= fa.x1) cols.add(px);
  }
  if (result.unfollowed.length > 0) {
    let d = '';
    for (const px of [...cols].sort((a, b) => a - b)) d += `M${fmt(px)},${fmt(fa.y1 + 7)}v10`;
    parts.push(
      `<path${attrs({ class: 'unfollowed', 'data-steps': String(result.unfollowed.length), d, fill: 'none', stroke: UNFOLLOWED, 'stroke-width': 1.4 })}/>`,
    );
  }

  // Lower panel: battery power, area split at zero.
  const zeroY = fb.y(0);
  const defs =
    `<defs><clipPath${attrs({ id: `${fb.id}-pos` })}><rect${attrs({ x: fb.x0, y: fb.y1, width: fb.x1 - fb.x0, height: zeroY - fb.y1 })}/></clipPath>` +
    `<clipPath${attrs({ id: `${fb.id}-neg` })}><rect${attrs({ x: fb.x0, y: zeroY, width: fb.x1 - fb.x0, height: fb.y0 - zeroY })}/></clipPath></defs>`;
  parts.push(defs);
  parts.push(axesSvg(fb, 'Time (s)', 'Battery power (kW)'));
  const line = polyline(fb, power.x, power.y);
  if (power.x.length > 0) {
    const area = `M${fmt(fb.x(power.x[0]!))},${fmt(zeroY)}L${line.slice(1)}L${fmt(fb.x(power.x[power.x.length - 1]!))},${fmt(zeroY)}Z`;
    parts.push(
      `<g clip-path="url(#${fb.id}-pos)"><path${attrs({ class: 'discharge', d: area, fill: DISCHARGE, 'fill-opacity': AREA_OPACITY, stroke: 'none' })}/></g>`,
    );
    parts.push(
      `<g clip-path="url(#${fb.id}-neg)"><path${attrs({ class: 'regeneration', d: area, fill: REGEN, 'fill-opacity': AREA_OPACITY, stroke: 'none' })}/></g>`,
    );
  }
  parts.push(
    `<g clip-path="url(#${fb.id}-clip)">` +
      `<line${attrs({ class: 'zero', x1: fb.x0, x2: fb.x1, y1: zeroY, y2: zeroY, stroke: STYLE.ink, 'stroke-width': 1 })}/>` +
      `<path${attrs({ class: 'battery-power', d: line, fill: 'none', stroke: LINE, 'stroke-width': reduced ? 0.8 : 1.2, 'stroke-linejoin': 'round' })}/></g>`,
  );

  parts.push(speedLegend(fa, present, hasNoSetting, result.unfollowed.length));
  parts.push(powerLegend(fb, result));
  parts.push('</svg>\n');
  return parts.join('\n');
}

function speedLegend(f: Frame, present: Mode[], hasNoSetting: boolean, unfollowed: number): string {
  const x = f.x1 + 22;
  let y = f.y1 + 4;
  const parts = ['<g class="legend">', textEl({ x, y: y + 8, fill: STYLE.ink, 'font-weight': 'bold' }, 'Modes')];
  y += 18;
  for (const mode of present) {
    const st = MODE_STYLE[mode];
    parts.push(`<rect${attrs({ x, y, width: 22, height: 12, fill: st.stroke, 'fill-opacity': BAND_OPACITY })}/>`);
    parts.push(`<line${attrs({ x1: x, x2: x + 22, y1: y + 1.5, y2: y + 1.5, stroke: st.stroke, 'stroke-width': 3, 'stroke-dasharray': st.dash })}/>`);
    parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, mode));
    y += 16;
  }
  if (hasNoSetting) {
    parts.push(`<rect${attrs({ x, y, width: 22, height: 12, fill: STYLE.noData, stroke: STYLE.ink, 'stroke-width': 0.4 })}/>`);
    parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, 'no setting'));
    y += 16;
  }
  y += 8;
  parts.push(`<line${attrs({ x1: x, x2: x + 22, y1: y + 6, y2: y + 6, stroke: LINE, 'stroke-width': 1.6 })}/>`);
  parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, 'speed (step mean)'));
  y += 16;
  if (unfollowed > 0) {
    parts.push(`<line${attrs({ x1: x + 11, x2: x + 11, y1: y + 1, y2: y + 11, stroke: UNFOLLOWED, 'stroke-width': 1.4 })}/>`);
    parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, `not followed (${unfollowed})`));
  }
  parts.push('</g>');
  return parts.join('\n');
}

function powerLegend(f: Frame, r: CycleResult): string {
  const x = f.x1 + 22;
  let y = f.y1 + 4;
  const parts = ['<g class="legend">', textEl({ x, y: y + 8, fill: STYLE.ink, 'font-weight': 'bold' }, 'Battery')];
  y += 18;
  parts.push(`<rect${attrs({ x, y, width: 22, height: 12, fill: DISCHARGE, 'fill-opacity': AREA_OPACITY })}/>`);
  parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, 'discharge'));
  y += 16;
  parts.push(`<rect${attrs({ x, y, width: 22, height: 12, fill: REGEN, 'fill-opacity': AREA_OPACITY })}/>`);
  parts.push(textEl({ x: x + 28, y: y + 10, fill: STYLE.ink }, 'regeneration'));
  y += 24;
  const lines = [`net ${one(r.batteryWh)} Wh`, `regenerated ${one(r.regeneratedWh)} Wh`];
  lines.push(`over ${(Math.round(r.distanceKm * 100) / 100).toFixed(2)} km`);
  if (r.whPerKm !== null) lines.push(`${one(r.whPerKm)} Wh/km`);
  for (const line of lines) {
    parts.push(textEl({ x, y: y + 10, fill: STYLE.ink }, line));
    y += 16;
  }
  parts.push('</g>');
  return parts.join('\n');
}
