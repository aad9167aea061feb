/**
 * `points` map source: measured test points → loss per point (DESIGN.md §2) → least-squares loss
 * polynomial → canonical grid.
 *
 * - Loss per point: from electrical power, P_loss = P_elec − τ·ω; from efficiency, with
 *   {@link lossFromEfficiency} (an efficiency at zero shaft power is refused).
 * - Negative loss tolerance: a measured loss down to −(1 % of |P_mech| + 1 W) is taken as
 *   measurement noise and set to 0 W; anything more negative is refused with the point's path.
 * - Grid: speeds 0..maxSpeedRpm in `grid.speedSteps` equal steps; torques from the lowest to the
 *   highest envelope value on those speeds in `grid.torqueSteps` nodes, split between the braking
 *   and driving sides in proportion to their spans so that 0 N·m is a node (one extra node when
 *   only two are asked for and the envelope has both sides). The envelope is sampled at the grid
 *   speeds (piecewise linear in between); loss is the fitted polynomial, clamped to >= 0.
 * - Extrapolated cells: grid nodes outside the envelope, plus nodes inside it that lie outside the
 *   convex hull of the measured (speed, torque) points.
 */
import { ModelError, joinPath } from '../problem.js';
import { RAD_S_PER_RPM, lossFromEfficiency } from '../units.js';
import { type LossFit, evaluateLossPolynomial, fitLossPolynomial } from './fitLoss.js';
import { type GridInput, type MapProvenance, MAX_AXIS_LENGTH, interp1 } from './map.js';
import type { PointsMapDoc } from './schema.js';

/** Measured loss below −(NEGATIVE_LOSS_REL·|P_mech| + NEGATIVE_LOSS_ABS_W) is refused. */
export const NEGATIVE_LOSS_REL = 0.01;
export const NEGATIVE_LOSS_ABS_W = 1;

function fail(message: string, path: string): never {
  throw new ModelError('map-invalid', message, path);
}

function finite(v: unknown, path: string): number {
  if (typeof v !== 'number' || !Number.isFinite(v)) fail(`${path} must be a finite number`, path);
  return v;
}

/** Checks the envelope arrays of a points document (units rpm and N·m). */
function checkEnvelope(doc: PointsMapDoc): void {
  const env = doc.envelope;
  const n = env.speedRpm.length;
  if (n < 2) fail('envelope.speedRpm needs at least 2 values', 'envelope.speedRpm');
  for (const field of ['maxTorqueNm', 'minTorqueNm'] as const) {
    if (env[field].length !== n) fail(`envelope.${field} has ${env[field].length} values; it needs one per envelope speed (${n})`, `envelope.${field}`);
  }
  for (let i = 0; i < n; i++) {
    const s = finite(env.speedRpm[i], `envelope.speedRpm[${i}]`);
    if (i === 0 && s !== 0) fail('envelope.speedRpm must start at 0', 'envelope.speedRpm[0]');
    if (i > 0 && !(s > env.speedRpm[i - 1]!)) fail(`envelope.speedRpm must be strictly ascending (at index ${i})`, `envelope.speedRpm[${i}]`);
    const hi = finite(env.maxTorqueNm[i], `envelope.maxTorqueNm[${i}]`);
    const lo = finite(env.minTorqueNm[i], `envelope.minTorqueNm[${i}]`);
    if (hi < 0) fail(`envelope.maxTorqueNm[${i}] = ${hi} must be >= 0`, `envelope.maxTorqueNm[${i}]`);
    if (lo > 0) fail(`envelope.minTorqueNm[${i}] = ${lo} must be <= 0`, `envelope.minTorqueNm[${i}]`);
  }
  if (env.speedRpm[n - 1]! < doc.maxSpeedRpm) {
    fail(`envelope.speedRpm must reach maxSpeedRpm (${doc.maxSpeedRpm}); it ends at ${env.speedRpm[n - 1]}`, `envelope.speedRpm[${n - 1}]`);
  }
}

/**
 * Loss (W) of each measured point, with the count of small negatives set to zero. Speed rpm,
 * torque N·m, electrical power W, efficiency 0..1 (DESIGN.md §2).
 */
