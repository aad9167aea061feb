/**
 * `grid` map documents → canonical grid input. A loss grid is taken as it is; an efficiency
 * grid is converted to loss with DESIGN.md §2 (motoring P_loss = P_mech·(1/η − 1), generating
 * P_loss = |P_mech|·(1 − η)).
 *
 * Cells with zero shaft power (zero speed or zero torque) carry no efficiency information and
 * are filled from neighbours:
 *  - zero torque at a speed n > 0: linear interpolation in torque between the nearest
 *    non-zero-torque nodes on either side at that speed (the nearest one if only one side exists);
 *  - zero speed: the loss of the next speed node at the same torque (constant in speed; the
 *    zero-speed column is afterwards made symmetric in torque by buildMachineMap).
 * The number of filled cells is reported in the provenance.
 */
import { ModelError } from '../problem.js';
import { lossFromEfficiency, RAD_S_PER_RPM } from '../units.js';
import type { GridInput, MapProvenance } from './map.js';
import type { GridMapDoc } from './schema.js';

export function gridToInput(doc: GridMapDoc): { grid: GridInput; provenance: MapProvenance } {
  const nS = doc.speedRpm.length;
  const nT = doc.torqueNm.length;
  const base: Omit<GridInput, 'lossW'> = {
    speedRpm: doc.speedRpm,
    torqueNm: doc.torqueNm,
    maxTorqueNm: doc.maxTorqueNm,
    minTorqueNm: doc.minTorqueNm,
    maxSpeedRpm: doc.maxSpeedRpm,
    reverse: doc.reverse,
  };
  const provenance: MapProvenance = {
    source: 'grid',
    filledCells: 0,
    extrapolatedCells: 0,
    zeroSpeedLossChangeW: 0,
    zeroSpeedTorqueChangeNm: 0,
    notes: [],
  };
  if (doc.lossW) return { grid: { ...base, lossW: doc.lossW }, provenance };

  const eff = doc.efficiency!;
  if (eff.length !== nS) throw new ModelError('map-invalid', `efficiency needs ${nS} rows (one per speed)`, 'efficiency');
  const loss: number[][] = [];
  const missing: boolean[][] = [];
  for (let i = 0; i < nS; i++) {
    const row = eff[i]!;
    if (row.length !== nT) throw new ModelError('map-invalid', `efficiency[${i}] needs ${nT} values (one per torque)`, `efficiency[${i}]`);
    const lrow: number[] = [];
    const mrow: boolean[] = [];
    for (let j = 0; j < nT; j++) {
      const pMech = doc.torqueNm[j]! * doc.speedRpm[i]! * RAD_S_PER_RPM;
      const e = row[j];
      if (pMech === 0) {
        lrow.push(Number.NaN);
        mrow.push(true);
        continue;
      }
      if (e === null || e === undefined) {
        throw new ModelError('map-invalid', `efficiency[${i}][${j}] is missing; only cells with zero shaft power may be null`, `efficiency[${i}][${j}]`);
      }
      lrow.push(lossFromEfficiency(pMech, e));
      mrow.push(false);
    }
    loss.push(lrow);
    missing.push(mrow);
  }
  let filled = 0;
  // Zero-torque cells at n > 0: interpolate along torque from given neighbours.
  for (let i = 0; i < nS; i++) {
    for (let j = 0; j < nT; j++) {
      if (!missing[i]![j] || doc.speedRpm[i] === 0) continue;
      let lo = j - 1;
      while (lo >= 0 && missing[i]![lo]) lo--;
      let hi = j + 1;
      while (hi < nT && missing[i]![hi]) hi++;
      const row = loss[i]!;
      if (lo >= 0 && hi < nT) {
        const u = (doc.torqueNm[j]! - doc.torqueNm[lo]!) / (doc.torqueNm[hi]! - doc.torqueNm[lo]!);
        row[j] = row[lo]! + u * (row[hi]! - row[lo]!);
      } else if (lo >= 0) row[j] = row[lo]!;
      else if (hi < nT) row[j] = row[hi]!;
      else throw new ModelError('map-invalid', `efficiency row ${i} has no cell with non-zero shaft power to fill from`, `efficiency[${i}]`);
      filled++;
    }
  }
  // Zero-speed column: the next speed node's loss at the same torque.
  for (let i = 0; i < nS; i++) {
    if (doc.speedRpm[i] !== 0) continue;
    if (i + 1 >= nS) throw new ModelError('map-invalid', 'speedRpm needs a node above 0 to fill the zero-speed column', 'speedRpm');
    for (let j = 0; j < nT; j++) {
      loss[i]![j] = loss[i + 1]![j]!;
      filled++;
    }
  }
  provenance.filledCells = filled;
  provenance.notes.push(
    `efficiency converted to loss; ${filled} zero-shaft-power cells filled from neighbours (zero torque: linear in torque; zero speed: next speed node)`,
  );
  return { grid: { ...base, lossW: loss }, provenance };
}
