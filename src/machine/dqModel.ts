/**
 * Electrical-model machine maps (DESIGN.md §3, third source): a dq-axis permanent-magnet
 * synchronous machine with its inverter, run at the least current that gives the requested
 * torque within the current and voltage limits (Morimoto et al., IEEE Trans. Ind. Appl., 1990).
 *
 * Conventions: currents are peak phase values of the amplitude-invariant dq transform, so torque
 * and power carry the factor 1.5; ωe = p·ωm is the electrical speed, rad/s; the peak phase voltage
 * limit is V_max = V_dc/√3 (space-vector modulation, linear range); steady state.
 *
 * Solving method. For a fixed torque T the currents lie on the curve iq(id) = T/(1.5·p·(ψ + (Ld − Lq)·id)).
 * With Lq >= Ld only id in [−I_max, 0] matters: a point with id > 0 is beaten by the point at −id on
 * the same torque curve (less current, less flux, same resistive cross term). On that interval the
 * squared current I²(id) and squared voltage |v|²(id) are both convex (sums of squares of affine
 * functions of id and of iq(id), which is convex), so:
 *   1. the least-current point (MTPA) comes from the closed form, the current found by bisection of
 *      the monotone MTPA torque;
 *   2. if the voltage there exceeds V_max, golden-section search finds the least-voltage point
 *      between −I_max and the MTPA point (for T at the envelope this is MTPV);
 *   3. bisection between the two gives the voltage-limit crossing nearest the MTPA point, which is
 *      the least-current feasible point (field weakening); it is kept only if within the current circle.
 * The reachable torques at a speed form an interval (the feasible currents are the intersection of a
 * disc and an ellipse, a convex set), so the envelope is found by bisection on torque.
 * Search loops work on plain numbers and a caller-owned scratch array; nothing is allocated inside them.
 */
import { ModelError } from '../problem.js';
import { RAD_S_PER_RPM } from '../units.js';
import type { GridInput, MapProvenance } from './map.js';
import type { DqModelDoc } from './schema.js';

/** Electrical parameters, SI. */
export interface DqMachine {
  /** Pole pairs p. */
  polePairs: number;
  /** Phase resistance Rs, Ω. */
  rsOhm: number;
  /** d- and q-axis inductances, H (Lq >= Ld). */
  ldH: number;
  lqH: number;
  /** Magnet flux linkage ψ, Wb (peak, amplitude-invariant). */
  fluxWb: number;
  /** Peak phase current limit I_max, A. */
  maxCurrentA: number;
  /** Peak phase voltage limit V_max = V_dc/√3, V. */
  maxVoltageV: number;
}

/** Machine plus loss coefficients, SI (fields as in the document). */
export interface DqDrive extends DqMachine {
  hysteresisWPerHz: number;
  eddyWPerHz2: number;
  frictionNm: number;
  viscousNmPerRadS: number;
  inverterConstantW: number;
  inverterPerAmpW: number;
  inverterResistanceOhm: number;
}

export interface DqOperatingPoint {
  idA: number;
  iqA: number;
  /** Peak current magnitude √(id² + iq²), A. */
  currentA: number;
  /** Peak phase voltage magnitude, V. */
  voltageV: number;
  /** Electromagnetic torque, N·m. */
  torqueNm: number;
  /** 'mtpa' when the voltage limit does not bind, else 'field-weakening' (on the voltage limit). */
  region: 'mtpa' | 'field-weakening';
}

/** Which limits set the envelope: current only, current and voltage, or voltage only. */
export type EnvelopeLimit = 'mtpa' | 'field-weakening' | 'mtpv';

export interface DqEnvelopePoint {
  /** Largest and smallest electromagnetic torque, N·m; NaN when not even zero torque is reachable. */
  maxTorqueNm: number;
  minTorqueNm: number;
  maxLimit: EnvelopeLimit;
  minLimit: EnvelopeLimit;
}

const SQRT3 = Math.sqrt(3);
const GOLDEN = (Math.sqrt(5) - 1) / 2;
const BISECT_STEPS = 64;
const GOLDEN_STEPS = 90;
/** Relative slack on the current limit (absorbs rounding of the MTPA inversion). */
const CURRENT_REL_TOL = 1e-9;
/** Relative closeness at which a limit counts as binding when classifying the envelope. */
const BINDING_REL_TOL = 1e-6;

