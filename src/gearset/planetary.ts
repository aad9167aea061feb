/**
 * Simple planetary gear set: sun (s), ring (r), carrier (c), k = Zr/Zs (stationary ratio −k).
 * Speeds in rad/s, torques in N·m, powers in W.
 *
 * Kinematics: Willis equation ω_s + k·ω_r = (1 + k)·ω_c.
 * Torques: the machines apply T_s and T_r, the carrier delivers T_out = T_s + T_r. Mesh losses
 * follow the power flow in the carrier frame with the basic efficiency η0 (efficiency with the
 * carrier held): with Δ = ω_s − ω_c,
 *   T_out·Δ > 0 (sun delivers in the carrier frame): T_r = k·η0·T_s, mesh loss |T_s·Δ|·(1 − η0);
 *   T_out·Δ < 0 (ring delivers):                     T_r = (k/η0)·T_s, mesh loss |T_s·Δ|·(1/η0 − 1);
 *   Δ = 0: nothing slides, no mesh loss; static friction allows T_r/T_s anywhere in [k·η0, k/η0].
 * Source: H. W. Müller, Epicyclic Drive Trains (1982), power-flow method for simple planetary
 * sets; ratios as in Shigley's Mechanical Engineering Design, gear-train chapter.
 */

/** Ring speed (rad/s) from sun and carrier speeds (rad/s) by the Willis equation. */
export function ringSpeed(k: number, sunRadS: number, carrierRadS: number): number {
  return ((1 + k) * carrierRadS - sunRadS) / k;
}

/** Sun speed (rad/s) from ring and carrier speeds (rad/s) by the Willis equation. */
export function sunSpeed(k: number, ringRadS: number, carrierRadS: number): number {
  return (1 + k) * carrierRadS - k * ringRadS;
}

/** Carrier speed (rad/s) from sun and ring speeds (rad/s) by the Willis equation. */
export function carrierSpeed(k: number, sunRadS: number, ringRadS: number): number {
  return (sunRadS + k * ringRadS) / (1 + k);
}

/**
 * Divisor c with T_s = T_out/c for a power-flow regime: 1 + k·η0 when the sun delivers power in
 * the carrier frame, 1 + k/η0 when the ring delivers (Müller 1982, power-flow method).
 */
export function regimeDivisor(k: number, eta0: number, sunDelivers: boolean): number {
  return sunDelivers ? 1 + k * eta0 : 1 + k / eta0;
}

/** Whether the sun delivers power in the carrier frame: T_out·Δ > 0 (N·m, rad/s). */
export function sunDelivers(outTorqueNm: number, deltaRadS: number): boolean {
  return outTorqueNm * deltaRadS > 0;
}

/**
 * Sun torque (N·m) that carries T_out (N·m) at relative speed Δ = ω_s − ω_c (rad/s), Δ ≠ 0
 * (Müller 1982). At Δ = 0 the sun torque is free within {@link sunTorqueBand}.
 */
export function sunTorque(k: number, eta0: number, outTorqueNm: number, deltaRadS: number): number {
  return outTorqueNm / regimeDivisor(k, eta0, sunDelivers(outTorqueNm, deltaRadS));
}

/**
 * Range [lo, hi] (N·m) of sun torque at Δ = 0, where static friction allows any ratio
 * T_r/T_s between k·η0 and k/η0: T_s between T_out/(1 + k/η0) and T_out/(1 + k·η0).
 * Writes lo to out[0] and hi to out[1].
 */
export function sunTorqueBand(k: number, eta0: number, outTorqueNm: number, out: Float64Array | number[]): void {
  const a = outTorqueNm / (1 + k / eta0);
  const b = outTorqueNm / (1 + k * eta0);
  out[0] = a < b ? a : b;
  out[1] = a < b ? b : a;
}

/**
 * Mesh loss (W) for sun torque T_s (N·m) at Δ (rad/s), carrier torque T_out (N·m):
 * |T_s·Δ|·(1 − η0) when the sun delivers, |T_s·Δ|·(1/η0 − 1) when the ring delivers, 0 at Δ = 0
 * (Müller 1982).
 */
export function meshLoss(eta0: number, sunTorqueNm: number, outTorqueNm: number, deltaRadS: number): number {
  if (deltaRadS === 0) return 0;
  const p = Math.abs(sunTorqueNm * deltaRadS);
  return sunDelivers(outTorqueNm, deltaRadS) ? p * (1 - eta0) : p * (1 / eta0 - 1);
}

/** Ring held: sun-to-carrier speed ratio ω_s/ω_c = 1 + k (Shigley, gear-train chapter). */
export function ringHeldRatio(k: number): number {
  return 1 + k;
}

/** Sun held: ring-to-carrier speed ratio ω_r/ω_c = (1 + k)/k (Shigley, gear-train chapter). */
export function sunHeldRatio(k: number): number {
  return (1 + k) / k;
}

/**
 * Ring held, sun drives: efficiency motoring (1 + k·η0)/(1 + k); braking (power from the
 * carrier back to the sun) η0·(1 + k)/(k + η0) (Müller 1982).
 */
export function ringHeldEfficiency(k: number, eta0: number, motoring: boolean): number {
  return motoring ? (1 + k * eta0) / (1 + k) : (eta0 * (1 + k)) / (k + eta0);
}

/**
 * Sun held, ring drives: efficiency motoring (k + η0)/(1 + k); braking η0·(1 + k)/(1 + k·η0)
 * (Müller 1982).
 */
export function sunHeldEfficiency(k: number, eta0: number, motoring: boolean): number {
  return motoring ? (k + eta0) / (1 + k) : (eta0 * (1 + k)) / (1 + k * eta0);
}

/**
 * Divisor c (T_s = T_out/c) in a held mode. Ring held: Δ = k·ω_c; sun held: Δ = −ω_c. At
 * standstill (ω_c = 0) the relation of the motion the torque is about to start applies — ring
 * held: T_r = k·η0·T_s; sun held: T_r = (k/η0)·T_s — so launch torque is not overstated.
 */
export function heldDivisor(k: number, eta0: number, ringHeld: boolean, outTorqueNm: number, carrierRadS: number): number {
  if (carrierRadS === 0) return regimeDivisor(k, eta0, ringHeld);
  const delta = ringHeld ? k * carrierRadS : -carrierRadS;
  return regimeDivisor(k, eta0, sunDelivers(outTorqueNm, delta));
}
