/**
 * Canonical machine map: a loss grid over (speed, torque) with a torque envelope per speed,
 * for one machine together with its inverter, DC terminals to shaft.
 *
 * Loss is interpolated bilinearly (never efficiency, which is singular at zero power); the
 * envelope is piecewise linear in speed. Points outside the envelope or beyond the speed
 * limit are infeasible (NaN), never extrapolated. Reverse rotation mirrors the forward map:
 * loss(−ω, τ) = loss(ω, −τ), maxTorque(−ω) = −minTorque(ω).
 */
import { ModelError } from '../problem.js';
import { RAD_S_PER_RPM } from '../units.js';

/** Relative and absolute slack on envelope and speed checks (rounding at exact crossings). */
export const LIMIT_REL_TOL = 1e-9;
export const LIMIT_ABS_TOL = 1e-9;

/** Where a map came from and what loading did to it. */
export interface MapProvenance {
  source: 'grid' | 'points' | 'dq-model';
  /** Cells whose loss was filled from neighbours rather than given (e.g. zero shaft power). */
  filledCells: number;
  /** Cells evaluated outside the measured region (points source). */
  extrapolatedCells: number;
  /** Largest loss change (W) made at zero speed to make loss(0, τ) = loss(0, −τ). */
  zeroSpeedLossChangeW: number;
  /** Largest envelope change (N·m) made at zero speed to make maxTorque(0) = −minTorque(0). */
  zeroSpeedTorqueChangeNm: number;
  /** Fit quality for fitted maps. */
  fit?: { rmsW: number; r2: number; terms: number; points: number };
  notes: string[];
}

/** Plain-array grid every loader produces; validated and frozen by {@link buildMachineMap}. */
export interface GridInput {
  /** Ascending speeds, rpm, first 0, last >= maxSpeedRpm. */
  speedRpm: number[];
  /** Ascending torques, N·m, spanning the envelope. */
  torqueNm: number[];
  /** Loss, W, indexed [speed][torque]. */
  lossW: number[][];
  /** Envelope per speed node, N·m: max >= 0, min <= 0. */
  maxTorqueNm: number[];
  minTorqueNm: number[];
  maxSpeedRpm: number;
  /** Whether the machine may turn backwards (default true). */
  reverse: boolean;
}

export interface MachineMap {
  readonly name: string;
  readonly nSpeed: number;
  readonly nTorque: number;
  /** Speed axis, rad/s, ascending from 0. */
  readonly speedRadS: Float64Array;
  /** Torque axis, N·m, ascending. */
  readonly torqueNm: Float64Array;
  /** Loss, W, row-major: lossW[i * nTorque + j] at (speedRadS[i], torqueNm[j]). */
  readonly lossW: Float64Array;
  /** Envelope at each speed node, N·m. */
  readonly maxTorqueNm: Float64Array;
  readonly minTorqueNm: Float64Array;
  /** Speed limit, rad/s (either direction). */
  readonly maxSpeedRadS: number;
  readonly reverse: boolean;
  readonly provenance: MapProvenance;
}

function fail(message: string, path?: string): never {
  throw new ModelError('map-invalid', message, path);
}

function checkAxis(values: number[], field: string, maxLen: number, bound: number): void {
  if (values.length < 2) fail(`${field} needs at least 2 values`, field);
  if (values.length > maxLen) fail(`${field} has ${values.length} values; at most ${maxLen} are allowed`, field);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (typeof v !== 'number' || !Number.isFinite(v)) fail(`${field}[${i}] must be a finite number`, `${field}[${i}]`);
    if (Math.abs(v) > bound) fail(`${field}[${i}] = ${v} is beyond the accepted magnitude ${bound}`, `${field}[${i}]`);
    if (i > 0 && !(v > values[i - 1]!)) fail(`${field} must be strictly ascending (at index ${i})`, `${field}[${i}]`);
  }
}

/** Largest axis length accepted from a caller (the canonical form may add mirrored torque nodes). */
export const MAX_AXIS_LENGTH = 400;

/** Magnitude bounds that keep every derived quantity finite (far beyond any real drive unit). */
export const MAX_SPEED_RPM = 1e6;
export const MAX_TORQUE_NM = 1e6;
export const MAX_LOSS_W = 1e9;