/** Peak phase voltage limit, V, from the DC voltage, V: V_dc/√3 (space-vector modulation, linear range). */
export function maxPhaseVoltageV(dcVoltageV: number): number {
  return dcVoltageV / SQRT3;
}

/**
 * MTPA d-axis current, A, for a peak current I (A), Ld, Lq (H), ψ (Wb) (Morimoto et al. 1990):
 * id = ψ/(4ΔL) − √(ψ²/(16ΔL²) + I²/2), ΔL = Lq − Ld, evaluated in the algebraically equal form
 * id = −2ΔL·I²/(ψ + √(ψ² + 8ΔL²·I²)), which has no cancellation and gives id = 0 at Ld = Lq.
 */
export function mtpaDAxisCurrentA(currentA: number, ldH: number, lqH: number, fluxWb: number): number {
  const dL = lqH - ldH;
  const i2 = currentA * currentA;
  const den = fluxWb + Math.sqrt(fluxWb * fluxWb + 8 * dL * dL * i2);
  const id = den > 0 ? (-2 * dL * i2) / den : 0;
  return id === 0 ? 0 : id; // never −0
}

/** MTPA currents, A, for a peak current I (A), Ld, Lq (H), ψ (Wb): id as above, iq = √(I² − id²) (Morimoto et al. 1990). */
export function mtpaCurrents(currentA: number, ldH: number, lqH: number, fluxWb: number): { idA: number; iqA: number } {
  const idA = mtpaDAxisCurrentA(currentA, ldH, lqH, fluxWb);
  return { idA, iqA: Math.sqrt(Math.max(0, currentA * currentA - idA * idA)) };
}

/** Electromagnetic torque, N·m: 1.5·p·(ψ·iq + (Ld − Lq)·id·iq); ψ in Wb, L in H, currents peak A (amplitude-invariant dq). */
export function dqTorqueNm(polePairs: number, fluxWb: number, ldH: number, lqH: number, idA: number, iqA: number): number {
  return 1.5 * polePairs * (fluxWb * iqA + (ldH - lqH) * idA * iqA);
}

/**
 * Steady-state dq voltages, V (peak phase), at currents (A) and electrical speed ωe (rad/s):
 * vd = Rs·id − ωe·Lq·iq, vq = Rs·iq + ωe·(Ld·id + ψ) (standard PM synchronous machine equations).
 */
export function steadyStateVoltage(m: DqMachine, idA: number, iqA: number, omegaERadS: number): { vdV: number; vqV: number } {
  return {
    vdV: m.rsOhm * idA - omegaERadS * m.lqH * iqA,
    vqV: m.rsOhm * iqA + omegaERadS * (m.ldH * idA + m.fluxWb),
  };
}

/** |v|², V², of the steady-state voltage above (no allocation). */
function voltageSq(m: DqMachine, id: number, iq: number, we: number): number {
  const vd = m.rsOhm * id - we * m.lqH * iq;
  const vq = m.rsOhm * iq + we * (m.ldH * id + m.fluxWb);
  return vd * vd + vq * vq;
}

/** MTPA torque, N·m, at peak current I, A. */
function mtpaTorque(m: DqMachine, currentA: number): number {
  const id = mtpaDAxisCurrentA(currentA, m.ldH, m.lqH, m.fluxWb);
  const iq = Math.sqrt(Math.max(0, currentA * currentA - id * id));
  return dqTorqueNm(m.polePairs, m.fluxWb, m.ldH, m.lqH, id, iq);
}

/** q-axis current, A, on the constant-torque curve for torque T (N·m) at d-axis current id (A). */
function iqOnCurve(m: DqMachine, torqueNm: number, id: number): number {
  return torqueNm / (1.5 * m.polePairs * (m.fluxWb + (m.ldH - m.lqH) * id));
}

/** Squared voltage margin |v|² − V_max², V², on the constant-torque curve. */
function voltageExcess(m: DqMachine, torqueNm: number, we: number, id: number): number {
  return voltageSq(m, id, iqOnCurve(m, torqueNm, id), we) - m.maxVoltageV * m.maxVoltageV;
}

