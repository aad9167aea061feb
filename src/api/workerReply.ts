/**
 * What a worker script returns, and how its runner reads it: a thrown ModelError would lose its
 * code and field path crossing the thread boundary, so a worker returns it as data and the
 * runner raises it again, the same 4xx as in process. Any other error stays thrown (a 5xx).
 */
import { ModelError, type ProblemCode } from '../problem.js';

export type WorkerReply<T> = { ok: true; value: T } | { ok: false; error: { code: ProblemCode; message: string; path?: string } };

/** Runs `fn` on the worker: its value, or the ModelError it threw, as a reply. */
export function replyOf<T>(fn: () => T): WorkerReply<T> {
  try {
    return { ok: true, value: fn() };
  } catch (err) {
    if (!(err instanceof ModelError)) throw err;
    return { ok: false, error: { code: err.code, message: err.message, ...(err.path !== undefined ? { path: err.path } : {}) } };
  }
}

/** On the runner: the reply's value, or its ModelError raised again. */
export function valueOf<T>(reply: WorkerReply<T>): T {
  if (!reply.ok) throw new ModelError(reply.error.code, reply.error.message, reply.error.path);
  return reply.value;
}
