/** Mode indices in MODES (src/solver/types.ts), for typed-array tables and bit masks. */
export const MODE_SPLIT = 0;
export const MODE_RING_HELD = 1;
export const MODE_SUN_HELD = 2;
export const MODE_LOCKED = 3;