/**
 * Least-current operating point for electromagnetic torque T (N·m, signed) at electrical speed ωe
 * (rad/s, >= 0). Writes id, iq (A) into out[0], out[1]. Returns 0 when unreachable, 1 for MTPA,
 * 2 when on the voltage limit. Method in the module comment.
 */
function solvePoint(m: DqMachine, torqueNm: number, we: number, out: Float64Array): number {
  const iMax = m.maxCurrentA;
  const tAbs = Math.abs(torqueNm);
  // 1. MTPA current for |T|: bisection of the increasing MTPA torque over [0, I_max].
  let lo = 0;
  let hi = iMax;
  if (tAbs > 0) {
    if (mtpaTorque(m, iMax) < tAbs * (1 - 1e-12)) return 0;
    for (let k = 0; k < BISECT_STEPS; k++) {
      const mid = 0.5 * (lo + hi);
      if (mtpaTorque(m, mid) < tAbs) lo = mid;
      else hi = mid;
    }
  } else {
    hi = 0;
  }
  const idM = mtpaDAxisCurrentA(hi, m.ldH, m.lqH, m.fluxWb);
  const iMax2 = iMax * iMax * (1 + CURRENT_REL_TOL);
  if (voltageExcess(m, torqueNm, we, idM) <= 0) {
    const iq = iqOnCurve(m, torqueNm, idM);
    if (idM * idM + iq * iq > iMax2) return 0;
    out[0] = idM;
    out[1] = iq;
    return 1;
  }
  // 2. Least-voltage point on [−I_max, idM] (golden section on a convex function).
  let a = -iMax;
  let b = idM;
  let x1 = b - GOLDEN * (b - a);
  let x2 = a + GOLDEN * (b - a);
  let g1 = voltageExcess(m, torqueNm, we, x1);
  let g2 = voltageExcess(m, torqueNm, we, x2);
  for (let k = 0; k < GOLDEN_STEPS; k++) {
    if (g1 <= g2) {
      b = x2;
      x2 = x1;
      g2 = g1;
      x1 = b - GOLDEN * (b - a);
      g1 = voltageExcess(m, torqueNm, we, x1);
    } else {
      a = x1;
      x1 = x2;
      g1 = g2;
      x2 = a + GOLDEN * (b - a);
      g2 = voltageExcess(m, torqueNm, we, x2);
    }
  }
  let idV = g1 <= g2 ? x1 : x2;
  let gV = Math.min(g1, g2);
  const gA = voltageExcess(m, torqueNm, we, -iMax);
  if (gA < gV) {
    idV = -iMax;
    gV = gA;
  }
  if (gV > 0) return 0;
  // 3. Voltage-limit crossing nearest the MTPA point: bisection keeping the feasible end.
  lo = idV;
  hi = idM;
  for (let k = 0; k < BISECT_STEPS; k++) {
    const mid = 0.5 * (lo + hi);
    if (voltageExcess(m, torqueNm, we, mid) <= 0) lo = mid;
    else hi = mid;
  }
  const iq = iqOnCurve(m, torqueNm, lo);
  if (lo * lo + iq * iq > iMax2) return 0;
  out[0] = lo;
  out[1] = iq;
  return 2;
}

/**
 * Least-current operating point for an electromagnetic torque (N·m, either sign) at electrical
 * speed ωe (rad/s, >= 0): MTPA while the voltage allows, else on the voltage limit (field
 * weakening, up to MTPV). Null when the torque is not reachable within both limits.
 */
export function operatingPoint(m: DqMachine, torqueNm: number, omegaERadS: number): DqOperatingPoint | null {
  const out = new Float64Array(2);
  const r = solvePoint(m, torqueNm, omegaERadS, out);
  if (r === 0) return null;
  const idA = out[0]!;
  const iqA = out[1]!;
  return {
    idA,
    iqA,
    currentA: Math.hypot(idA, iqA),
    voltageV: Math.sqrt(voltageSq(m, idA, iqA, omegaERadS)),
    torqueNm: dqTorqueNm(m.polePairs, m.fluxWb, m.ldH, m.lqH, idA, iqA),
    region: r === 1 ? 'mtpa' : 'field-weakening',
  };
}