/**
 * Validates a grid and builds the canonical map. Makes the zero-speed column symmetric in torque
 * (averaging loss(0, τ) and loss(0, −τ); the envelope takes the smaller of its two magnitudes) so the reverse mirror is
 * continuous; to do that exactly the torque axis gains the mirror image of each node inside its
 * symmetric span (values linearly interpolated along torque, which leaves the bilinear surface of
 * every other speed unchanged).
 */
export function buildMachineMap(name: string, g: GridInput, provenance: MapProvenance, maxAxis = MAX_AXIS_LENGTH): MachineMap {
  checkAxis(g.speedRpm, 'speedRpm', maxAxis, MAX_SPEED_RPM);
  checkAxis(g.torqueNm, 'torqueNm', maxAxis, MAX_TORQUE_NM);
  const nS = g.speedRpm.length;
  if (g.speedRpm[0] !== 0) fail('speedRpm must start at 0', 'speedRpm[0]');
  if (!(Number.isFinite(g.maxSpeedRpm) && g.maxSpeedRpm > 0 && g.maxSpeedRpm <= MAX_SPEED_RPM)) {
    fail(`maxSpeedRpm must be a positive number up to ${MAX_SPEED_RPM}`, 'maxSpeedRpm');
  }
  if (g.speedRpm[nS - 1]! < g.maxSpeedRpm) {
    fail(`speedRpm must reach maxSpeedRpm (${g.maxSpeedRpm}); it ends at ${g.speedRpm[nS - 1]}`, `speedRpm[${nS - 1}]`);
  }
  for (const field of ['maxTorqueNm', 'minTorqueNm'] as const) {
    const arr = g[field];
    if (!Array.isArray(arr) || arr.length !== nS) fail(`${field} needs one value per speed (${nS})`, field);
    for (let i = 0; i < nS; i++) {
      const v = arr[i];
      if (typeof v !== 'number' || !Number.isFinite(v)) fail(`${field}[${i}] must be a finite number`, `${field}[${i}]`);
      if (field === 'maxTorqueNm' && v < 0) fail(`maxTorqueNm[${i}] must be >= 0`, `${field}[${i}]`);
      if (field === 'minTorqueNm' && v > 0) fail(`minTorqueNm[${i}] must be <= 0`, `${field}[${i}]`);
    }
  }
  const t0 = g.torqueNm[0]!;
  const tN = g.torqueNm[g.torqueNm.length - 1]!;
  for (let i = 0; i < nS; i++) {
    if (g.maxTorqueNm[i]! > tN) fail(`maxTorqueNm[${i}] = ${g.maxTorqueNm[i]} lies above the torque axis (ends at ${tN})`, `maxTorqueNm[${i}]`);
    if (g.minTorqueNm[i]! < t0) fail(`minTorqueNm[${i}] = ${g.minTorqueNm[i]} lies below the torque axis (starts at ${t0})`, `minTorqueNm[${i}]`);
  }
  if (!Array.isArray(g.lossW) || g.lossW.length !== nS) fail(`lossW needs ${nS} rows (one per speed)`, 'lossW');
  for (let i = 0; i < nS; i++) {
    const row = g.lossW[i];
    if (!Array.isArray(row) || row.length !== g.torqueNm.length) fail(`lossW[${i}] needs ${g.torqueNm.length} values (one per torque)`, `lossW[${i}]`);
    for (let j = 0; j < row.length; j++) {
      const v = row[j];
      if (typeof v !== 'number' || !Number.isFinite(v)) fail(`lossW[${i}][${j}] must be a finite number`, `lossW[${i}][${j}]`);
      if (v < 0) fail(`lossW[${i}][${j}] = ${v} is negative; loss is never below zero`, `lossW[${i}][${j}]`);
      if (v > MAX_LOSS_W) fail(`lossW[${i}][${j}] = ${v} is beyond the accepted magnitude ${MAX_LOSS_W} W`, `lossW[${i}][${j}]`);
    }
  }

  // Torque axis gains mirrored nodes inside [−a, a], a = min(−t0, tN), so symmetry is exact.
  const a = Math.min(-t0, tN);
  // A mirror image within rounding of an existing node is that node (axes built as
  // −span + 2·span·j/(n−1) are symmetric only to the last bit).
  const snap = 1e-9 * (tN - t0);
  const given = [...g.torqueNm];
  const merged = [...given];
  if (a > 0) {
    for (const t of given) {
      if (Math.abs(t) > a) continue;
      const m = -t;
      if (!given.some((x) => Math.abs(x - m) <= snap)) merged.push(m === 0 ? 0 : m);
    }
  }
  const torque = Float64Array.from(merged.sort((x, y) => x - y));
  const nT = torque.length;
  const loss = new Float64Array(nS * nT);
  for (let i = 0; i < nS; i++) {
    const row = g.lossW[i]!;
    for (let j = 0; j < nT; j++) loss[i * nT + j] = interp1(g.torqueNm, row, torque[j]!);
  }
  const maxT = Float64Array.from(g.maxTorqueNm);
  const minT = Float64Array.from(g.minTorqueNm);

  // Zero-speed symmetry.
  let lossChange = 0;
  if (a > 0) {
    const col = Array.from(loss.subarray(0, nT));
    const axisArr = Array.from(torque);
    for (let j = 0; j < nT; j++) {
      const t = torque[j]!;
      if (Math.abs(t) > a) continue;
      const avg = 0.5 * (col[j]! + interp1(axisArr, col, -t));
      lossChange = Math.max(lossChange, Math.abs(avg - col[j]!));
      loss[j] = avg;
    }
  }
  // The smaller magnitude, never the mean: the envelope must not promise torque the supplier's
  // limit does not give.
  const m0 = Math.min(maxT[0]!, -minT[0]!);
  const torqueChange = Math.max(Math.abs(m0 - maxT[0]!), Math.abs(-m0 - minT[0]!));
  maxT[0] = m0;
  minT[0] = -m0;

  const prov: MapProvenance = {
    ...provenance,
    zeroSpeedLossChangeW: lossChange,
    zeroSpeedTorqueChangeNm: torqueChange,
    notes: [...provenance.notes],
  };
  if (lossChange > 0 || torqueChange > 0) {
    prov.notes.push(
      `zero-speed column made symmetric so reverse rotation is continuous: loss averaged with its mirror (moved by up to ${round(lossChange)} W), envelope cut to the smaller magnitude (by ${round(torqueChange)} N·m)`,
    );
  }
  if (nT > g.torqueNm.length) {
    prov.notes.push(`torque axis gained ${nT - g.torqueNm.length} mirrored nodes (values interpolated along torque; surface unchanged)`);
  }
  return Object.freeze({
    name,
    nSpeed: nS,
    nTorque: nT,
    speedRadS: Float64Array.from(g.speedRpm, (n) => n * RAD_S_PER_RPM),
    torqueNm: torque,
    lossW: loss,
    maxTorqueNm: maxT,
    minTorqueNm: minT,
    maxSpeedRadS: g.maxSpeedRpm * RAD_S_PER_RPM,
    reverse: g.reverse,
    provenance: prov,
  });
}

