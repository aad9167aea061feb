import { describe, expect, it } from 'vitest';
import { MAX_DRAWN_STEPS, plotCycle, reduceMinMax } from '../src/report/svg/plotCycle.js';
import { runCycle } from '../src/vehicle/cycleEnergy.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { validateCycleTrace } from '../src/vehicle/schema.js';
import { testDrivetrain, testVehicle } from './support/syntheticDrivetrain.js';
import { parseXml } from './support/xmlCheck.js';
import { catchModelError } from './support/modelError.js';

/** Numbers as d3 prints tick labels: U+2212 minus, comma thousands separators. */
function tickNumber(s: string): number {
  return Number(s.replace('\u2212', '-').replace(/,/g, ''));
}

/** The axes groups of the plot in document order (speed panel, then power panel). */
function axesGroups(svg: string): string[] {
  return svg.split('<g class="axes">').slice(1).map((g) => g.slice(0, g.indexOf('</g>')));
}

/** Linear map from SVG units to data, read off the first and last labelled tick of an axis. */
function mapFromTicks(ticks: Array<[number, number]>): (px: number) => number {
  expect(ticks.length).toBeGreaterThanOrEqual(3);
  const [p1, v1] = ticks[0]!;
  const [p2, v2] = ticks[ticks.length - 1]!;
  return (px) => v1 + ((px - p1) * (v2 - v1)) / (p2 - p1);
}

function yAxis(group: string): (py: number) => number {
  const ticks = [...group.matchAll(/<text x="[-\d.]+" y="([-\d.]+)" text-anchor="end"[^>]*>([^<]+)<\/text>/g)];
  return mapFromTicks(ticks.map((m) => [Number(m[1]) - 4, tickNumber(m[2]!)]));
}

function xAxis(group: string): { toS: (px: number) => number; sPerPx: number } {
  const ticks = [...group.matchAll(/<text x="([-\d.]+)" y="[-\d.]+" text-anchor="middle"[^>]*>([^<]+)<\/text>/g)]
    .map((m): [number, number] => [Number(m[1]), tickNumber(m[2]!)])
    .filter((t) => Number.isFinite(t[1]));
  const toS = mapFromTicks(ticks);
  return { toS, sPerPx: toS(1) - toS(0) };
}

/** Vertices of an `M…L…` path. */
function vertices(d: string): Array<[number, number]> {
  return [...d.matchAll(/[ML](-?[\d.]+),(-?[\d.]+)/g)].map((m) => [Number(m[1]), Number(m[2])]);
}

function pathD(svg: string, cls: string): string {
  const m = new RegExp(`<path class="${cls}"[^>]* d="([^"]*)"`).exec(svg);
  expect(m, cls).not.toBeNull();
  return m![1]!;
}

/** Rect widths of each mode-band group, keyed by mode. */
function bandWidths(svg: string): Map<string, number[]> {
  const out = new Map<string, number[]>();
  for (const m of svg.matchAll(/<g class="mode-band" data-mode="([^"]+)">([\s\S]*?)<\/g>/g)) {
    out.set(m[1]!, [...m[2]!.matchAll(/<rect [^>]*width="([\d.]+)"/g)].map((w) => Number(w[1])));
  }
  return out;
}


const dt = testDrivetrain();