/** Largest reachable torque magnitude (N·m) in direction sign (±1) at ωe (rad/s); bisection on torque. */
function envelopeSide(m: DqMachine, sign: number, we: number, out: Float64Array): { torque: number; limit: EnvelopeLimit } {
  // Not even zero torque fits: the voltage limit alone rules the speed out.
  if (solvePoint(m, 0, we, out) === 0) return { torque: Number.NaN, limit: 'mtpv' };
  let lo = 0;
  let hi = mtpaTorque(m, m.maxCurrentA);
  if (solvePoint(m, sign * hi, we, out) !== 0) {
    lo = hi;
  } else {
    for (let k = 0; k < BISECT_STEPS; k++) {
      const mid = 0.5 * (lo + hi);
      if (solvePoint(m, sign * mid, we, out) !== 0) lo = mid;
      else hi = mid;
    }
  }
  solvePoint(m, sign * lo, we, out);
  const i = Math.hypot(out[0]!, out[1]!);
  const v = Math.sqrt(voltageSq(m, out[0]!, out[1]!, we));
  const onV = v >= m.maxVoltageV * (1 - BINDING_REL_TOL);
  const onI = i >= m.maxCurrentA * (1 - BINDING_REL_TOL);
  const limit: EnvelopeLimit = !onV ? 'mtpa' : onI ? 'field-weakening' : 'mtpv';
  return { torque: sign * lo, limit };
}

/**
 * Electromagnetic torque envelope, N·m, at electrical speed ωe (rad/s, >= 0) from the current
 * circle and the voltage ellipse (Morimoto et al. 1990). Motoring and generating are solved
 * separately: with Rs > 0 the resistive drop adds to the back-EMF when motoring and opposes it when
 * generating (|v|² = Rs²·I² + ωe²·ψs² + (4/3)·Rs·ωe·T/p), so above base speed |min| >= max.
 */
export function torqueEnvelope(m: DqMachine, omegaERadS: number): DqEnvelopePoint {
  const out = new Float64Array(2);
  const hi = envelopeSide(m, 1, omegaERadS, out);
  const lo = envelopeSide(m, -1, omegaERadS, out);
  return { maxTorqueNm: hi.torque, minTorqueNm: lo.torque, maxLimit: hi.limit, minLimit: lo.limit };
}

/**
 * Motoring base speed, electrical rad/s: where MTPA at I_max meets V_max. With currents fixed,
 * |v|² = ψs²·ωe² + 2·Rs·iq·(ψ + (Ld − Lq)·id)·ωe + Rs²·I² is a quadratic in ωe; its positive root.
 */
function baseSpeedElectrical(m: DqMachine): number {
  const id = mtpaDAxisCurrentA(m.maxCurrentA, m.ldH, m.lqH, m.fluxWb);
  const iq = Math.sqrt(Math.max(0, m.maxCurrentA * m.maxCurrentA - id * id));
  const fd = m.ldH * id + m.fluxWb;
  const fq = m.lqH * iq;
  const a = fd * fd + fq * fq;
  const b = 2 * m.rsOhm * iq * (m.fluxWb + (m.ldH - m.lqH) * id);
  const c = m.rsOhm * m.rsOhm * m.maxCurrentA * m.maxCurrentA - m.maxVoltageV * m.maxVoltageV;
  return (-b + Math.sqrt(b * b - 4 * a * c)) / (2 * a);
}

function invalid(message: string, path: string): never {
  throw new ModelError('map-invalid', message, path);
}