function pointLosses(doc: PointsMapDoc): { speedRadS: Float64Array; torqueNm: Float64Array; lossW: Float64Array; clamped: number } {
  const n = doc.points.length;
  const speedRadS = new Float64Array(n);
  const torqueNm = new Float64Array(n);
  const lossW = new Float64Array(n);
  let clamped = 0;
  for (let i = 0; i < n; i++) {
    const p = doc.points[i]!;
    const base = joinPath('points', i);
    const rpm = finite(p.speedRpm, `${base}.speedRpm`);
    if (rpm < 0) fail(`${base}.speedRpm = ${rpm} must be >= 0 (give measurements in the forward direction)`, `${base}.speedRpm`);
    const tq = finite(p.torqueNm, `${base}.torqueNm`);
    const w = rpm * RAD_S_PER_RPM;
    const pMech = tq * w;
    let loss: number;
    if (p.electricalW !== undefined) {
      loss = finite(p.electricalW, `${base}.electricalW`) - pMech;
      const floor = -(NEGATIVE_LOSS_REL * Math.abs(pMech) + NEGATIVE_LOSS_ABS_W);
      if (loss < floor) {
        fail(
          `${base}: electrical power ${p.electricalW} W with shaft power ${round(pMech)} W gives a loss of ${round(loss)} W; loss is never negative (tolerance ${round(floor)} W)`,
          `${base}.electricalW`,
        );
      }
    } else if (p.efficiency !== undefined) {
      const eta = finite(p.efficiency, `${base}.efficiency`);
      if (!(eta > 0 && eta <= 1)) fail(`${base}.efficiency = ${eta} must lie in (0, 1]`, `${base}.efficiency`);
      if (pMech === 0) fail(`${base}: efficiency at zero shaft power carries no loss information; give electricalW for this point`, `${base}.efficiency`);
      loss = lossFromEfficiency(pMech, eta);
    } else {
      fail(`${base} needs electricalW or efficiency`, `${base}.electricalW`);
    }
    if (loss < 0) {
      loss = 0;
      clamped++;
    }
    speedRadS[i] = w;
    torqueNm[i] = tq;
    lossW[i] = loss;
  }
  return { speedRadS, torqueNm, lossW, clamped };
}

/** Convex hull (counter-clockwise, no collinear vertices) by Andrew's monotone chain. */
function convexHull(xs: Float64Array, ys: Float64Array): Array<[number, number]> {
  const pts = Array.from(xs, (x, i): [number, number] => [x, ys[i]!]).sort((p, q) => p[0] - q[0] || p[1] - q[1]);
  if (pts.length < 3) return pts;
  const cross = (o: [number, number], a: [number, number], b: [number, number]) =>
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]);
  const lower: Array<[number, number]> = [];
  for (const p of pts) {
    while (lower.length >= 2 && cross(lower[lower.length - 2]!, lower[lower.length - 1]!, p) <= 0) lower.pop();
    lower.push(p);
  }
  const upper: Array<[number, number]> = [];
  for (let i = pts.length - 1; i >= 0; i--) {
    const p = pts[i]!;
    while (upper.length >= 2 && cross(upper[upper.length - 2]!, upper[upper.length - 1]!, p) <= 0) upper.pop();
    upper.push(p);
  }
  return lower.slice(0, -1).concat(upper.slice(0, -1));
}

/** Whether (x, y) lies in a counter-clockwise convex polygon, with slack `tol` on each edge. */
function inHull(hull: Array<[number, number]>, x: number, y: number, tol: number): boolean {
  if (hull.length < 3) return false;
  for (let k = 0; k < hull.length; k++) {
    const a = hull[k]!;
    const b = hull[(k + 1) % hull.length]!;
    const ex = b[0] - a[0];
    const ey = b[1] - a[1];
    const len = Math.hypot(ex, ey);
    if ((ex * (y - a[1]) - ey * (x - a[0])) / len < -tol) return false;
  }
  return true;
}

/** Torque axis from lo <= 0 to hi >= 0 with about `steps` nodes, 0 among them. */
function torqueAxis(lo: number, hi: number, steps: number): number[] {
  const span = hi - lo;
  let nNeg = lo < 0 ? Math.round(((steps - 1) * -lo) / span) : 0;
  let nPos = hi > 0 ? steps - 1 - nNeg : 0;
  if (lo < 0 && nNeg < 1) nNeg = 1;
  if (hi > 0 && nPos < 1) nPos = 1;
  if (lo < 0 && hi > 0 && nNeg + nPos > steps - 1) {
    // Too few steps to hold both sides: take one from the larger side if it can spare it.
    if (nNeg > 1 && nNeg >= nPos) nNeg--;
    else if (nPos > 1) nPos--;
  }
  const axis: number[] = [];
  for (let k = 0; k < nNeg; k++) axis.push(lo * (1 - k / nNeg));
  axis.push(0);
  for (let k = 1; k <= nPos; k++) axis.push(k === nPos ? hi : (hi * k) / nPos);
  return axis;
}

function round(x: number): number {
  return Math.round(x * 1000) / 1000;
}

/**
 * Grid speeds (rpm): `grid.speedSteps` even speeds plus the envelope's own speeds below the limit,
 * so the grid envelope keeps every corner of the given one (a chord between grid speeds could
 * promise more torque). Refused before any fitting when there are more than the grid axis allows.
 */
function gridSpeeds(doc: PointsMapDoc): number[] {
  const speedSteps = doc.grid?.speedSteps ?? 41;
  const speeds = new Set<number>();
  for (let i = 0; i < speedSteps; i++) speeds.add(i === speedSteps - 1 ? doc.maxSpeedRpm : (doc.maxSpeedRpm * i) / (speedSteps - 1));
  for (const s of doc.envelope.speedRpm) if (s < doc.maxSpeedRpm) speeds.add(s);
  if (speeds.size > MAX_AXIS_LENGTH) {
    fail(
      `the grid would have ${speeds.size} speeds (${speedSteps} even steps and the envelope's own speeds); at most ${MAX_AXIS_LENGTH} are allowed — give fewer envelope speeds or fewer grid.speedSteps`,
      'envelope.speedRpm',
    );
  }
  return [...speeds].sort((x, y) => x - y);
}

