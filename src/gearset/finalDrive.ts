/**
 * Final drive between carrier and wheels: ratio i (carrier speed / wheel speed) and efficiency η
 * applied in the direction of power flow (common practice for a fixed-ratio gear stage).
 * Speeds in rad/s, torques in N·m, powers in W.
 */

/** Carrier speed (rad/s) from wheel speed (rad/s): ω_c = i·ω_wheel. */
export function carrierFromWheelSpeed(ratio: number, wheelRadS: number): number {
  return ratio * wheelRadS;
}

/**
 * Carrier torque (N·m) needed for a wheel torque (N·m) at a wheel speed (rad/s):
 * T_out = T_wheel/(i·η) when T_wheel·ω_wheel >= 0 (power to the wheels, also in reverse and at
 * standstill), T_out = T_wheel·η/i otherwise.
 */
export function carrierFromWheelTorque(ratio: number, efficiency: number, wheelTorqueNm: number, wheelRadS: number): number {
  return wheelTorqueNm * wheelRadS >= 0 ? wheelTorqueNm / (ratio * efficiency) : (wheelTorqueNm * efficiency) / ratio;
}

/**
 * Wheel torque (N·m) delivered by a carrier torque (N·m) at a carrier speed (rad/s), the inverse
 * of {@link carrierFromWheelTorque}: T_wheel = T_out·i·η when T_out·ω_c >= 0, else T_out·i/η.
 */
export function wheelFromCarrierTorque(ratio: number, efficiency: number, carrierTorqueNm: number, carrierRadS: number): number {
  return carrierTorqueNm * carrierRadS >= 0 ? carrierTorqueNm * ratio * efficiency : (carrierTorqueNm * ratio) / efficiency;
}

/** Final-drive loss (W) = T_out·ω_c − T_wheel·ω_wheel >= 0 for a wheel torque (N·m) and speed (rad/s). */
export function finalDriveLoss(ratio: number, efficiency: number, wheelTorqueNm: number, wheelRadS: number): number {
  const tOut = carrierFromWheelTorque(ratio, efficiency, wheelTorqueNm, wheelRadS);
  return tOut * ratio * wheelRadS - wheelTorqueNm * wheelRadS;
}