describe('cycle plot of a real run', () => {
  const r = runCycle(dt, testVehicle({ auxiliaryW: 300 }), getBuiltinCycle('demo-delivery'), { series: true });
  const svg = plotCycle(r);
  const els = parseXml(svg);
  const [speedAxes, powerAxes] = axesGroups(svg);
  const x = xAxis(powerAxes!);

  it('is well-formed SVG with labelled axes in their units and no external resources', () => {
    expect(els[0]!.name).toBe('svg');
    expect(els[0]!.attrs.get('xmlns')).toBe('http://www.w3.org/2000/svg');
    expect(svg).toContain('Time (s)');
    expect(svg).toContain('Speed (km/h)');
    expect(svg).toContain('Battery power (kW)');
    expect(/https?:\/\/(?!www\.w3\.org\/2000\/svg)/.test(svg)).toBe(false);
    expect(svg).not.toMatch(/@import|<image|xlink:href|@font-face/);
    expect(svg).toContain('Drive cycle: demo-delivery on lossy-test');
  });

  it('draws one mode-band group per mode used, as wide as the time spent in it, and names each in the legend', () => {
    const used = [...new Set(r.series!.mode.filter((m) => m !== null))];
    expect(used.length).toBeGreaterThanOrEqual(2);
    const bands = bandWidths(svg);
    const groups = els.filter((e) => e.name === 'g' && e.attrs.get('class') === 'mode-band').map((e) => e.attrs.get('data-mode'));
    expect(groups.length).toBe(used.length);
    expect([...bands.keys()].sort()).toEqual([...used].sort());
    expect([...bands.keys()].sort()).toEqual(r.modes.map((m) => m.mode).sort());
    for (const use of r.modes) {
      const widths = bands.get(use.mode)!;
      const drawnS = widths.reduce((s, w) => s + w, 0) * x.sPerPx;
      // Each rect width is rounded to 0.01 SVG units.
      expect(Math.abs(drawnS - use.timeS)).toBeLessThanOrEqual(0.006 * widths.length * x.sPerPx + 1e-9);
      expect(svg).toMatch(new RegExp(`<g class="legend">[\\s\\S]*>${use.mode}</text>`));
    }
    expect(els.some((e) => e.attrs.get('class') === 'unfollowed')).toBe(false);
  });

  it('draws the top speed of the trace where the speed axis says 70 km/h', () => {
    // demo-delivery definition (src/vehicle/cycles.ts, an invented scenario): the ring road is
    // driven at 70 km/h, the highest speed of the cycle; step means there are 70 km/h exactly.
    const toKph = yAxis(speedAxes!);
    const top = Math.min(...vertices(pathD(svg, 'speed')).map((p) => p[1]));
    expect(toKph(top)).toBeCloseTo(70, 1);
  });

  it('draws battery power whose area integrates to the reported battery and regenerated energy', () => {
    // Energy is the time integral of power, E = ∫P dt (definition); the plot draws P as constant
    // over each step, so the trapezoid rule over its vertices is exact up to coordinate rounding.
    const toKw = yAxis(powerAxes!);
    const pts = vertices(pathD(svg, 'battery-power')).map(([px, py]): [number, number] => [x.toS(px), toKw(py)]);
    let kJ = 0;
    let regenKJ = 0;
    for (let k = 1; k < pts.length; k++) {
      const [t0, p0] = pts[k - 1]!;
      const [t1, p1] = pts[k]!;
      kJ += ((p0 + p1) / 2) * (t1 - t0);
      if (p0 < 0 && p1 < 0) regenKJ -= ((p0 + p1) / 2) * (t1 - t0);
    }
    expect(r.regeneratedWh).toBeGreaterThan(10);
    expect(Math.abs(kJ / 3.6 - r.batteryWh)).toBeLessThan(0.005 * r.batteryWh);
    expect(Math.abs(regenKJ / 3.6 - r.regeneratedWh)).toBeLessThan(0.005 * r.regeneratedWh);
    // Regeneration lies below the zero line, inside the regeneration area.
    const zero = els.find((e) => e.attrs.get('class') === 'zero')!;
    const zeroY = Number(zero.attrs.get('y1'));
    expect(toKw(zeroY)).toBeCloseTo(0, 6);
    expect(pts.some((p) => p[1] < -1)).toBe(true);
    expect(pathD(svg, 'regeneration')).toMatch(/^M.*Z$/);
  });

  it('escapes caller text', () => {
    const titled = plotCycle(r, { title: 'Van <A> & "B" \'C\'' });
    parseXml(titled);
    expect(titled).toContain('Van &lt;A&gt; &amp; &quot;B&quot; &apos;C&apos;');
  });
});

describe('cycle plot with steps the drivetrain cannot follow', () => {
  // 1 Hz trace: 0 → 120 km/h in 30 s, 20 s at 120 km/h, 120 → 0 km/h in 30 s, ring held only.
  const timeS: number[] = [];
  const speedKph: number[] = [];
  for (let t = 0; t <= 80; t++) {
    timeS.push(t);
    speedKph.push(t <= 30 ? 4 * t : t <= 50 ? 120 : 4 * (80 - t));
  }
  const r = runCycle(dt, testVehicle(), validateCycleTrace({ name: 'fast', timeS, speedKph }), { series: true, modes: ['ring-held'] });
  const svg = plotCycle(r);
  const els = parseXml(svg);

  it('marks every step beyond the ring-held speed limit and leaves it without a mode band', () => {
    // Hand calculation (Willis equation, ring held): sun speed = (1 + Zr/Zs)·i_fd·ω_wheel
    // = (1 + 78/30) × 4 × ω_wheel = 14.4·ω_wheel; the 12 000 rpm sun limit allows 833.3 rpm at the
    // wheel, 833.3 × 2π/60 × 0.3 m = 26.18 m/s = 94.25 km/h. Step means beyond it: 98, 102, …, 118
    // on each ramp (6 + 6 steps) and the 20 steps at 120 km/h: 32 steps.
    expect(r.unfollowed.length).toBe(32);
    expect(r.unfollowed.every((u) => u.reason === 'above-max-speed')).toBe(true);
    const ticks = els.filter((e) => e.attrs.get('class') === 'unfollowed');
    expect(ticks.length).toBe(1);
    expect(ticks[0]!.attrs.get('data-steps')).toBe('32');
    const x = xAxis(axesGroups(svg)[1]!);
    const tickS = vertices(ticks[0]!.attrs.get('d')!).map((p) => x.toS(p[0]));
    const expected = r.unfollowed.map((u) => u.timeS + u.durationS / 2);
    expect(tickS.length).toBe(expected.length);
    tickS.forEach((t, k) => expect(t).toBeCloseTo(expected[k]!, 0));
    expect([...bandWidths(svg).keys()]).toEqual(['ring-held']);
    expect(els.filter((e) => e.name === 'g' && e.attrs.get('class') === 'no-setting').length).toBe(1);
    expect(svg).toMatch(/>not followed \(32\)<\/text>/);
    expect(svg).toMatch(/>no setting<\/text>/);
  });
});