function round(x: number): number {
  return Math.round(x * 1000) / 1000;
}

/** Linear interpolation on an ascending axis, clamped to the end values. */
export function interp1(xs: ArrayLike<number>, ys: ArrayLike<number>, x: number): number {
  const n = xs.length;
  if (x <= xs[0]!) return ys[0]!;
  if (x >= xs[n - 1]!) return ys[n - 1]!;
  const i = upperIndex(xs, x);
  const x0 = xs[i]!;
  const x1 = xs[i + 1]!;
  const u = (x - x0) / (x1 - x0);
  return ys[i]! + u * (ys[i + 1]! - ys[i]!);
}

/** Index i with xs[i] <= x < xs[i+1], clamped to [0, n−2]. Binary search; no allocation. */
export function upperIndex(xs: ArrayLike<number>, x: number): number {
  let lo = 0;
  let hi = xs.length - 1;
  if (x >= xs[hi]!) return hi - 1;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (xs[mid]! <= x) lo = mid;
    else hi = mid;
  }
  return lo;
}

/** Whether a shaft speed (rad/s, signed) is allowed: within the speed limit and direction. */
export function speedAllowed(map: MachineMap, omega: number): boolean {
  if (omega < 0 && !map.reverse) return omega >= -LIMIT_ABS_TOL;
  return Math.abs(omega) <= map.maxSpeedRadS * (1 + LIMIT_REL_TOL) + LIMIT_ABS_TOL;
}

