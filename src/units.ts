/**
 * Unit conversions and shared numeric types. Interfaces speak rpm, N·m, W, Wh, km/h;
 * the core computes in SI (rad/s, J, m/s) and converts at the edges only.
 */

/** 1 rpm = 2π/60 rad/s (definition of the revolution per minute). */
export const RAD_S_PER_RPM = (2 * Math.PI) / 60;

/** Standard gravity, m/s² (CGPM 1901, exact by definition). */
export const STANDARD_GRAVITY = 9.80665;

/** Air density at sea level, 15 °C, kg/m³ (ISO 2533 standard atmosphere). */
export const SEA_LEVEL_AIR_DENSITY = 1.225;

/** Joules in one watt-hour. */
export const J_PER_WH = 3600;

/** Speed in rpm → rad/s. */
export function rpmToRadS(rpm: number): number {
  return rpm * RAD_S_PER_RPM;
}

/** Speed in rad/s → rpm. */
export function radSToRpm(radS: number): number {
  return radS / RAD_S_PER_RPM;
}

/** Vehicle speed km/h → m/s. */
export function kphToMs(kph: number): number {
  return kph / 3.6;
}

/** Vehicle speed m/s → km/h. */
export function msToKph(ms: number): number {
  return ms * 3.6;
}

/** Energy J → Wh. */
export function joulesToWh(j: number): number {
  return j / J_PER_WH;
}

/**
 * Loss (W) from efficiency at a shaft power (W). Motoring (pMech > 0):
 * P_loss = P_mech·(1/η − 1); generating (pMech < 0): P_loss = |P_mech|·(1 − η).
 * Undefined (NaN) at pMech = 0, where efficiency carries no information.
 */
export function lossFromEfficiency(pMechW: number, efficiency: number): number {
  if (pMechW > 0) return pMechW * (1 / efficiency - 1);
  if (pMechW < 0) return -pMechW * (1 - efficiency);
  return Number.NaN;
}

/**
 * Efficiency (0..1) from shaft power and loss: motoring P_mech/(P_mech + P_loss),
 * generating (|P_mech| − P_loss)/|P_mech|. Null where undefined (zero shaft power).
 */
export function efficiencyFromLoss(pMechW: number, lossW: number): number | null {
  if (pMechW > 0) return pMechW / (pMechW + lossW);
  if (pMechW < 0) return (-pMechW - lossW) / -pMechW;
  return null;
}
