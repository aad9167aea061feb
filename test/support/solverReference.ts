/**
 * Independent reference for the solver tests: the drivetrain model written out again from the
 * published relations (DESIGN.md §4–§6; Willis equation and power-flow torque split as in
 * H. W. Müller, Epicyclic Drive Trains, 1982) on top of the canonical map functions, with a
 * dense brute-force scan of each mode's free variable and a checker that recomputes every limit
 * of a returned setting. Nothing here calls the solver.
 */
import { isFeasible, lossAny, maxTorqueAt, minTorqueAt, speedAllowed } from '../../src/machine/map.js';
import type { Drivetrain } from '../../src/solver/drivetrain.js';
import type { Mode, ModeSetting } from '../../src/solver/types.js';

const RPM = Math.PI / 30;

export interface RefModel {
  dt: Drivetrain;
  k: number;
  eta0: number;
  i: number;
  etaFd: number;
  aux: number;
  pDis: number;
  pCh: number;
  devW: Record<Mode, number>;
  sunBrake: number;
  ringBrake: number;
  clutch: number;
  available: Record<Mode, boolean>;
}

export function refModel(dt: Drivetrain): RefModel {
  const d = dt.doc;
  const dev = d.devices ?? {};
  const devW = (mode: Mode): number => {
    let w = 0;
    if (dev.ringBrake) w += mode === 'ring-held' ? dev.ringBrake.engagedW : dev.ringBrake.releasedW;
    if (dev.sunBrake) w += mode === 'sun-held' ? dev.sunBrake.engagedW : dev.sunBrake.releasedW;
    if (dev.lockClutch) w += mode === 'locked' ? dev.lockClutch.engagedW : dev.lockClutch.releasedW;
    return w;
  };
  return {
    dt,
    k: d.gearset.ringTeeth / d.gearset.sunTeeth,
    eta0: d.gearset.baseEfficiency,
    i: d.finalDrive.ratio,
    etaFd: d.finalDrive.efficiency,
    aux: d.auxiliaryW,
    pDis: d.battery.maxDischargeW,
    pCh: d.battery.maxChargeW,
    devW: { split: devW('split'), 'ring-held': devW('ring-held'), 'sun-held': devW('sun-held'), locked: devW('locked') },
    sunBrake: dev.sunBrake?.maxTorqueNm ?? Infinity,
    ringBrake: dev.ringBrake?.maxTorqueNm ?? Infinity,
    clutch: dev.lockClutch?.maxTorqueNm ?? Infinity,
    available: { split: true, 'ring-held': !!dev.ringBrake, 'sun-held': !!dev.sunBrake, locked: !!dev.lockClutch },
  };
}

/** Carrier torque from wheel torque, efficiency in the direction of power flow (DESIGN.md §5). */
export function refCarrierTorque(r: RefModel, wheelNm: number, wheelRadS: number): number {
  return wheelNm * wheelRadS >= 0 ? wheelNm / (r.i * r.etaFd) : (wheelNm * r.etaFd) / r.i;
}

/** Whether (ω, T) is inside a map's limits with a margin (so edge rounding never counts). */
function inside(map: Drivetrain['sun'], w: number, t: number, margin: number): boolean {
  if (!speedAllowed(map, w)) return false;
  const hi = maxTorqueAt(map, w);
  const lo = minTorqueAt(map, w);
  return t <= hi - margin * (1 + Math.abs(hi)) && t >= lo + margin * (1 + Math.abs(lo));
}

function batteryOk(r: RefModel, p: number, margin: number): boolean {
  return p <= r.pDis * (1 - margin) && p >= -r.pCh * (1 - margin);
}

export interface ScanResult {
  best: number;
  /** Samples of the free variable used. */
  samples: number;
}

/** Allowed sun-speed range in split mode (rad/s), from the speed limits and reverse permission. */
export function refSplitRange(r: RefModel, wc: number): [number, number] | null {
  const { sun, ring } = r.dt;
  const base = (1 + r.k) * wc;
  const lo = Math.max(sun.reverse ? -sun.maxSpeedRadS : 0, base - r.k * ring.maxSpeedRadS);
  const hi = Math.min(sun.maxSpeedRadS, base - r.k * (ring.reverse ? -ring.maxSpeedRadS : 0));
  return lo <= hi ? [lo, hi] : null;
}

/**
 * Dense scan of one mode at carrier speed ω_c (rad/s) and carrier torque T_out (N·m): split
 * samples the sun speed (`n` samples over the allowed range) plus the Δ = 0 band in T_s; locked
 * samples the sun torque; held modes have one setting. A sample counts only if it is inside every
 * limit by `margin` (relative). Returns +Infinity when no sample is feasible.
 */