/** Builds the SI drive from a document and checks that its physics makes a usable machine. */
export function dqDriveFromDoc(doc: DqModelDoc): DqDrive {
  const positive: [keyof DqModelDoc, number][] = [
    ['polePairs', doc.polePairs],
    ['statorResistanceOhm', doc.statorResistanceOhm],
    ['ldH', doc.ldH],
    ['lqH', doc.lqH],
    ['fluxLinkageWb', doc.fluxLinkageWb],
    ['maxCurrentA', doc.maxCurrentA],
    ['dcVoltageV', doc.dcVoltageV],
    ['maxSpeedRpm', doc.maxSpeedRpm],
  ];
  for (const [field, v] of positive) {
    if (!(Number.isFinite(v) && v > 0)) invalid(`${field} must be a finite number above 0`, field);
  }
  const nonNegative: [string, number][] = [
    ['ironLoss.hysteresisWPerHz', doc.ironLoss.hysteresisWPerHz],
    ['ironLoss.eddyWPerHz2', doc.ironLoss.eddyWPerHz2],
    ['mechanicalLoss.frictionNm', doc.mechanicalLoss.frictionNm],
    ['mechanicalLoss.viscousNmPerRadS', doc.mechanicalLoss.viscousNmPerRadS],
    ['inverterLoss.constantW', doc.inverterLoss.constantW],
    ['inverterLoss.perAmpW', doc.inverterLoss.perAmpW],
    ['inverterLoss.resistanceOhm', doc.inverterLoss.resistanceOhm],
  ];
  for (const [field, v] of nonNegative) {
    if (!(Number.isFinite(v) && v >= 0)) invalid(`${field} must be a finite number >= 0`, field);
  }
  if (doc.lqH < doc.ldH) {
    invalid(`this model expects an interior or surface magnet machine, Lq >= Ld (Ld = ${doc.ldH} H, Lq = ${doc.lqH} H)`, 'lqH');
  }
  const d: DqDrive = {
    polePairs: doc.polePairs,
    rsOhm: doc.statorResistanceOhm,
    ldH: doc.ldH,
    lqH: doc.lqH,
    fluxWb: doc.fluxLinkageWb,
    maxCurrentA: doc.maxCurrentA,
    maxVoltageV: maxPhaseVoltageV(doc.dcVoltageV),
    hysteresisWPerHz: doc.ironLoss.hysteresisWPerHz,
    eddyWPerHz2: doc.ironLoss.eddyWPerHz2,
    frictionNm: doc.mechanicalLoss.frictionNm,
    viscousNmPerRadS: doc.mechanicalLoss.viscousNmPerRadS,
    inverterConstantW: doc.inverterLoss.constantW,
    inverterPerAmpW: doc.inverterLoss.perAmpW,
    inverterResistanceOhm: doc.inverterLoss.resistanceOhm,
  };
  const rsDrop = d.rsOhm * d.maxCurrentA;
  if (rsDrop >= d.maxVoltageV) {
    invalid(
      `the resistive drop Rs·I_max = ${fmt(rsDrop)} V reaches the voltage limit V_dc/√3 = ${fmt(d.maxVoltageV)} V: the machine cannot carry full current even at standstill`,
      'statorResistanceOhm',
    );
  }
  const t0 = mtpaTorque(d, d.maxCurrentA);
  if (!(Number.isFinite(t0) && t0 > 0)) {
    invalid(`the machine produces no torque at standstill (1.5·p·(ψ·iq + (Ld − Lq)·id·iq) = ${t0} N·m at I_max)`, 'fluxLinkageWb');
  }
  return d;
}

/** Motoring base speed, rpm: where MTPA at I_max meets the voltage limit V_dc/√3 (Rs included). */
export function baseSpeedRpm(doc: DqModelDoc): number {
  const d = dqDriveFromDoc(doc);
  return baseSpeedElectrical(d) / d.polePairs / RAD_S_PER_RPM;
}

/** Drag torque, N·m, at mechanical speed ω >= 0 (rad/s): T_f + b·ω while turning, 0 at standstill. */
function dragTorque(d: DqDrive, w: number): number {
  return w > 0 ? d.frictionNm + d.viscousNmPerRadS * w : 0;
}

/**
 * Loss (W) from DC terminals to shaft at a forward mechanical speed ω >= 0 (rad/s) and shaft torque
 * (N·m); NaN when unreachable. The machine's electromagnetic torque covers the shaft torque plus drag.
 * Terms (all >= 0):
 * - copper 1.5·Rs·(id² + iq²) (amplitude-invariant dq);
 * - iron (k_h·f_e + k_e·f_e²)·(ψ_s/ψ)², f_e = ωe/2π in Hz, ψ_s = √((Ld·id + ψ)² + (Lq·iq)²): the
 *   Steinmetz-type hysteresis + eddy-current frequency terms; scaling both by the squared stator
 *   flux relative to the magnet flux is a modelling choice of this program;
 * - mechanical T_f·|ω| + b·ω² (Coulomb + viscous drag);
 * - inverter P0 + k·I + 1.5·R_inv·I², I the peak current magnitude (standing, switching/diode,
 *   conduction).
 */
function lossInto(d: DqDrive, w: number, shaftTorqueNm: number, out: Float64Array): number {
  return lossAtElectromagnetic(d, w, shaftTorqueNm + dragTorque(d, w), out);
}

