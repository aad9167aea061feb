/**
 * Mode-switch margin for lookup tables: cleaner mode boundaries for a controller at a bounded
 * cost in battery power.
 *
 * Definition. Each feasible cell c has its optimum mode b(c) with battery power W_b(c) and, for
 * every other feasible mode m, the best setting of that mode with battery power W_m(c). The
 * modes allowed at c are those with W_m(c) <= W_b(c) + marginW. For a labelling L, d_c(m) is the
 * number of feasible 4-neighbours of c (±1 along speed, ±1 along torque) whose label is not m.
 * Starting from L = b, cells are visited in row-major order (speed outer, torque inner), sweep
 * after sweep; a cell takes the allowed mode with the smallest (d_c(m), W_m(c)) in
 * lexicographic order if that pair is smaller than the pair of its current label. A cell thus
 * keeps the mode of the majority of its neighbours while that costs at most marginW more.
 * Every change either lowers the number of differing neighbour pairs or keeps it and lowers the
 * cell's battery power, so the count never rises above the plain optimum's and the sweeps end
 * (at a local minimum of that count; also capped at {@link MAX_SWEEPS}).
 * With marginW = 0 the table is the plain optimum and no relabelling is done.
 */
import { MODES } from './types.js';

export const MAX_SWEEPS = 100;
const N_MODES = MODES.length;

/**
 * Labels after the margin. `best[c]` is the optimum's mode code (0 when infeasible); `modeW`
 * holds W_m(c) at c·N_MODES + (code − 1), NaN where mode m is not feasible at c.
 */
export function applyModeMargin(
  nSpeed: number,
  nTorque: number,
  best: Uint8Array,
  modeW: Float64Array,
  marginW: number,
): Uint8Array {
  const labels = Uint8Array.from(best);
  if (!(marginW > 0)) return labels;
  const n = nSpeed * nTorque;
  // Cells with more than one allowed mode; only they can change.
  const candidates: number[] = [];
  for (let c = 0; c < n; c++) {
    const b = best[c]!;
    if (b === 0) continue;
    const limit = modeW[c * N_MODES + b - 1]! + marginW;
    let allowed = 0;
    for (let m = 0; m < N_MODES; m++) if (modeW[c * N_MODES + m]! <= limit) allowed++;
    if (allowed > 1) candidates.push(c);
  }
  for (let sweep = 0; sweep < MAX_SWEEPS; sweep++) {
    let changed = false;
    for (const c of candidates) {
      const i = (c / nTorque) | 0;
      const j = c - i * nTorque;
      const limit = modeW[c * N_MODES + best[c]! - 1]! + marginW;
      const cur = labels[c]!;
      let bestD = differing(labels, c, i, j, nSpeed, nTorque, cur);
      let bestWm = modeW[c * N_MODES + cur - 1]!;
      let choice = cur;
      for (let code = 1; code <= N_MODES; code++) {
        if (code === cur) continue;
        const w = modeW[c * N_MODES + code - 1]!;
        if (!(w <= limit)) continue;
        const d = differing(labels, c, i, j, nSpeed, nTorque, code);
        if (d < bestD || (d === bestD && w < bestWm)) {
          bestD = d;
          bestWm = w;
          choice = code;
        }
      }
      if (choice !== cur) {
        labels[c] = choice;
        changed = true;
      }
    }
    if (!changed) break;
  }
  return labels;
}

/** Feasible 4-neighbours of cell c whose label differs from `code`. */
function differing(labels: Uint8Array, c: number, i: number, j: number, nS: number, nT: number, code: number): number {
  let d = 0;
  if (i > 0) d += neighbourDiffers(labels[c - nT]!, code);
  if (i < nS - 1) d += neighbourDiffers(labels[c + nT]!, code);
  if (j > 0) d += neighbourDiffers(labels[c - 1]!, code);
  if (j < nT - 1) d += neighbourDiffers(labels[c + 1]!, code);
  return d;
}

function neighbourDiffers(label: number, code: number): number {
  return label !== 0 && label !== code ? 1 : 0;
}

/** Neighbouring pairs of feasible cells whose mode codes differ, per axis. */
export function countModeChanges(
  nSpeed: number,
  nTorque: number,
  mode: Uint8Array,
): { alongSpeed: number; alongTorque: number } {
  let alongSpeed = 0;
  let alongTorque = 0;
  for (let i = 0; i < nSpeed; i++) {
    for (let j = 0; j < nTorque; j++) {
      const c = i * nTorque + j;
      const m = mode[c]!;
      if (m === 0) continue;
      if (j + 1 < nTorque && mode[c + 1]! !== 0 && mode[c + 1]! !== m) alongTorque++;
      if (i + 1 < nSpeed && mode[c + nTorque]! !== 0 && mode[c + nTorque]! !== m) alongSpeed++;
    }
  }
  return { alongSpeed, alongTorque };
}

/** Largest absolute difference of a field between neighbouring feasible cells (both axes). */
export function maxNeighbourJump(nSpeed: number, nTorque: number, feasible: Uint8Array, values: Float64Array): number {
  let jump = 0;
  for (let i = 0; i < nSpeed; i++) {
    for (let j = 0; j < nTorque; j++) {
      const c = i * nTorque + j;
      if (feasible[c] !== 1) continue;
      const v = values[c]!;
      if (j + 1 < nTorque && feasible[c + 1] === 1) jump = Math.max(jump, Math.abs(values[c + 1]! - v));
      if (i + 1 < nSpeed && feasible[c + nTorque] === 1) jump = Math.max(jump, Math.abs(values[c + nTorque]! - v));
    }
  }
  return jump;
}
