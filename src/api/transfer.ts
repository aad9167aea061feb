/** Moving typed arrays to or from a worker thread without copying them. */

/** Buffers that each belong to one whole array alone: safe to move (others are copied). */
export function movableBuffers(arrays: readonly ArrayBufferView[]): ArrayBuffer[] {
  const seen = new Set<ArrayBufferLike>();
  const shared = new Set<ArrayBufferLike>();
  for (const a of arrays) {
    const b = a.buffer;
    if (!(b instanceof ArrayBuffer) || a.byteOffset !== 0 || a.byteLength !== b.byteLength || seen.has(b)) shared.add(b);
    seen.add(b);
  }
  return [...seen].filter((b): b is ArrayBuffer => !shared.has(b));
}
