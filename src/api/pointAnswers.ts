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
import type { SolveOptions } from '../solver/types.js';
import { SizedLru } from './sizedLru.js';

export interface PointQuery {
  wheelSpeedRpm: number;
  wheelTorqueNm: number;
}

/** Largest answer kept, characters (a point answer with every alternative is under 2 000). */
const MAX_ANSWER_CHARS = 16 * 1024;

export class PointAnswers {
  private readonly ids = new WeakMap<Drivetrain, number>();
  private nextId = 0;
  private readonly kept: SizedLru<string>;
  /** Answers taken from the kept ones and answers solved, since the start. */
  hits = 0;
  misses = 0;

  /** @param maxChars total size of the kept answers and their keys, characters (0: keep none). */
  constructor(maxChars: number) {
    this.kept = new SizedLru<string>(maxChars, (key, text) => key.length + text.length, MAX_ANSWER_CHARS);
  }

  /** Answers kept now. */
  get size(): number {
    return this.kept.size;
  }

  /**
   * The JSON text of {@link solvePoint}'s answer at one point. -0 is asked as 0 (the JSON text
   * of either is the same). A ModelError from the solver propagates and nothing is kept.
   */
  answer(dt: Drivetrain, p: PointQuery, opts: SolveOptions): string {
    const speed = p.wheelSpeedRpm + 0;
    const torque = p.wheelTorqueNm + 0;
    // The options as the solver reads them: strict defaults to off, alternatives to on.
    const key = `${this.idOf(dt)} ${modeMask(dt, opts.modes)} ${opts.strict ? 1 : 0}${opts.alternatives !== false ? 1 : 0} ${speed} ${torque}`;
    const hit = this.kept.get(key);
    if (hit !== undefined) {
      this.hits++;
      return hit;
    }
    this.misses++;
    const text = JSON.stringify(solvePoint(dt, speed, torque, opts));
    this.kept.set(key, text);
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
}
