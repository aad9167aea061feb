/** Median of a list of timings or rates (the middle element after sorting; upper middle for even counts). */
export function median(xs: readonly number[]): number {
  return [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;
}