/** The loss above for a given electromagnetic torque (N·m) at mechanical speed ω >= 0 (rad/s). */
function lossAtElectromagnetic(d: DqDrive, w: number, emTorqueNm: number, out: Float64Array): number {
  const we = d.polePairs * w;
  if (solvePoint(d, emTorqueNm, we, out) === 0) return Number.NaN;
  const id = out[0]!;
  const iq = out[1]!;
  const i2 = id * id + iq * iq;
  const copper = 1.5 * d.rsOhm * i2;
  const fe = we / (2 * Math.PI);
  const fd = d.ldH * id + d.fluxWb;
  const fq = d.lqH * iq;
  const iron = (d.hysteresisWPerHz * fe + d.eddyWPerHz2 * fe * fe) * ((fd * fd + fq * fq) / (d.fluxWb * d.fluxWb));
  const mech = d.frictionNm * w + d.viscousNmPerRadS * w * w;
  const i = Math.sqrt(i2);
  const inverter = d.inverterConstantW + d.inverterPerAmpW * i + 1.5 * d.inverterResistanceOhm * i2;
  return copper + iron + mech + inverter;
}

/** Loss (W) at a forward shaft speed (rpm, >= 0) and shaft torque (N·m); null when unreachable. */
export function dqLossW(d: DqDrive, speedRpm: number, torqueNm: number): number | null {
  const l = lossInto(d, speedRpm * RAD_S_PER_RPM, torqueNm, new Float64Array(2));
  return Number.isNaN(l) ? null : l;
}

/** Shaft torque envelope (N·m) at a forward mechanical speed (rad/s): electromagnetic envelope minus drag. */
function shaftEnvelope(d: DqDrive, w: number): { max: number; min: number; emMax: number; emMin: number; maxLimit: EnvelopeLimit } {
  const e = torqueEnvelope(d, d.polePairs * w);
  const drag = dragTorque(d, w);
  return { max: e.maxTorqueNm - drag, min: e.minTorqueNm - drag, emMax: e.maxTorqueNm, emMin: e.minTorqueNm, maxLimit: e.maxLimit };
}

/** Highest speed (rad/s) below wTop at which the machine still holds zero shaft torque; bisection. */
function noLoadSpeedLimit(d: DqDrive, wTop: number, out: Float64Array): number {
  let lo = 0;
  let hi = wTop;
  for (let k = 0; k < BISECT_STEPS; k++) {
    const mid = 0.5 * (lo + hi);
    if (solvePoint(d, dragTorque(d, mid), d.polePairs * mid, out) !== 0) lo = mid;
    else hi = mid;
  }
  return lo;
}

function fmt(x: number): string {
  return String(Math.round(x * 100) / 100);
}

/**
 * Canonical grid from a dq-model document: speeds 0..maxSpeedRpm (grid.speedSteps nodes), torques
 * symmetric over the widest envelope magnitude (grid.torqueSteps nodes, 0 a node when odd), the
 * shaft envelope and the loss at every node. Nodes beyond the envelope at their speed hold the loss
 * at the nearest envelope torque of that speed (counted as extrapolated) so bilinear interpolation
 * just inside the envelope stays finite and smooth.
 */
