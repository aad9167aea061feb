/**
 * Result types of the per-point optimum (DESIGN.md §6). Speeds in rpm, torques in N·m, powers
 * in W at this interface.
 */

export const MODES = ['split', 'ring-held', 'sun-held', 'locked'] as const;
export type Mode = (typeof MODES)[number];

/** One machine's operating state. A held machine reports speed 0, torque 0, no loss. */
export interface MachineState {
  speedRpm: number;
  torqueNm: number;
  /** DC-side electrical power, W (motoring > 0, generating < 0). */
  electricalW: number;
  lossW: number;
  /** Machine+inverter efficiency (DESIGN.md §2); null at zero shaft power. */
  efficiency: number | null;
}

/**
 * Limits that can bind at an answer. Machine limits are prefixed by the machine, e.g.
 * `sun-max-torque`, `ring-min-torque`, `ring-max-speed`, `sun-no-reverse` (split mode: a machine
 * that may not turn backwards stands still); others: `battery-discharge`, `battery-charge`,
 * `ring-brake-capacity`, `sun-brake-capacity`, `clutch-capacity`.
 */
export type BindingLimit = string;

/** The best setting found for one mode at one wheel point. */
export interface ModeSetting {
  mode: Mode;
  sun: MachineState;
  ring: MachineState;
  meshLossW: number;
  finalDriveLossW: number;
  /** Power drawn by brakes and clutch in their states for this mode, W. */
  deviceW: number;
  auxiliaryW: number;
  /** P_batt = P_elec,sun + P_elec,ring + P_aux + P_devices, W. */
  batteryW: number;
  /**
   * Motoring: wheel power / battery power; braking: battery power recovered / wheel power
   * absorbed electrically. Null where undefined (standstill, zero torque, or no net flow).
   */
  systemEfficiency: number | null;
  binding: BindingLimit[];
  /** Wheel torque delivered by the machines, N·m (differs from the request when friction brakes help). */
  electricWheelTorqueNm: number;
  /** Friction-brake share of the requested braking torque, N·m, a positive magnitude (0 if none). */
  frictionBrakeNm: number;
}

export type InfeasibleReason =
  | 'above-max-speed'
  | 'above-motoring-limit'
  | 'above-braking-limit'
  | 'battery-limit'
  | 'no-mode-available';

/**
 * Answer for one wheel point. When feasible, every field of {@link ModeSetting} is present
 * (the optimum, flattened); when infeasible, `reason` and the wheel-torque limits are.
 */
export interface PointResult extends Partial<ModeSetting> {
  wheelSpeedRpm: number;
  wheelTorqueNm: number;
  feasible: boolean;
  /** Present when infeasible. */
  reason?: InfeasibleReason;
  /** Present when infeasible: largest motoring wheel torque (>= 0) available at this wheel speed, N·m. */
  maxMotoringWheelNm?: number;
  /** Present when infeasible: largest braking wheel torque (a magnitude >= 0) at this speed, N·m. */
  maxBrakingWheelNm?: number;
  /** The best setting of each other feasible mode, best first (empty when infeasible). */
  alternatives: ModeSetting[];
}

export interface SolveOptions {
  /** Restrict to these modes (still only those the devices allow). */
  modes?: readonly Mode[];
  /** When true, braking beyond what the machines/battery absorb is infeasible instead of using friction brakes. */
  strict?: boolean;
  /** When false, only the optimum is built and `alternatives` stays empty (default true). */
  alternatives?: boolean;
}