/** Forward-direction envelope (N·m) at a speed |ω| in rad/s; `upper` picks max or min. */
function envelopeForward(map: MachineMap, w: number, upper: boolean): number {
  const arr = upper ? map.maxTorqueNm : map.minTorqueNm;
  const s = map.speedRadS;
  if (w >= s[map.nSpeed - 1]!) return arr[map.nSpeed - 1]!;
  const i = upperIndex(s, w);
  const u = (w - s[i]!) / (s[i + 1]! - s[i]!);
  return arr[i]! + u * (arr[i + 1]! - arr[i]!);
}

/** Largest torque (N·m) at a signed speed (rad/s); NaN when the speed itself is not allowed. */
export function maxTorqueAt(map: MachineMap, omega: number): number {
  if (!speedAllowed(map, omega)) return Number.NaN;
  return omega >= 0 ? envelopeForward(map, omega, true) : -envelopeForward(map, -omega, false);
}

/** Smallest (most negative) torque (N·m) at a signed speed (rad/s); NaN when not allowed. */
export function minTorqueAt(map: MachineMap, omega: number): number {
  if (!speedAllowed(map, omega)) return Number.NaN;
  return omega >= 0 ? envelopeForward(map, omega, false) : -envelopeForward(map, -omega, true);
}

/** Whether (ω, τ) lies inside the map's speed limit and torque envelope (with rounding slack). */
export function isFeasible(map: MachineMap, omega: number, torque: number): boolean {
  const hi = maxTorqueAt(map, omega);
  if (Number.isNaN(hi)) return false;
  const lo = minTorqueAt(map, omega);
  return torque <= hi + LIMIT_REL_TOL * Math.abs(hi) + LIMIT_ABS_TOL && torque >= lo - LIMIT_REL_TOL * Math.abs(lo) - LIMIT_ABS_TOL;
}

/**
 * Bilinear loss (W) at a forward speed w >= 0 (rad/s) and torque (N·m), with no feasibility
 * check; speed and torque are clamped to the grid. Building block for the solver.
 */
export function lossForward(map: MachineMap, w: number, torque: number): number {
  const s = map.speedRadS;
  const t = map.torqueNm;
  const i = upperIndex(s, w);
  const j = upperIndex(t, torque);
  let u = (w - s[i]!) / (s[i + 1]! - s[i]!);
  let v = (torque - t[j]!) / (t[j + 1]! - t[j]!);
  if (u < 0) u = 0;
  else if (u > 1) u = 1;
  if (v < 0) v = 0;
  else if (v > 1) v = 1;
  return lossInCell(map, i, u, j, v);
}

/**
 * Bilinear loss (W) in speed cell i at fraction u and torque cell j at fraction v (both 0..1):
 * the surface every loss evaluation uses, with the cells found beforehand.
 */
export function lossInCell(map: MachineMap, i: number, u: number, j: number, v: number): number {
  const nT = map.nTorque;
  const L = map.lossW;
  const k = i * nT + j;
  const l00 = L[k]!;
  const l01 = L[k + 1]!;
  const l10 = L[k + nT]!;
  const l11 = L[k + nT + 1]!;
  return (1 - u) * ((1 - v) * l00 + v * l01) + u * ((1 - v) * l10 + v * l11);
}

/** Loss (W) at a signed speed (rad/s) and torque, by the reverse mirror; no feasibility check. */
export function lossAny(map: MachineMap, omega: number, torque: number): number {
  return omega >= 0 ? lossForward(map, omega, torque) : lossForward(map, -omega, -torque);
}

/** Loss (W) at a signed speed and torque; NaN when the point is infeasible. */
export function lossAt(map: MachineMap, omega: number, torque: number): number {
  if (!isFeasible(map, omega, torque)) return Number.NaN;
  return lossAny(map, omega, torque);
}

/** DC electrical power (W) = shaft power + loss; NaN when infeasible. */
export function electricalPowerAt(map: MachineMap, omega: number, torque: number): number {
  const l = lossAt(map, omega, torque);
  return torque * omega + l;
}
