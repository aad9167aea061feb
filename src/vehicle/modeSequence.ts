/**
 * Least-energy mode sequence with a cost per mode switch, by dynamic programming over steps
 * (Bellman's principle of optimality; R. Bellman, Dynamic Programming, 1957). The state is the
 * mode held during a step; the cost of a step in a mode is its battery energy; a switch between
 * consecutive steps costs `switchCostWh`. The first step may start in any mode at no cost.
 *
 *   J_0(m) = E_0(m),   J_k(m) = E_k(m) + min( J_{k−1}(m), min_{m'≠m} J_{k−1}(m') + c )
 *
 * O(steps·modes) time; back-pointers recover the sequence.
 */

export interface ModeSequence {
  /** Least total energy Σ E_k(m_k) + c·switches, Wh. */
  totalWh: number;
  /** Energy part of the total (without switch costs), Wh. */
  energyWh: number;
  /** Number of switches in the best sequence. */
  switches: number;
  /** Mode index held in each step. */
  modes: Int8Array;
}

/**
 * Best mode sequence for step energies `energyWh` (row-major, steps × modes, Wh; +Infinity
 * where a mode is unavailable in a step) and a switch cost c >= 0 (Wh). Ties keep the mode held
 * in the previous step. Every step needs at least one finite entry.
 */
export function bestModeSequence(energyWh: Float64Array, steps: number, modes: number, switchCostWh: number): ModeSequence {
  if (!(switchCostWh >= 0)) throw new RangeError('switch cost must be >= 0');
  if (energyWh.length !== steps * modes) throw new RangeError('energy table size does not match steps × modes');
  const out: ModeSequence = { totalWh: 0, energyWh: 0, switches: 0, modes: new Int8Array(steps) };
  if (steps === 0) return out;
  let prev = new Float64Array(modes);
  let cur = new Float64Array(modes);
  /** from[k·modes + m]: mode held in step k−1 on the best path into (k, m). */
  const from = new Int8Array(steps * modes);
  for (let m = 0; m < modes; m++) prev[m] = energyWh[m]!;
  for (let k = 1; k < steps; k++) {
    let best = 0;
    for (let m = 1; m < modes; m++) if (prev[m]! < prev[best]!) best = m;
    for (let m = 0; m < modes; m++) {
      const stay = prev[m]!;
      const move = prev[best]! + switchCostWh;
      const e = energyWh[k * modes + m]!;
      if (stay <= move) {
        cur[m] = stay + e;
        from[k * modes + m] = m;
      } else {
        cur[m] = move + e;
        from[k * modes + m] = best;
      }
    }
    const t = prev;
    prev = cur;
    cur = t;
  }
  let last = 0;
  for (let m = 1; m < modes; m++) if (prev[m]! < prev[last]!) last = m;
  if (!Number.isFinite(prev[last]!)) throw new RangeError('some step has no available mode');
  out.totalWh = prev[last]!;
  let m = last;
  for (let k = steps - 1; k >= 0; k--) {
    out.modes[k] = m;
    out.energyWh += energyWh[k * modes + m]!;
    if (k > 0) {
      const p = from[k * modes + m]!;
      if (p !== m) out.switches++;
      m = p;
    }
  }
  return out;
}
