/**
 * Contours of gridded values (d3-contour, marching squares) drawn in data coordinates.
 * Values come row-major by x: v[i·ny + j] at (xs[i], ys[j]); NaN counts as below every level.
 * Axes may be unevenly spaced: d3-contour places sample i at grid coordinate i + 0.5, which is
 * mapped back onto the axis by linear interpolation (clamped at the ends).
 */
import { contours } from 'd3-contour';
import type { Frame } from './frame.js';
import { fmt } from './xml.js';

/** Values transposed to d3-contour's layout (x fastest). */
export function toContourGrid(v: ArrayLike<number>, nx: number, ny: number): number[] {
  const out = new Array<number>(nx * ny);
  for (let i = 0; i < nx; i++) for (let j = 0; j < ny; j++) out[j * nx + i] = v[i * ny + j]!;
  return out;
}

function axisAt(axis: ArrayLike<number>, g: number): number {
  const n = axis.length;
  let u = g - 0.5;
  if (u <= 0) return axis[0]!;
  if (u >= n - 1) return axis[n - 1]!;
  const k = Math.floor(u);
  u -= k;
  return axis[k]! + u * (axis[k + 1]! - axis[k]!);
}

/** SVG path data of the region where the value is >= threshold (empty string when none). */
export function contourPath(
  grid: number[],
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  threshold: number,
  f: Frame,
): string {
  const nx = xs.length;
  const ny = ys.length;
  const shape = contours().size([nx, ny]).contour(grid, threshold);
  let d = '';
  for (const polygon of shape.coordinates) {
    for (const ring of polygon) {
      ring.forEach((p, k) => {
        d += `${k === 0 ? 'M' : 'L'}${fmt(f.x(axisAt(xs, p[0]!)))},${fmt(f.y(axisAt(ys, p[1]!)))}`;
      });
      d += 'Z';
    }
  }
  return d;
}

/** Finite minimum and maximum of the values (NaN, NaN when none is finite). */
export function finiteExtent(v: ArrayLike<number>): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (let k = 0; k < v.length; k++) {
    const x = v[k]!;
    if (!Number.isFinite(x)) continue;
    if (x < lo) lo = x;
    if (x > hi) hi = x;
  }
  return lo <= hi ? [lo, hi] : [Number.NaN, Number.NaN];
}
