/**
 * What the two best-first searches over pieces share (the split mode's sun-speed walk,
 * splitWalk.ts, and the torque share at one speed, torqueShare.ts): pieces come in blocks of at
 * most BLOCK_PIECES; each block gets a lower bound on the objective (sense·P_batt, so −P for the
 * battery-power maximum) from bounds [pLo, pHi] on P_batt, or +∞ when a limit is broken all
 * over it; blocks are visited in order of bound, ties by index, and a visit stops at the first
 * bound above the best value found. Ties between pieces go to the lowest piece index, which is
 * the answer of a plain left-to-right walk.
 */

/** Most pieces per block. */
export const BLOCK_PIECES = 8;

/**
 * Switches and counters, for tests and benchmarks: `prune` false visits every block in order
 * (the plain walk); `evaluations` counts piece-end evaluations of both searches.
 */
export const BLOCK_SEARCH = { prune: true, evaluations: 0 };

/**
 * Margin (W) for rounding: evaluated sums may differ from bounds built from the same terms in
 * the last bits. `magnitude` is the sum of the terms' magnitudes.
 */
export function roundingMargin(magnitude: number): number {
  return 1e-12 * magnitude + 1e-9;
}

/**
 * Bound on the objective of a block whose battery power lies within [pLo, pHi] (W, margins
 * included); +∞ when `out` (some limit is broken all over the block).
 */
export function objectiveBound(pLo: number, pHi: number, sense: number, out: boolean): number {
  if (!BLOCK_SEARCH.prune) return Number.NEGATIVE_INFINITY;
  if (out) return Number.POSITIVE_INFINITY;
  return sense > 0 ? pLo : -pHi;
}

/** Whether battery power within [pLo, pHi] breaks a battery limit all over (limits with tolerance). */
export function batteryOut(pLo: number, pHi: number, maxDischargeW: number, maxChargeW: number, tolP: number): boolean {
  return pLo > maxDischargeW + tolP || pHi < -maxChargeW - tolP;
}

/** Puts block b into order[0..b] sorted by bound, ties by block index (blocks arrive in index order). */
export function insertBlock(order: Int32Array, bounds: Float64Array, b: number): void {
  let j = b;
  while (j > 0 && bounds[order[j - 1]!]! > bounds[b]!) {
    order[j] = order[j - 1]!;
    j--;
  }
  order[j] = b;
}
