/**
 * Mode availability and dispatch (DESIGN.md §5): split always; ring-held needs a ring brake,
 * sun-held a sun brake, locked a lock-up clutch. Mode indices follow MODES.
 */
import { ModelError } from '../problem.js';
import { MODES, type Mode } from './types.js';
import type { Drivetrain } from './drivetrain.js';
import { MODE_LOCKED, MODE_RING_HELD, MODE_SPLIT, MODE_SUN_HELD } from './modeIndex.js';
import { solveSplit, splitRange } from './split.js';
import { heldCanTurn, solveHeld } from './held.js';
import { lockedCanTurn, solveLocked } from './locked.js';
import type { Candidate } from './work.js';

/**
 * Modes written as text, for query strings and the command line: comma-separated names from
 * MODES (repeats dropped). An empty entry or an unknown name is `invalid-request` at `field`.
 */
export function parseModeText(text: string, field: string): Mode[] {
  const list = text.split(',').map((s) => s.trim());
  for (const m of list) {
    if (!(MODES as readonly string[]).includes(m)) {
      throw new ModelError('invalid-request', `${field}: ${m === '' ? 'an empty entry' : `unknown mode "${m}"`}; the modes are ${MODES.join(', ')}`, field);
    }
  }
  return [...new Set(list)] as Mode[];
}

/** Bit mask of the modes to consider: those requested (all when omitted) that the hardware allows. */
export function modeMask(dt: Drivetrain, modes?: readonly Mode[]): number {
  let mask = 0;
  for (let m = 0; m < MODES.length; m++) {
    if (!dt.modeAvailable[m]) continue;
    if (modes && !modes.includes(MODES[m]!)) continue;
    mask |= 1 << m;
  }
  return mask;
}

/** Whether mode m can turn at carrier speed ω_c (rad/s) within speed limits and reverse permission. */
export function modeCanTurn(dt: Drivetrain, m: number, wc: number): boolean {
  switch (m) {
    case MODE_SPLIT:
      return splitRange(dt, wc);
    case MODE_RING_HELD:
      return heldCanTurn(dt, true, wc);
    case MODE_SUN_HELD:
      return heldCanTurn(dt, false, wc);
    default:
      return lockedCanTurn(dt, wc);
  }
}

/** Best setting of mode m at carrier speed ω_c (rad/s) and torque T_out (N·m), all limits applied. */
export function solveMode(dt: Drivetrain, m: number, wc: number, tout: number, out: Candidate): boolean {
  switch (m) {
    case MODE_SPLIT:
      return solveSplit(dt, wc, tout, out);
    case MODE_RING_HELD:
      return solveHeld(dt, true, wc, tout, out);
    case MODE_SUN_HELD:
      return solveHeld(dt, false, wc, tout, out);
    case MODE_LOCKED:
      return solveLocked(dt, wc, tout, out);
    default:
      return false;
  }
}

/** Cheapest first: held modes (one setting), locked (one speed), split. */
const PROBE_ORDER = [MODE_RING_HELD, MODE_SUN_HELD, MODE_LOCKED, MODE_SPLIT];

/** Whether any mode in `mask` has a feasible setting at ω_c (rad/s), T_out (N·m). */
export function anyFeasible(dt: Drivetrain, mask: number, wc: number, tout: number): boolean {
  const c = dt.work.spare;
  for (const m of PROBE_ORDER) {
    if (mask & (1 << m) && solveMode(dt, m, wc, tout, c)) return true;
  }
  return false;
}
