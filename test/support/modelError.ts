/** Runs `fn` and returns the ModelError it throws; fails the test when it throws nothing or something else. */
import { ModelError } from '../../src/problem.js';

export function catchModelError(fn: () => unknown): ModelError {
  try {
    fn();
  } catch (e) {
    if (e instanceof ModelError) return e;
    throw e;
  }
  throw new Error('expected a ModelError');
}
