/**
 * The documents the service knows: machine maps and drivetrains, from MAPS_DIR (shipped,
 * read-only) and DATA_DIR (uploaded, persisted). A document in DATA_DIR overrides one of the
 * same name in MAPS_DIR. Every write is validated and built in memory first, then written
 * atomically, then swapped in — a failed write leaves the old document untouched. A machine PUT
 * may be given a {@link MachineBuilder} that builds elsewhere (the API's worker pool).
 */
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { loadMachine, parseMachineDoc, type LoadedMachine } from '../machine/load.js';
import { parseMachineCsv } from '../machine/csv.js';
import type { MachineMap } from '../machine/map.js';
import type { MachineDoc } from '../machine/schema.js';
import type { MachineSummary } from '../machine/summary.js';
import { ModelError } from '../problem.js';
import { buildDrivetrain, type Drivetrain, type DrivetrainDoc } from '../solver/drivetrain.js';
import { documentPath, removeFileDurable, removeStaleTemps, writeFileAtomic } from './files.js';
import { contentHash } from './hash.js';

export type Origin = 'maps' | 'data';

export interface MachineEntry extends LoadedMachine {
  name: string;
  origin: Origin;
  hash: string;
  /** A MAPS_DIR document hidden by this DATA_DIR one, restored when this one is deleted. */
  shadowed?: MachineEntry;
}

/** One line of the machine list: limits and peak efficiency (API and command line alike). */
export interface MachineListItem {
  name: string;
  kind: MachineDoc['kind'];
  origin: Origin;
  maxTorqueNm: number;
  maxPowerW: number;
  maxSpeedRpm: number;
  peakEfficiency: MachineEntry['summary']['peakEfficiency'];
}

export function machineListItem(e: MachineEntry): MachineListItem {
  return {
    name: e.name,
    kind: e.doc.kind,
    origin: e.origin,
    maxTorqueNm: e.summary.maxTorqueNm,
    maxPowerW: e.summary.maxPowerW,
    maxSpeedRpm: e.summary.speedRangeRpm.max,
    peakEfficiency: e.summary.peakEfficiency,
  };
}

export interface DrivetrainEntry {
  name: string;
  doc: DrivetrainDoc;
  origin: Origin;
  hash: string;
  shadowed?: DrivetrainEntry;
}

/**
 * Puts an entry in its map. A DATA_DIR entry keeps the MAPS_DIR document of the same name it
 * hides, so deleting the upload brings the shipped one back.
 */
function place<E extends { name: string; origin: Origin; shadowed?: E }>(map: Map<string, E>, entry: E): void {
  const prev = map.get(entry.name);
  const shadow = entry.origin === 'data' && prev ? (prev.origin === 'maps' ? prev : prev.shadowed) : undefined;
  if (shadow) entry.shadowed = shadow;
  map.set(entry.name, entry);
}

/** Takes an entry out of its map, bringing back the shipped document it hid, if any. */
function unplace<E extends { name: string; shadowed?: E }>(map: Map<string, E>, entry: E): void {
  if (entry.shadowed) map.set(entry.name, entry.shadowed);
  else map.delete(entry.name);
}

/** A validated machine document built for the registry: canonical map, summary, content hash of the document. */
export interface BuiltMachine {
  map: MachineMap;
  summary: MachineSummary;
  hash: string;
}

/**
 * Builds a validated machine document; it may run elsewhere (the API sends heavy documents to
 * its worker pool) and throws, or rejects with, the build's ModelError.
 */
export type MachineBuilder = (name: string, doc: MachineDoc) => BuiltMachine | Promise<BuiltMachine>;

/** The in-process build: canonical map and summary, content hash of the document. */
export function buildMachine(name: string, doc: MachineDoc): BuiltMachine {
  const { map, summary } = loadMachine(name, doc);
  return { map, summary, hash: contentHash(doc) };
}

export interface LoadProblem {
  file: string;
  code: string;
  message: string;
  path?: string;
}

export class Registry {
  private readonly machines = new Map<string, MachineEntry>();
  private readonly drivetrains = new Map<string, DrivetrainEntry>();
  /** Built drivetrains, dropped when the drivetrain or one of its machines changes. */
  private readonly built = new Map<string, Drivetrain>();
  private writeChain: Promise<unknown> = Promise.resolve();
  ready = false;
  problems: LoadProblem[] = [];

  constructor(private readonly dirs: { mapsDir: string; dataDir: string }) {}