export function scanMode(r: RefModel, mode: Mode, wc: number, tout: number, n = 20_001, margin = 1e-7): ScanResult {
  const { sun, ring } = r.dt;
  const k = r.k;
  const e0 = r.eta0;
  const dev = r.devW[mode];
  let best = Infinity;
  const consider = (p: number) => {
    if (batteryOk(r, p, margin) && p < best) best = p;
  };
  if (mode === 'split') {
    const range = refSplitRange(r, wc);
    if (!range) return { best, samples: 0 };
    const [lo, hi] = range;
    for (let q = 0; q < n; q++) {
      const x = n === 1 ? lo : lo + ((hi - lo) * q) / (n - 1);
      const delta = x - wc;
      if (delta === 0) continue;
      const ts = tout * delta > 0 ? tout / (1 + k * e0) : tout / (1 + k / e0);
      const tr = tout - ts;
      const wr = ((1 + k) * wc - x) / k;
      if (!inside(sun, x, ts, margin) || !inside(ring, wr, tr, margin)) continue;
      consider(ts * x + tr * wr + lossAny(sun, x, ts) + lossAny(ring, wr, tr) + r.aux + dev);
    }
    if (wc >= lo && wc <= hi) {
      const a = tout / (1 + k / e0);
      const b = tout / (1 + k * e0);
      const nb = 2001;
      for (let q = 0; q < nb; q++) {
        const ts = a + ((b - a) * q) / (nb - 1);
        const tr = tout - ts;
        if (!inside(sun, wc, ts, margin) || !inside(ring, wc, tr, margin)) continue;
        consider(tout * wc + lossAny(sun, wc, ts) + lossAny(ring, wc, tr) + r.aux + dev);
      }
    }
    return { best, samples: n };
  }
  if (mode === 'ring-held' || mode === 'sun-held') {
    const ringHeld = mode === 'ring-held';
    // Held modes: Δ = k·ω_c (ring held) or −ω_c (sun held); standstill uses k·η0 (ring held) or
    // k/η0 (sun held), DESIGN.md §4.
    const delta = ringHeld ? k * wc : -wc;
    const sunDelivers = wc === 0 ? ringHeld : tout * delta > 0;
    const ts = sunDelivers ? tout / (1 + k * e0) : tout / (1 + k / e0);
    const tr = tout - ts;
    if (ringHeld) {
      const ws = (1 + k) * wc;
      if (Math.abs(tr) > r.ringBrake * (1 - margin) || !inside(sun, ws, ts, margin)) return { best, samples: 1 };
      consider(ts * ws + lossAny(sun, ws, ts) + r.aux + dev);
    } else {
      const wr = ((1 + k) * wc) / k;
      if (Math.abs(ts) > r.sunBrake * (1 - margin) || !inside(ring, wr, tr, margin)) return { best, samples: 1 };
      consider(tr * wr + lossAny(ring, wr, tr) + r.aux + dev);
    }
    return { best, samples: 1 };
  }
  // locked: scan the sun torque over its envelope at ω_c.
  if (!speedAllowed(sun, wc) || !speedAllowed(ring, wc)) return { best, samples: 0 };
  const lo = minTorqueAt(sun, wc);
  const hi = maxTorqueAt(sun, wc);
  for (let q = 0; q < n; q++) {
    const ts = lo + ((hi - lo) * q) / (n - 1);
    const tr = tout - ts;
    if (Math.abs(ts - tout / (1 + k)) > r.clutch * (1 - margin)) continue;
    if (!inside(sun, wc, ts, margin) || !inside(ring, wc, tr, margin)) continue;
    consider(tout * wc + lossAny(sun, wc, ts) + lossAny(ring, wc, tr) + r.aux + dev);
  }
  return { best, samples: n };
}

/**
 * Recomputes every limit and relation of a returned setting; returns a list of violations
 * (empty when the setting is sound). `electricWheelNm` is the wheel torque the machines deliver.
 */
