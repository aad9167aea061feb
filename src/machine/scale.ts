/**
 * Torque scaling of a machine map for design sweeps.
 *
 * Scaling law assumed (common practice for first-cut sizing): the machine is lengthened or
 * shortened in the axial direction by the factor s with the same cross-section, rewound for the
 * same voltage (turns ∝ 1/s, so back-EMF, base speed and the speed limit stay put) and driven by
 * an inverter whose current rating is ∝ s, of the same technology. Torque at a given current grows with active length, so the torque axis
 * and envelope scale by s; copper loss (resistance ∝ length at the same current density) and
 * iron loss (∝ iron volume at the same flux density and frequency) scale by s as well, so
 *
 *   loss_s(n, s·τ) = s · loss(n, τ),   T_max,s(n) = s · T_max(n),   n_max unchanged.
 *
 * End-winding copper, bearing drag and the inverter's standing loss do not really scale with
 * length, so the law is optimistic for s < 1 and pessimistic for s > 1 on those shares.
 */
import { ModelError } from '../problem.js';
import type { MachineMap } from './map.js';

/** A copy of `map` scaled in torque by s (> 0) under the axial-length law above. */
export function scaleMachineTorque(map: MachineMap, s: number, name = s === 1 ? map.name : `${map.name}×${s}`): MachineMap {
  if (!(Number.isFinite(s) && s > 0)) throw new ModelError('invalid-request', `torque scale must be a positive number; got ${s}`, 'torqueScale');
  if (s === 1 && name === map.name) return map;
  const scale = (a: Float64Array): Float64Array => a.map((x) => x * s);
  return Object.freeze({
    name,
    nSpeed: map.nSpeed,
    nTorque: map.nTorque,
    speedRadS: map.speedRadS,
    torqueNm: scale(map.torqueNm),
    lossW: scale(map.lossW),
    maxTorqueNm: scale(map.maxTorqueNm),
    minTorqueNm: scale(map.minTorqueNm),
    maxSpeedRadS: map.maxSpeedRadS,
    reverse: map.reverse,
    provenance: {
      ...map.provenance,
      notes: [...map.provenance.notes, `torque scaled by ${s} (axial-length law: torque, envelope and loss × ${s}; speeds unchanged)`],
    },
  });
}