  private get machineDir(): string {
    return path.join(this.dirs.dataDir, 'machines');
  }
  private get drivetrainDir(): string {
    return path.join(this.dirs.dataDir, 'drivetrains');
  }

  /** Loads MAPS_DIR then DATA_DIR. Bad files are skipped and listed in `problems`. */
  async load(): Promise<void> {
    this.problems = [];
    const pendingDrivetrains: Array<{ file: string; name: string; origin: Origin; value: unknown }> = [];
    const visit = async (dir: string, origin: Origin, only?: 'machine' | 'drivetrain') => {
      let entries: string[];
      try {
        entries = (await fs.readdir(dir)).sort();
      } catch {
        return;
      }
      for (const entry of entries) {
        const file = path.join(dir, entry);
        const m = /^([a-z0-9][a-z0-9-]{0,63})(\.grid\.csv|\.points\.csv|\.json)$/.exec(entry);
        if (!m) continue;
        const name = m[1]!;
        try {
          const text = await fs.readFile(file, 'utf8');
          if (m[2] !== '.json') {
            if (only === 'drivetrain') continue;
            const doc = parseMachineDoc(parseMachineCsv(text, m[2] === '.grid.csv' ? 'grid' : 'points'));
            this.installMachine(name, doc, origin);
            continue;
          }
          const value: unknown = JSON.parse(text);
          const isDrivetrain = typeof value === 'object' && value !== null && 'sunMachine' in value;
          if (only === 'machine' || (!only && !isDrivetrain)) {
            this.installMachine(name, parseMachineDoc(value), origin);
          } else {
            pendingDrivetrains.push({ file, name, origin, value });
          }
        } catch (err) {
          this.problems.push(problemOf(file, err));
        }
      }
    };
    await removeStaleTemps(this.machineDir);
    await removeStaleTemps(this.drivetrainDir);
    await visit(this.dirs.mapsDir, 'maps');
    await visit(this.machineDir, 'data', 'machine');
    await visit(this.drivetrainDir, 'data', 'drivetrain');
    for (const p of pendingDrivetrains) {
      try {
        this.installDrivetrain(p.name, p.value, p.origin);
      } catch (err) {
        this.problems.push(problemOf(p.file, err));
      }
    }
    this.ready = true;
  }

  private installMachine(name: string, doc: MachineDoc, origin: Origin): MachineEntry {
    const { map, summary, hash } = buildMachine(name, doc);
    const entry: MachineEntry = { doc, map, summary, name, origin, hash };
    place(this.machines, entry);
    return entry;
  }

  /** Builds (so a drivetrain naming a missing machine or breaking a rule is refused), then installs. */
  private installDrivetrain(name: string, value: unknown, origin: Origin): DrivetrainEntry {
    const dt = buildDrivetrain(name, value, (n) => this.machines.get(n)?.map);
    const entry: DrivetrainEntry = { name, doc: dt.doc, origin, hash: contentHash(dt.doc) };
    place(this.drivetrains, entry);
    this.built.set(name, dt);
    return entry;
  }

  private serialized<T>(fn: () => Promise<T>): Promise<T> {
    const next = this.writeChain.then(fn, fn);
    this.writeChain = next.catch(() => undefined);
    return next;
  }

  /** Drops built drivetrains that use a machine (their content hash changes anyway). */
  private forgetBuiltUsing(machine: string): void {
    for (const [name] of this.built) {
      const d = this.drivetrains.get(name);
      if (!d || d.doc.sunMachine === machine || d.doc.ringMachine === machine) this.built.delete(name);
    }
  }

  listMachines(): MachineEntry[] {
    return [...this.machines.values()].sort((a, b) => a.name.localeCompare(b.name));
  }

  getMachine(name: string): MachineEntry | undefined {
    return this.machines.get(name);
  }

  /**
   * Validates, builds (with `build`, in process by default), writes atomically, then swaps in.
   * Returns whether it was created. The document is checked against its schema at once; the
   * build waits its turn with the other writes, so writes land in the order they arrived.
   */
  async putMachine(name: string, value: unknown, build: MachineBuilder = buildMachine): Promise<{ created: boolean; entry: MachineEntry }> {
    return this.putMachineDoc(name, parseMachineDoc(value), build);
  }

