/**
 * One entry point from any machine document to the canonical map: validates the document
 * with its zod schema, converts it by kind, and builds the canonical grid.
 */
import { parseOrThrow } from '../problem.js';
import { dqToGrid } from './dqModel.js';
import { gridToInput } from './fromGrid.js';
import { pointsToGrid } from './fromPoints.js';
import { buildMachineMap, type GridInput, type MachineMap, type MapProvenance } from './map.js';
import { machineDocSchema, type MachineDoc } from './schema.js';
import { summarizeMachine, type MachineSummary } from './summary.js';

export interface LoadedMachine {
  doc: MachineDoc;
  map: MachineMap;
  summary: MachineSummary;
}

/** Parses an unknown value as a machine document; schema failures are `map-invalid` with the field path. */
export function parseMachineDoc(value: unknown): MachineDoc {
  return parseOrThrow(machineDocSchema, value, 'map-invalid');
}

function toGrid(doc: MachineDoc): { grid: GridInput; provenance: MapProvenance } {
  switch (doc.kind) {
    case 'grid':
      return gridToInput(doc);
    case 'points':
      return pointsToGrid(doc);
    case 'dq-model':
      return dqToGrid(doc);
  }
}

/** Builds the canonical map (and its summary) from a validated document. */
export function loadMachine(name: string, doc: MachineDoc): LoadedMachine {
  const { grid, provenance } = toGrid(doc);
  const map = buildMachineMap(name, grid, provenance);
  return { doc, map, summary: summarizeMachine(map) };
}
