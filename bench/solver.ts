/**
 * Per-point solver benchmark: in-process solves per second over a spread of wheel points, and the
 * speed-up against a dense scan of each mode's free variable (20 000 samples) with the solver's
 * answer at least as good as the scan's. Run: npx tsx bench/solver.ts
 *
 * Run alone it measures the demo drivetrain of maps/ (invented data), as `npm run bench` does.
 */
import { pathToFileURL } from 'node:url';
import { Registry } from '../src/store/registry.js';
import { median } from './stats.js';
import { isFeasible, lossAny, maxTorqueAt, minTorqueAt, speedAllowed } from '../src/machine/map.js';
import { describeDrivetrain, type Drivetrain } from '../src/solver/drivetrain.js';
import { solvePoint } from '../src/solver/point.js';
import { wheelTorqueLimits } from '../src/solver/envelope.js';
import { carrierFromWheelTorque } from '../src/gearset/finalDrive.js';
import { RAD_S_PER_RPM } from '../src/units.js';

export interface SolverBenchFigures {
  points: number;
  runs: number;
  /** Median over runs of solves per second, all modes, feasible and infeasible points mixed. */
  solvesPerSecond: number;
  /** Median solves per second on points that need friction-brake help (braking beyond the limits). */
  frictionSolvesPerSecond: number;
  /** wheelTorqueLimits calls per second (both sides, battery included). */
  limitsPerSecond: number;
  scanPoints: number;
  scanSamples: number;
  scanSolvesPerSecond: number;
  /** solvesPerSecond / scanSolvesPerSecond on the same points. */
  speedup: number;
  /** Share of scanned points where the solver's battery power is <= the scan's (to 1e-9 relative). */
  notWorseShare: number;
  /** Largest amount (W) by which the scan's best exceeded the solver's (the scan's sampling loss). */
  maxScanExcessW: number;
}

const SCAN_SAMPLES = 20_000;

/** Dense scan of every available mode's free variable; the least battery power found (W), or Infinity. */
function scanPoint(dt: Drivetrain, wheelRpm: number, wheelNm: number): number {
  const { sun, ring, k, eta0 } = dt;
  const wW = wheelRpm * RAD_S_PER_RPM;
  const wc = dt.fdRatio * wW;
  const tout = carrierFromWheelTorque(dt.fdRatio, dt.fdEfficiency, wheelNm, wW);
  const fixed = dt.auxW;
  let best = Infinity;
  const take = (p: number) => {
    if (p <= dt.maxDischargeW && p >= -dt.maxChargeW && p < best) best = p;
  };
  // split: sun speed over the allowed range, then the Δ = 0 band in T_s
  const base = (1 + k) * wc;
  const lo = Math.max(sun.reverse ? -sun.maxSpeedRadS : 0, base - k * ring.maxSpeedRadS);
  const hi = Math.min(sun.maxSpeedRadS, base - k * (ring.reverse ? -ring.maxSpeedRadS : 0));
  if (lo <= hi) {
    for (let q = 0; q <= SCAN_SAMPLES; q++) {
      const x = lo + ((hi - lo) * q) / SCAN_SAMPLES;
      const d = x - wc;
      if (d === 0) continue;
      const ts = tout * d > 0 ? tout / (1 + k * eta0) : tout / (1 + k / eta0);
      const tr = tout - ts;
      const wr = (base - x) / k;
      if (!isFeasible(sun, x, ts) || !isFeasible(ring, wr, tr)) continue;
      take(ts * x + tr * wr + lossAny(sun, x, ts) + lossAny(ring, wr, tr) + fixed + dt.deviceW[0]!);
    }
    if (wc >= lo && wc <= hi) {
      const a = tout / (1 + k / eta0);
      const b = tout / (1 + k * eta0);
      for (let q = 0; q <= 2000; q++) {
        const ts = a + ((b - a) * q) / 2000;
        if (!isFeasible(sun, wc, ts) || !isFeasible(ring, wc, tout - ts)) continue;
        take(tout * wc + lossAny(sun, wc, ts) + lossAny(ring, wc, tout - ts) + fixed + dt.deviceW[0]!);
      }
    }
  }
  // held modes: one setting each (standstill rule of DESIGN.md §4)
  for (const ringHeld of [true, false]) {
    if (!dt.modeAvailable[ringHeld ? 1 : 2]) continue;
    const d = ringHeld ? k * wc : -wc;
    const sunDel = wc === 0 ? ringHeld : tout * d > 0;
    const ts = sunDel ? tout / (1 + k * eta0) : tout / (1 + k / eta0);
    const tr = tout - ts;
    if (ringHeld) {
      const ws = (1 + k) * wc;
      if (Math.abs(tr) <= dt.ringBrakeNm && isFeasible(sun, ws, ts)) take(ts * ws + lossAny(sun, ws, ts) + fixed + dt.deviceW[1]!);
    } else {
      const wr = ((1 + k) * wc) / k;
      if (Math.abs(ts) <= dt.sunBrakeNm && isFeasible(ring, wr, tr)) take(tr * wr + lossAny(ring, wr, tr) + fixed + dt.deviceW[2]!);
    }
  }
  // locked: sun torque over its envelope
  if (dt.modeAvailable[3] && speedAllowed(sun, wc) && speedAllowed(ring, wc)) {
    const a = minTorqueAt(sun, wc);
    const b = maxTorqueAt(sun, wc);
    for (let q = 0; q <= SCAN_SAMPLES; q++) {
      const ts = a + ((b - a) * q) / SCAN_SAMPLES;
      const tr = tout - ts;
      if (Math.abs(ts - tout / (1 + k)) > dt.clutchNm || !isFeasible(ring, wc, tr)) continue;
      take(tout * wc + lossAny(sun, wc, ts) + lossAny(ring, wc, tr) + fixed + dt.deviceW[3]!);
    }
  }
  return best;
}