  /** {@link putMachine} for a document already checked against the machine schema (the API validates bodies with it). */
  putMachineDoc(name: string, doc: MachineDoc, build: MachineBuilder = buildMachine): Promise<{ created: boolean; entry: MachineEntry }> {
    return this.serialized(async () => {
      const { map, summary, hash } = await build(name, doc);
      await writeFileAtomic(documentPath(this.machineDir, name), JSON.stringify(doc, null, 1) + '\n');
      const created = !this.machines.has(name);
      const entry: MachineEntry = { doc, map, summary, name, origin: 'data', hash };
      place(this.machines, entry);
      this.forgetBuiltUsing(name);
      return { created, entry };
    });
  }

  deleteMachine(name: string): Promise<void> {
    return this.serialized(async () => {
      const entry = this.machines.get(name);
      if (!entry) throw new ModelError('not-found', `no machine named "${name}"`);
      if (entry.origin === 'maps') {
        throw new ModelError('read-only', `machine "${name}" comes from MAPS_DIR; remove its file there to delete it`);
      }
      const users = [...this.drivetrains.values()].filter((d) => d.doc.sunMachine === name || d.doc.ringMachine === name);
      if (users.length > 0 && !entry.shadowed) {
        throw new ModelError('in-use', `machine "${name}" is used by drivetrain(s) ${users.map((u) => `"${u.name}"`).join(', ')}; delete those first`);
      }
      await removeFileDurable(documentPath(this.machineDir, name));
      unplace(this.machines, entry);
      this.forgetBuiltUsing(name);
    });
  }

  listDrivetrains(): DrivetrainEntry[] {
    return [...this.drivetrains.values()].sort((a, b) => a.name.localeCompare(b.name));
  }

  getDrivetrainEntry(name: string): DrivetrainEntry | undefined {
    return this.drivetrains.get(name);
  }

  /** Content hash of a drivetrain together with the machines it uses. */
  drivetrainContentHash(entry: { doc: DrivetrainDoc; hash: string }): string {
    return contentHash(entry.hash, this.machines.get(entry.doc.sunMachine)?.hash ?? '', this.machines.get(entry.doc.ringMachine)?.hash ?? '');
  }

  /** The built drivetrain (cached until the drivetrain or one of its machines changes). */
  getDrivetrain(name: string): Drivetrain | undefined {
    const hit = this.built.get(name);
    if (hit) return hit;
    const entry = this.drivetrains.get(name);
    if (!entry) return undefined;
    const dt = buildDrivetrain(name, entry.doc, (n) => this.machines.get(n)?.map);
    this.built.set(name, dt);
    return dt;
  }

  /** Builds a drivetrain sent inline (machines by name); not stored. Error paths start at `drivetrain`. */
  buildInline(value: unknown): { dt: Drivetrain; doc: DrivetrainDoc; hash: string } {
    let dt: Drivetrain;
    try {
      dt = buildDrivetrain('inline', value, (n) => this.machines.get(n)?.map);
    } catch (err) {
      throw err instanceof ModelError ? err.under('drivetrain') : err;
    }
    return { dt, doc: dt.doc, hash: this.drivetrainContentHash({ doc: dt.doc, hash: contentHash(dt.doc) }) };
  }

  putDrivetrain(name: string, value: unknown): Promise<{ created: boolean; entry: DrivetrainEntry }> {
    return this.serialized(async () => {
      const dt = buildDrivetrain(name, value, (n) => this.machines.get(n)?.map);
      await writeFileAtomic(documentPath(this.drivetrainDir, name), JSON.stringify(dt.doc, null, 1) + '\n');
      const created = !this.drivetrains.has(name);
      const entry: DrivetrainEntry = { name, doc: dt.doc, origin: 'data', hash: contentHash(dt.doc) };
      place(this.drivetrains, entry);
      this.built.set(name, dt);
      return { created, entry };
    });
  }

  deleteDrivetrain(name: string): Promise<void> {
    return this.serialized(async () => {
      const entry = this.drivetrains.get(name);
      if (!entry) throw new ModelError('not-found', `no drivetrain named "${name}"`);
      if (entry.origin === 'maps') {
        throw new ModelError('read-only', `drivetrain "${name}" comes from MAPS_DIR; remove its file there to delete it`);
      }
      await removeFileDurable(documentPath(this.drivetrainDir, name));
      unplace(this.drivetrains, entry);
      this.built.delete(name);
    });
  }
}

function problemOf(file: string, err: unknown): LoadProblem {
  if (err instanceof ModelError) return { file, code: err.code, message: err.message, ...(err.path ? { path: err.path } : {}) };
  if (err instanceof SyntaxError) return { file, code: 'invalid-json', message: err.message };
  return { file, code: 'internal', message: err instanceof Error ? err.message : String(err) };
}