export function dqToGrid(doc: DqModelDoc): { grid: GridInput; provenance: MapProvenance } {
  const d = dqDriveFromDoc(doc);
  const nS = doc.grid.speedSteps;
  const nT = doc.grid.torqueSteps;
  const out = new Float64Array(2);
  const speedRpm: number[] = [];
  for (let i = 0; i < nS; i++) speedRpm.push(i === nS - 1 ? doc.maxSpeedRpm : (doc.maxSpeedRpm * i) / (nS - 1));

  const maxT: number[] = [];
  const minT: number[] = [];
  const emMax = new Float64Array(nS);
  const emMin = new Float64Array(nS);
  const limits: EnvelopeLimit[] = [];
  for (let i = 0; i < nS; i++) {
    const w = speedRpm[i]! * RAD_S_PER_RPM;
    const e = shaftEnvelope(d, w);
    if (!(e.max >= 0)) {
      const wTop = noLoadSpeedLimit(d, w, out);
      invalid(
        `with V_dc = ${doc.dcVoltageV} V (V_max = ${fmt(d.maxVoltageV)} V peak phase) the machine holds zero shaft torque only up to ${fmt(wTop / RAD_S_PER_RPM)} rpm, below maxSpeedRpm = ${doc.maxSpeedRpm}; raise dcVoltageV or lower maxSpeedRpm`,
        'dcVoltageV',
      );
    }
    maxT.push(e.max);
    minT.push(e.min);
    emMax[i] = e.emMax;
    emMin[i] = e.emMin;
    limits.push(e.maxLimit);
  }

  let span = 0;
  for (let i = 0; i < nS; i++) span = Math.max(span, maxT[i]!, -minT[i]!);
  const torqueNm: number[] = [];
  for (let j = 0; j < nT; j++) torqueNm.push(-span + (2 * span * j) / (nT - 1));
  torqueNm[0] = -span;
  torqueNm[nT - 1] = span;
  if (nT % 2 === 1) torqueNm[(nT - 1) / 2] = 0;

  let extrapolated = 0;
  const lossW: number[][] = [];
  for (let i = 0; i < nS; i++) {
    const w = speedRpm[i]! * RAD_S_PER_RPM;
    const drag = dragTorque(d, w);
    const row: number[] = [];
    for (let j = 0; j < nT; j++) {
      const t = torqueNm[j]!;
      if (t > maxT[i]! || t < minT[i]!) extrapolated++;
      // Electromagnetic torque, clamped to the envelope (also absorbs rounding of t + drag at its edge).
      const tEm = Math.min(emMax[i]!, Math.max(emMin[i]!, t + drag));
      const l = lossAtElectromagnetic(d, w, tEm, out);
      if (!Number.isFinite(l)) invalid(`no operating point at ${fmt(speedRpm[i]!)} rpm, ${fmt(t)} N·m inside the computed envelope`, 'grid');
      row.push(l);
    }
    lossW.push(row);
  }

  const wb = baseSpeedElectrical(d) / d.polePairs;
  const t0 = mtpaTorque(d, d.maxCurrentA);
  const charCurrent = d.fluxWb / d.ldH;
  const notes: string[] = [
    `base speed ${fmt(wb / RAD_S_PER_RPM)} rpm (motoring: MTPA at I_max = ${fmt(d.maxCurrentA)} A meets V_max = V_dc/√3 = ${fmt(d.maxVoltageV)} V); corner power ${fmt((t0 * wb) / 1000)} kW (${fmt(t0)} N·m electromagnetic)`,
  ];
  const mtpvFrom = limits.indexOf('mtpv');
  if (charCurrent < d.maxCurrentA) {
    notes.push(
      `characteristic current ψ/Ld = ${fmt(charCurrent)} A < I_max = ${fmt(d.maxCurrentA)} A: the voltage-ellipse centre lies inside the current circle, MTPV applies` +
        (mtpvFrom >= 0 ? ` (motoring envelope voltage-limited alone from about ${fmt(speedRpm[mtpvFrom]!)} rpm)` : ' but is not reached below maxSpeedRpm'),
    );
  } else {
    notes.push(`characteristic current ψ/Ld = ${fmt(charCurrent)} A >= I_max = ${fmt(d.maxCurrentA)} A: no MTPV region; field weakening runs on the current circle`);
  }
  notes.push(
    'envelope from the voltage and current limits, motoring and generating solved separately: with Rs > 0 the generating envelope reaches further above base speed; shaft torque = electromagnetic torque − drag (T_f + b·ω)',
    'iron loss (k_h·f_e + k_e·f_e²)·(ψ_s/ψ)²: scaling by the squared stator flux linkage is a modelling choice',
  );
  if (extrapolated > 0) {
    notes.push(`${extrapolated} grid cells beyond the envelope hold the loss at the nearest envelope torque of their speed (extrapolated)`);
  }
  return {
    grid: { speedRpm, torqueNm, lossW, maxTorqueNm: maxT, minTorqueNm: minT, maxSpeedRpm: doc.maxSpeedRpm, reverse: doc.reverse },
    provenance: {
      source: 'dq-model',
      filledCells: 0,
      extrapolatedCells: extrapolated,
      zeroSpeedLossChangeW: 0,
      zeroSpeedTorqueChangeNm: 0,
      notes,
    },
  };
}
