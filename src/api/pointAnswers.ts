/**
 * Answers to single wheel points, kept as their JSON text. A simulation asks point by point, and
 * drive cycles revisit the same points (standstill, cruise: the NEDC's 1180 steps hold 179
 * distinct wheel points for a given vehicle); the solver is deterministic, so an answer found once
 * is the answer. Keyed by the built drivetrain (any change to its document or machines builds a new
 * one, whose answers start afresh), the modes, the options and the point; bounded by total text
 * size, least recently used out first.
 */
import type { Drivetrain } from '../solver/drivetrain.js';
import { modeMask } from '../solver/modes.js';
import { solvePoint } from '../solver/point.js';
import type { Mode, SolveOptions } from '../solver/types.js';

export interface PointQuery {
  wheelSpeedRpm: number;
  wheelTorqueNm: number;
}

export interface PointOptions {
  modes?: Mode[] | undefined;
  strict: boolean;
  alternatives: boolean;
}

/** Largest answer kept, characters (a point answer with every alternative is under 2 000). */
const MAX_ANSWER_CHARS = 16 * 1024;

export class PointAnswers {
  private readonly ids = new WeakMap<Drivetrain, number>();
  private nextId = 0;
  private readonly map = new Map<string, string>();
  private chars = 0;
  /** Answers taken from the cache and answers solved, since the start. */
  hits = 0;
  misses = 0;

  /** @param maxChars total size of the kept answers, characters (0: keep none). */
  constructor(private readonly maxChars: number) {}

  /** Answers kept now. */
  get size(): number {
    return this.map.size;
  }

  /**
   * The JSON text of {@link solvePoint}'s answer at one point. -0 is asked as 0 (the JSON text
   * of either is the same). A ModelError from the solver propagates and nothing is kept.
   */
  answer(dt: Drivetrain, p: PointQuery, o: PointOptions): string {
    const speed = p.wheelSpeedRpm + 0;
    const torque = p.wheelTorqueNm + 0;
    const key = `${this.idOf(dt)} ${modeMask(dt, o.modes)} ${o.strict ? 1 : 0}${o.alternatives ? 1 : 0} ${speed} ${torque}`;
    const kept = this.map.get(key);
    if (kept !== undefined) {
      this.hits++;
      this.map.delete(key);
      this.map.set(key, kept);
      return kept;
    }
    this.misses++;
    const opts: SolveOptions = o.modes ? { modes: o.modes, strict: o.strict, alternatives: o.alternatives } : { strict: o.strict, alternatives: o.alternatives };
    const text = JSON.stringify(solvePoint(dt, speed, torque, opts));
    this.keep(key, text);
    return text;
  }

  private idOf(dt: Drivetrain): number {
    let id = this.ids.get(dt);
    if (id === undefined) {
      id = this.nextId++;
      this.ids.set(dt, id);
    }
    return id;
  }

  private keep(key: string, text: string): void {
    const cost = key.length + text.length;
    if (cost > MAX_ANSWER_CHARS || cost > this.maxChars) return;
    this.map.set(key, text);
    this.chars += cost;
    // Oldest first: a Map iterates in insertion order, and a hit is inserted again.
    while (this.chars > this.maxChars) {
      const oldest = this.map.keys().next().value!;
      this.chars -= oldest.length + this.map.get(oldest)!.length;
      this.map.delete(oldest);
    }
  }
}