/**
 * Converts a `points` document into a grid for {@link buildMachineMap}. Units: rpm, N·m, W.
 * Throws ModelError 'map-invalid' (with the field path) for bad points or envelope, and
 * 'fit-failed' (path `points`) when the points cannot determine the polynomial.
 */
export function pointsToGrid(doc: PointsMapDoc): { grid: GridInput; provenance: MapProvenance } {
  checkEnvelope(doc);
  const speedRpm = gridSpeeds(doc);
  const samples = pointLosses(doc);
  const fitOpts = doc.fit ?? { speedDegree: 3, torqueDegree: 3 };
  let fit: LossFit;
  try {
    fit = fitLossPolynomial(samples, fitOpts);
  } catch (e) {
    if (e instanceof ModelError && e.path === undefined) throw new ModelError(e.code, e.message, 'points');
    throw e;
  }

  const torqueSteps = doc.grid?.torqueSteps ?? 61;
  const env = doc.envelope;
  const maxTorqueNm = speedRpm.map((s) => interp1(env.speedRpm, env.maxTorqueNm, s));
  const minTorqueNm = speedRpm.map((s) => interp1(env.speedRpm, env.minTorqueNm, s));
  const lo = Math.min(...minTorqueNm);
  const hi = Math.max(...maxTorqueNm);
  if (!(hi > lo)) fail('the envelope allows no torque at any speed up to maxSpeedRpm', 'envelope.maxTorqueNm');
  const torqueNm = torqueAxis(lo, hi, torqueSteps);

  // Measured region: convex hull of the points, in speed and torque scaled to the grid spans.
  const ws = doc.maxSpeedRpm * RAD_S_PER_RPM;
  const ts = hi - lo;
  const hull = convexHull(
    samples.speedRadS.map((w) => w / ws),
    samples.torqueNm.map((t) => t / ts),
  );

  // Negatives smaller than this are rounding of an exact zero and are not reported (still clamped).
  const roundoff = 1e-9 * samples.lossW.reduce((m, v) => Math.max(m, v), 1);
  let outsideEnvelope = 0;
  let outsideMeasured = 0;
  let negativeNodes = 0;
  let mostNegative = 0;
  const lossW: number[][] = [];
  for (let i = 0; i < speedRpm.length; i++) {
    const w = speedRpm[i]! * RAD_S_PER_RPM;
    const row: number[] = [];
    for (const t of torqueNm) {
      const v = evaluateLossPolynomial(fit, w, t);
      if (v < -roundoff) {
        negativeNodes++;
        mostNegative = Math.min(mostNegative, v);
      }
      row.push(Math.max(0, v));
      if (t > maxTorqueNm[i]! || t < minTorqueNm[i]!) outsideEnvelope++;
      else if (!inHull(hull, w / ws, t / ts, 1e-9)) outsideMeasured++;
    }
    lossW.push(row);
  }

  const nodes = speedRpm.length * torqueNm.length;
  const notes: string[] = [
    `loss polynomial with ${fit.terms.length} terms (speed degree ${fitOpts.speedDegree}, torque degree ${fitOpts.torqueDegree}` +
      `${fitOpts.totalDegree !== undefined ? `, total degree <= ${fitOpts.totalDegree}` : ''}) fitted to ${samples.lossW.length} points: ` +
      `RMS residual ${round(fit.rmsW)} W, R² ${fit.r2.toFixed(4)}, condition number ${fit.conditionNumber.toExponential(2)}`,
    `${outsideMeasured} of ${nodes} grid nodes inside the envelope lie outside the convex hull of the measured points and ${outsideEnvelope} lie outside the envelope; their loss is extrapolated from the polynomial`,
  ];
  if (samples.clamped > 0) {
    const n = samples.clamped;
    notes.push(`${n} point${n === 1 ? '' : 's'} with a slightly negative measured loss (within −(1 % of |P_mech| + 1 W)) taken as 0 W`);
  }
  if (negativeNodes > 0) {
    notes.push(`${negativeNodes} grid node${negativeNodes === 1 ? '' : 's'} where the polynomial fell below zero (down to ${round(mostNegative)} W) set to 0 W`);
  }
  if (torqueNm.length !== torqueSteps) notes.push(`torque axis has ${torqueNm.length} nodes (one added so that 0 N·m is a node)`);

  return {
    grid: { speedRpm, torqueNm, lossW, maxTorqueNm, minTorqueNm, maxSpeedRpm: doc.maxSpeedRpm, reverse: doc.reverse ?? true },
    provenance: {
      source: 'points',
      filledCells: 0,
      extrapolatedCells: outsideEnvelope + outsideMeasured,
      zeroSpeedLossChangeW: 0,
      zeroSpeedTorqueChangeNm: 0,
      fit: { rmsW: fit.rmsW, r2: fit.r2, terms: fit.terms.length, points: samples.lossW.length },
      notes,
    },
  };
}