describe('cycle plot of a long series', () => {
  // NEDC (UNECE R83 speed table in src/vehicle/cycles.ts) driven four times in a row at 1 Hz.
  const nedc = getBuiltinCycle('nedc');
  const m = nedc.timeS.length - 1;
  const timeS = Array.from({ length: 4 * m + 1 }, (_, i) => i);
  const speedKph = timeS.map((t) => nedc.speedKph[t % m]!);
  const r = runCycle(dt, testVehicle(), validateCycleTrace({ name: 'nedc-x4', timeS, speedKph }), { series: true });
  const svg = plotCycle(r);

  it('reduces the drawing but keeps the peaks', () => {
    expect(r.steps).toBeGreaterThan(MAX_DRAWN_STEPS);
    parseXml(svg);
    const power = vertices(pathD(svg, 'battery-power'));
    const speed = vertices(pathD(svg, 'speed'));
    expect(power.length).toBeLessThanOrEqual(2 * 2000);
    expect(speed.length).toBeLessThanOrEqual(2 * 2000);
    const [speedAxes, powerAxes] = axesGroups(svg);
    const toKw = yAxis(powerAxes!);
    const kw = r.series!.batteryW.map((w) => w / 1000);
    // Drawn extremes equal the series extremes to within the 0.01-unit coordinate rounding.
    expect(toKw(Math.min(...power.map((p) => p[1])))).toBeCloseTo(Math.max(...kw), 1);
    expect(toKw(Math.max(...power.map((p) => p[1])))).toBeCloseTo(Math.min(...kw), 1);
    // NEDC extra-urban part peaks at 120 km/h (UNECE R83, Annex 4, Appendix 1, Table 2).
    expect(yAxis(speedAxes!)(Math.min(...speed.map((p) => p[1])))).toBeCloseTo(120, 1);
    expect([...bandWidths(svg).keys()].sort()).toEqual(r.modes.map((u) => u.mode).sort());
  });

  it('keeps the lowest and highest value of every bucket, in order (brute-force reference)', () => {
    let seed = 12345;
    const rand = (): number => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    const n = 10_007;
    const xs = Array.from({ length: n }, (_, i) => i);
    const ys = xs.map(() => rand() * 200 - 100);
    const buckets = 97;
    const out = reduceMinMax(xs, ys, buckets);
    expect(out.x.length).toBeLessThanOrEqual(2 * buckets);
    for (let k = 1; k < out.x.length; k++) expect(out.x[k]!).toBeGreaterThan(out.x[k - 1]!);
    for (let b = 0; b < buckets; b++) {
      const a = Math.floor((b * n) / buckets);
      const e = Math.floor(((b + 1) * n) / buckets);
      const slice = ys.slice(a, e);
      const kept = out.x.filter((xv) => xv >= a && xv < e).map((xv) => ys[xv]!);
      expect(kept).toContain(Math.min(...slice));
      expect(kept).toContain(Math.max(...slice));
    }
    const short = reduceMinMax([0, 1, 2], [5, Number.NaN, 7], 2);
    expect(short).toEqual({ x: [0, 2], y: [5, 7] });
  });
});

describe('cycle plot request', () => {
  it('refuses a result run without the per-step series', () => {
    const r = runCycle(dt, testVehicle(), getBuiltinCycle('demo-delivery'));
    const e = catchModelError(() => plotCycle(r));
    expect(e.code).toBe('invalid-request');
    expect(e.path).toBe('series');
    expect(e.message).toBe('the cycle plot needs the per-step series');
  });
});