function rate(fn: () => number, runs: number, minMs: number): number {
  const rates: number[] = [];
  for (let r = 0; r < runs; r++) {
    const t0 = performance.now();
    let n = 0;
    while (performance.now() - t0 < minMs) n += fn();
    rates.push((n / (performance.now() - t0)) * 1000);
  }
  return median(rates);
}

/** Measures the solver on `dt` and returns the figures (see {@link SolverBenchFigures}). */
export function runSolverBench(dt: Drivetrain, runs = 7): SolverBenchFigures {
  const facts = describeDrivetrain(dt);
  const speeds: number[] = [];
  for (let i = 0; i < 24; i++) speeds.push(-0.1 * facts.maxReverseWheelSpeedRpm + ((0.95 * facts.maxWheelSpeedRpm + 0.1 * facts.maxReverseWheelSpeedRpm) * i) / 23);
  const points: [number, number][] = [];
  const friction: [number, number][] = [];
  for (const n of speeds) {
    const lim = wheelTorqueLimits(dt, n);
    for (let j = 0; j <= 14; j++) {
      const f = -1.05 + (2.1 * j) / 14;
      points.push([n, f >= 0 ? f * lim.maxWheelNm : -f * lim.minWheelNm]);
    }
    if (n > 0) friction.push([n, -1.5 * lim.maxBrakingWheelNm - 50]);
  }
  // warm-up
  for (let r = 0; r < 3; r++) for (const [n, t] of points) solvePoint(dt, n, t);
  const solvesPerSecond = rate(() => {
    for (const [n, t] of points) solvePoint(dt, n, t);
    return points.length;
  }, runs, 200);
  const frictionSolvesPerSecond = rate(() => {
    for (const [n, t] of friction) solvePoint(dt, n, t);
    return friction.length;
  }, runs, 200);
  const limitsPerSecond = rate(() => {
    for (const n of speeds) wheelTorqueLimits(dt, n);
    return speeds.length;
  }, runs, 200);

  const scanned = points.filter((_, i) => i % 4 === 1);
  let notWorse = 0;
  let maxExcess = 0;
  const t0 = performance.now();
  const scanBest = scanned.map(([n, t]) => scanPoint(dt, n, t));
  const scanMs = performance.now() - t0;
  const solved = scanned.map(([n, t]) => solvePoint(dt, n, t, { strict: true }));
  for (let i = 0; i < scanned.length; i++) {
    const r = solved[i]!;
    const s = scanBest[i]!;
    const p = r.feasible ? r.batteryW! : Infinity;
    if (p <= s + 1e-9 * Math.abs(s) || (s === Infinity && p === Infinity)) notWorse++;
    if (Number.isFinite(s) && Number.isFinite(p)) maxExcess = Math.max(maxExcess, s - p);
  }
  const scanSolvesPerSecond = (scanned.length / scanMs) * 1000;
  return {
    points: points.length,
    runs,
    solvesPerSecond,
    frictionSolvesPerSecond,
    limitsPerSecond,
    scanPoints: scanned.length,
    scanSamples: SCAN_SAMPLES,
    scanSolvesPerSecond,
    speedup: solvesPerSecond / scanSolvesPerSecond,
    notWorseShare: notWorse / scanned.length,
    maxScanExcessW: maxExcess,
  };
}

/** The demo drivetrain from maps/ (invented data), the one `npm run bench` measures. */
export async function demoDrivetrain(): Promise<Drivetrain> {
  const registry = new Registry({ mapsDir: new URL('../maps', import.meta.url).pathname, dataDir: new URL('../tmp/bench-data-none', import.meta.url).pathname });
  await registry.load();
  const dt = registry.getDrivetrain('van-axle');
  if (!dt) throw new Error('demo drivetrain van-axle not found in maps/');
  return dt;
}

async function main(): Promise<void> {
  const dt = await demoDrivetrain();
  const f = runSolverBench(dt);
  console.log(`solver bench: drivetrain ${dt.name}, ${f.points} wheel points, median of ${f.runs} runs`);
  console.log(`solves per second (all modes): ${f.solvesPerSecond.toFixed(0)}`);
  console.log(`solves per second with friction-brake share: ${f.frictionSolvesPerSecond.toFixed(0)}`);
  console.log(`wheel-torque limits per second: ${f.limitsPerSecond.toFixed(0)}`);
  console.log(`dense scan (${f.scanSamples} samples per free variable): ${f.scanSolvesPerSecond.toFixed(1)} points per second on ${f.scanPoints} points`);
  console.log(`speed-up over the dense scan: ${f.speedup.toFixed(0)}x`);
  console.log(`solver not worse than the scan: ${(100 * f.notWorseShare).toFixed(1)} % of points; largest scan excess ${f.maxScanExcessW.toFixed(3)} W`);
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) await main();