export function checkSetting(r: RefModel, s: ModeSetting, wheelRpm: number, tol = 1e-6): string[] {
  const bad: string[] = [];
  const { sun, ring } = r.dt;
  const k = r.k;
  const e0 = r.eta0;
  const wW = wheelRpm * RPM;
  const wc = r.i * wW;
  const tout = refCarrierTorque(r, s.electricWheelTorqueNm, wW);
  const ws = s.sun.speedRpm * RPM;
  const wr = s.ring.speedRpm * RPM;
  const close = (a: number, b: number, scale: number) => Math.abs(a - b) <= tol * (1 + Math.abs(scale));
  const torqueScale = Math.abs(tout) + 1;
  // Willis equation ω_s + k·ω_r = (1 + k)·ω_c (a held member reports zero speed).
  if (!close(ws + k * wr, (1 + k) * wc, Math.abs(wc) * (1 + k) + 1)) bad.push(`Willis: ${ws} + ${k}·${wr} != ${(1 + k) * wc}`);
  let ts = s.sun.torqueNm;
  let tr = s.ring.torqueNm;
  const mode = s.mode;
  if (mode === 'ring-held') {
    if (s.ring.speedRpm !== 0 || s.ring.torqueNm !== 0 || s.ring.lossW !== 0) bad.push('held ring reports motion or loss');
    tr = tout - ts;
    if (Math.abs(tr) > r.ringBrake * (1 + tol)) bad.push(`ring brake torque ${tr} above ${r.ringBrake}`);
  }
  if (mode === 'sun-held') {
    if (s.sun.speedRpm !== 0 || s.sun.torqueNm !== 0 || s.sun.lossW !== 0) bad.push('held sun reports motion or loss');
    ts = tout - tr;
    if (Math.abs(ts) > r.sunBrake * (1 + tol)) bad.push(`sun brake torque ${ts} above ${r.sunBrake}`);
  }
  if (!close(ts + tr, tout, torqueScale)) bad.push(`torque sum ${ts + tr} != T_out ${tout}`);
  const delta = ws - wc;
  if (mode === 'locked') {
    if (!close(ws, wc, Math.abs(wc) + 1) || !close(wr, wc, Math.abs(wc) + 1)) bad.push('locked set not turning as a block');
    if (Math.abs(ts - tout / (1 + k)) > r.clutch * (1 + tol) + tol) bad.push(`clutch torque above ${r.clutch}`);
  } else if (tout !== 0) {
    // Torque ratio T_r/T_s from the power flow (Müller 1982): k·η0 when the sun delivers, k/η0
    // when the ring delivers, anywhere between at Δ = 0 (held modes at standstill: fixed rule).
    const standstillHeld = (mode === 'ring-held' || mode === 'sun-held') && wc === 0;
    if (Math.abs(delta) > 1e-9 * (1 + Math.abs(wc)) || standstillHeld) {
      const sunDel = standstillHeld ? mode === 'ring-held' : tout * delta > 0;
      const want = sunDel ? tout / (1 + k * e0) : tout / (1 + k / e0);
      if (!close(ts, want, torqueScale)) bad.push(`sun torque ${ts} != ${want} for the power-flow regime`);
    } else {
      const a = tout / (1 + k / e0);
      const b = tout / (1 + k * e0);
      if (ts < Math.min(a, b) - tol * torqueScale || ts > Math.max(a, b) + tol * torqueScale) bad.push(`sun torque ${ts} outside the Δ = 0 band`);
    }
  }
  // Machines inside their limits.
  if (mode !== 'sun-held' && !isFeasible(sun, ws, ts * (1 - tol))) bad.push(`sun (${ws}, ${ts}) outside its envelope or speed limit`);
  if (mode !== 'ring-held' && !isFeasible(ring, wr, tr * (1 - tol))) bad.push(`ring (${wr}, ${tr}) outside its envelope or speed limit`);
  // Losses and electrical power recomputed from the maps.
  const ls = mode === 'sun-held' ? 0 : lossAny(sun, ws, ts);
  const lr = mode === 'ring-held' ? 0 : lossAny(ring, wr, tr);
  if (!close(s.sun.lossW, ls, ls)) bad.push(`sun loss ${s.sun.lossW} != ${ls}`);
  if (!close(s.ring.lossW, lr, lr)) bad.push(`ring loss ${s.ring.lossW} != ${lr}`);
  const pe = (mode === 'sun-held' ? 0 : ts * ws + ls) + (mode === 'ring-held' ? 0 : tr * wr + lr);
  if (!close(s.sun.electricalW + s.ring.electricalW, pe, Math.abs(pe))) bad.push('electrical power does not match the maps');
  // Device and auxiliary power, battery sum and limits.
  if (s.deviceW !== r.devW[mode]) bad.push(`device power ${s.deviceW} != ${r.devW[mode]}`);
  if (s.auxiliaryW !== r.aux) bad.push('auxiliary power');
  const batt = s.sun.electricalW + s.ring.electricalW + s.auxiliaryW + s.deviceW;
  if (!close(s.batteryW, batt, Math.abs(batt))) bad.push('battery power is not the DC sum');
  if (s.batteryW > r.pDis * (1 + tol) || s.batteryW < -r.pCh * (1 + tol)) bad.push(`battery ${s.batteryW} outside limits`);
  // Mesh loss (Müller 1982) and final-drive loss.
  let mesh = 0;
  if (mode !== 'locked' && delta !== 0 && Math.abs(delta) > 1e-12) {
    mesh = tout * delta > 0 ? Math.abs(ts * delta) * (1 - e0) : Math.abs(ts * delta) * (1 / e0 - 1);
  }
  if (!close(s.meshLossW, mesh, mesh + 1)) bad.push(`mesh loss ${s.meshLossW} != ${mesh}`);
  const fd = tout * wc - s.electricWheelTorqueNm * wW;
  if (!close(s.finalDriveLossW, fd, Math.abs(fd)) || fd < -1e-9) bad.push(`final drive loss ${s.finalDriveLossW} != ${fd}`);
  // Power balance P_batt = P_wheel + mesh + final drive + machine losses + devices + aux.
  const rhs = s.electricWheelTorqueNm * wW + s.meshLossW + s.finalDriveLossW + s.sun.lossW + s.ring.lossW + s.deviceW + s.auxiliaryW;
  const scale = Math.abs(s.electricWheelTorqueNm * wW) + Math.abs(s.sun.electricalW) + Math.abs(s.ring.electricalW) + s.deviceW + s.auxiliaryW + 1;
  if (Math.abs(s.batteryW - rhs) > 1e-9 * scale) bad.push(`power balance off by ${s.batteryW - rhs} W`);
  return bad;
}
