/**
 * Preallocated scratch for the per-point solver, so that no candidate evaluation allocates.
 * One instance per drivetrain; the solver is synchronous, so calls never interleave.
 */

/** The best setting of one mode, in SI units (rad/s, N·m, W). */
export interface Candidate {
  ok: boolean;
  /** Battery power, W. */
  p: number;
  /** Sun and ring member speeds, rad/s. */
  ws: number;
  wr: number;
  /** Sun and ring member torques, N·m (in a held mode, the held member's torque is the brake reaction). */
  ts: number;
  tr: number;
}

export interface SolverWork {
  /** Split-mode breakpoints in sun speed, rad/s. */
  readonly bp: Float64Array;
  /** Torque-share breakpoints in sun torque, N·m. */
  readonly tb: Float64Array;
  /** Objective and slacks at the two ends of a piece. */
  readonly ev: Float64Array;
  /** Envelope values (max, min) of two machines. */
  readonly env: Float64Array;
  /** Best setting per mode (index as MODES), and one spare. */
  readonly cand: Candidate[];
  readonly spare: Candidate;
  /** Split mode's Δ = 0 band candidate. */
  readonly band: Candidate;
  /**
   * Objective sense: +1 minimises battery power (the optimum), −1 maximises it (used to find the
   * battery-power range reachable at a wheel torque). Reset to +1 after use.
   */
  sense: number;
  /** Whether battery limits are constraints (false: machine and device limits only). */
  battery: boolean;
  /** Recent wheel-torque limits: [mode mask, wheel speed rad/s, max, −min] per entry, NaN when empty. */
  readonly limitCache: Float64Array;
  limitCacheNext: number;
}

export function newCandidate(): Candidate {
  return { ok: false, p: Number.NaN, ws: 0, wr: 0, ts: 0, tr: 0 };
}

export function createWork(speedBreakpoints: number, torqueBreakpoints: number): SolverWork {
  return {
    bp: new Float64Array(speedBreakpoints),
    tb: new Float64Array(torqueBreakpoints),
    ev: new Float64Array(16),
    env: new Float64Array(4),
    cand: [newCandidate(), newCandidate(), newCandidate(), newCandidate()],
    spare: newCandidate(),
    band: newCandidate(),
    sense: 1,
    battery: true,
    limitCache: new Float64Array(8 * 4).fill(Number.NaN),
    limitCacheNext: 0,
  };
}

