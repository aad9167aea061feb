/** A short human-readable summary of a cycle answer: energy, losses, modes, comparison, bounds. */
import type { CycleBound } from '../vehicle/bound.js';
import type { CycleResult } from '../vehicle/cycleEnergy.js';
import type { LayoutComparison } from '../vehicle/compare.js';
import { fixed, textTable } from './textTable.js';

/** What `episplit cycle` prints as JSON (the same shape the HTTP service answers). */
export interface CycleAnswer {
  result: CycleResult;
  comparison?: LayoutComparison;
  bounds?: CycleBound[];
}

export function cycleSummary(a: CycleAnswer): string {
  const r = a.result;
  const l = r.losses;
  const parts: string[] = [];
  parts.push(`cycle ${r.cycle} on ${r.drivetrain}: ${fixed(r.durationS, 0)} s, ${fixed(r.distanceKm, 3)} km, ${r.steps} steps\n\n`);
  parts.push(
    textTable(
      ['quantity', 'value', 'unit'],
      [
        ['battery energy (net)', fixed(r.batteryWh, 1), 'Wh'],
        ['consumption', fixed(r.whPerKm, 1), 'Wh/km'],
        ['tractive wheel work', fixed(r.tractiveWh, 1), 'Wh'],
        ['regenerated', fixed(r.regeneratedWh, 1), 'Wh'],
        ['friction braked', fixed(r.frictionBrakedWh, 1), 'Wh'],
        ['shortfall', fixed(r.shortfallWh, 1), 'Wh'],
        ['loss: sun machine', fixed(l.sunMachineWh, 1), 'Wh'],
        ['loss: ring machine', fixed(l.ringMachineWh, 1), 'Wh'],
        ['loss: gear mesh', fixed(l.meshWh, 1), 'Wh'],
        ['loss: final drive', fixed(l.finalDriveWh, 1), 'Wh'],
        ['devices', fixed(l.devicesWh, 1), 'Wh'],
        ['auxiliary loads', fixed(l.auxiliaryWh, 1), 'Wh'],
        ['mode switches', r.modeSwitches, ''],
        ['unfollowed steps', r.unfollowed.length, ''],
        ...(r.rangeKm !== null ? [['range on repeats', fixed(r.rangeKm, 1), 'km'] as const] : []),
      ],
    ),
  );
  if (r.modes.length > 0) {
    parts.push('\n');
    parts.push(textTable(['mode', 'time s', 'steps', 'battery Wh'], r.modes.map((m) => [m.mode, fixed(m.timeS, 0), m.steps, fixed(m.batteryWh, 1)])));
  }
  if (a.comparison) {
    const c = a.comparison;
    parts.push(`\nlayouts (baseline ${c.baseline}: ${c.baselineRule})\n`);
    parts.push(
      textTable(
        ['layout', 'Wh/km', 'saving %', 'unfollowed', 'shortfall Wh', 'modes'],
        c.rows.map((row) => [row.layout, fixed(row.whPerKm, 1), fixed(row.savingsPct, 1), row.unfollowedSteps, fixed(row.shortfallWh, 1), row.modes.join(',')]),
      ),
    );
  }
  if (a.bounds && a.bounds.length > 0) {
    parts.push('\ncycle-optimal bound over mode sequences\n');
    parts.push(
      textTable(
        ['switch cost Wh', 'bound Wh', 'switches', 'step-by-step Wh', 'switches', 'gap Wh', 'gap %'],
        a.bounds.map((b) => [fixed(b.switchCostWh, 3), fixed(b.boundWh, 1), b.boundSwitches, fixed(b.stepwiseWh, 1), b.stepwiseSwitches, fixed(b.gapWh, 2), fixed(b.gapPct, 2)]),
      ),
    );
  }
  if (r.unfollowed.length > 0) {
    const first = r.unfollowed.slice(0, 5);
    parts.push(`\nsteps not followed (first ${first.length} of ${r.unfollowed.length})\n`);
    parts.push(
      textTable(
        ['time s', 'speed km/h', 'asked N·m', 'delivered N·m', 'reason'],
        first.map((u) => [fixed(u.timeS, 1), fixed(u.speedKph, 1), fixed(u.requestedWheelTorqueNm, 0), fixed(u.deliveredWheelTorqueNm, 0), u.reason]),
      ),
    );
  }
  return parts.join('');
}
