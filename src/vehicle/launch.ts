/**
 * Launch and top-speed checks of a drivetrain in a vehicle (flat road, still air).
 * Launch: the largest wheel torque available at standstill, every limit applied. Top speed: the
 * first speed, rising from standstill, at which the largest motoring wheel torque no longer
 * covers the steady road load F(v)·r (src/vehicle/roadLoad.ts with a = 0), or the highest speed
 * any mode can turn at, whichever comes first.
 */
import { kphToMs, msToKph, radSToRpm } from '../units.js';
import type { Drivetrain } from '../solver/drivetrain.js';
import { describeDrivetrain } from '../solver/drivetrain.js';
import { wheelTorqueLimits } from '../solver/envelope.js';
import type { SolveOptions } from '../solver/types.js';
import { roadLoadForceN } from './roadLoad.js';
import type { Vehicle } from './schema.js';

/** Coarse scan step of the top-speed search, km/h; the crossing is then bisected to {@link TOP_SPEED_TOL_KPH}. */
export const TOP_SPEED_SCAN_KPH = 2;
export const TOP_SPEED_TOL_KPH = 0.05;

export interface LaunchCheck {
  /** Largest wheel torque at standstill, N·m. */
  launchWheelTorqueNm: number;
  /** Launch acceleration on a flat road from that torque, m/s² (rolling resistance is zero at standstill). */
  launchAccelMs2: number;
  /** Top speed on a flat road, km/h. */
  topSpeedKph: number;
  /** What limits the top speed. */
  topSpeedLimit: 'road-load' | 'machine-speed';
}

/** Launch torque and top speed of `dt` carrying `vehicle` (wheel radius: the vehicle's, else the drivetrain's). */
export function launchCheck(dt: Drivetrain, vehicle: Vehicle, opts: SolveOptions = {}): LaunchCheck {
  const r = vehicle.wheelRadiusM ?? dt.wheelRadiusM;
  const launch = wheelTorqueLimits(dt, 0, opts).maxMotoringWheelNm;
  const facts = describeDrivetrain(dt);
  const vMaxKph = msToKph(((facts.maxWheelSpeedRpm * Math.PI) / 30) * r);
  const surplus = (kph: number): number => {
    const v = kphToMs(kph);
    const rpm = radSToRpm(v / r);
    const lim = wheelTorqueLimits(dt, rpm, opts);
    return lim.maxMotoringWheelNm - roadLoadForceN(vehicle, v, 0, 0) * r;
  };
  let lo = 0;
  let hi = -1;
  for (let kph = TOP_SPEED_SCAN_KPH; kph < vMaxKph; kph += TOP_SPEED_SCAN_KPH) {
    if (surplus(kph) < 0) {
      hi = kph;
      break;
    }
    lo = kph;
  }
  let topSpeedKph: number;
  let topSpeedLimit: LaunchCheck['topSpeedLimit'] = 'road-load';
  if (hi < 0) {
    // No crossing below the kinematic limit: check the last stretch up to it.
    const edge = vMaxKph * (1 - 1e-9);
    if (edge > lo && surplus(edge) >= 0) {
      topSpeedKph = vMaxKph;
      topSpeedLimit = 'machine-speed';
      return { launchWheelTorqueNm: launch, launchAccelMs2: launchAccel(vehicle, launch, r), topSpeedKph, topSpeedLimit };
    }
    hi = Math.max(edge, lo);
  }
  while (hi - lo > TOP_SPEED_TOL_KPH) {
    const mid = 0.5 * (lo + hi);
    if (surplus(mid) >= 0) lo = mid;
    else hi = mid;
  }
  topSpeedKph = lo;
  // Nothing turns just above: the speed limit of the allowed modes, not the road load, stops it.
  const above = wheelTorqueLimits(dt, radSToRpm(kphToMs(hi) / r), opts);
  if (above.maxMotoringWheelNm === 0 && above.maxBrakingWheelNm === 0) topSpeedLimit = 'machine-speed';
  return { launchWheelTorqueNm: launch, launchAccelMs2: launchAccel(vehicle, launch, r), topSpeedKph, topSpeedLimit };
}

/** a = T/(r·m·(1 + δ)), m/s², on a flat road at standstill (no rolling or aerodynamic load). */
function launchAccel(v: Vehicle, torqueNm: number, r: number): number {
  return torqueNm / r / (v.massKg * (1 + v.rotatingMassFactor));
}
