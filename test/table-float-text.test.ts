/**
 * The C header's float literals: the arithmetic writer gives exactly the text of the reference
 * writer (one `toPrecision` after another, test/support/tableTextReference.ts) for every kind of
 * value — random doubles and floats, every float32 bit pattern class (subnormals, both zeros,
 * the largest floats), values beyond the float range, integers, exact binary fractions (digit
 * midpoints such as 0.125), and the floats next to powers of two and of ten.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cFloat } from '../src/report/cHeader.js';
import { shortestFloat32Text } from '../src/report/floatText.js';
import { referenceCFloat } from './support/tableTextReference.js';

const bits = new DataView(new ArrayBuffer(4));
function floatFromBits(u: number): number {
  bits.setUint32(0, u >>> 0);
  return bits.getFloat32(0);
}
function bitsOfFloat(f: number): number {
  bits.setFloat32(0, f);
  return bits.getUint32(0);
}
/** The float32 values next to `f` (same sign, one step of the last bit each way). */
function floatNeighbours(f: number): number[] {
  const u = bitsOfFloat(Math.fround(f));
  return [u - 1, u, u + 1].filter((v) => v >= 0 && v <= 0xffffffff).map(floatFromBits);
}

function sameAsReference(x: number): boolean {
  return cFloat(x) === referenceCFloat(x);
}

describe('C float literal', () => {
  it('equals the reference for edge values', () => {
    const FLT_MAX = 3.4028234663852886e38; // largest binary32, (2 − 2^−23)·2^127 (IEEE 754-2008; C FLT_MAX, ISO/IEC 9899:2011 §5.2.4.2.2, from memory)
    const edges = [
      0, -0, Number.NaN, Infinity, -Infinity, FLT_MAX, -FLT_MAX, 3.5e38, -1e39, Number.MAX_VALUE, -Number.MAX_VALUE,
      1.401298464324817e-45, -1.401298464324817e-45, 1e-46, 5e-324, -5e-324, 1.1754942106924411e-38, 1.1754943508222875e-38,
      0.1, 1 / 3, 100, 1e21, 1e-7, 123456789, 0.125, 2.5, 1.5, -0.375, 9.999999e-7, 1e-6, 999999.94, 1e7, 16777216, 16777217,
    ];
    for (const x of edges) expect([x, cFloat(x)]).toEqual([x, referenceCFloat(x)]);
  });

  it('equals the reference next to every power of two and of ten in the float range', () => {
    const values: number[] = [];
    for (let k = -149; k <= 127; k++) values.push(...floatNeighbours(2 ** k), ...floatNeighbours(-(2 ** k)));
    for (let k = -45; k <= 38; k++) {
      const p = Number(`1e${k}`);
      values.push(...floatNeighbours(p), ...floatNeighbours(-p), ...floatNeighbours(p * 9.999999), ...floatNeighbours(p * 1.000001));
    }
    const wrong = values.filter((x) => !sameAsReference(x));
    expect(wrong).toEqual([]);
  });

  it('equals the reference on random doubles (NaN, infinities, subnormals included)', () => {
    fc.assert(fc.property(fc.double(), sameAsReference), { numRuns: 20_000 });
  });

  it('equals the reference on random floats and random float32 bit patterns', () => {
    fc.assert(fc.property(fc.float(), sameAsReference), { numRuns: 20_000 });
    fc.assert(fc.property(fc.integer({ min: 0, max: 0xffffffff }).map(floatFromBits), sameAsReference), { numRuns: 50_000 });
  });

  it('equals the reference on integers, short decimals and exact binary fractions (digit midpoints)', () => {
    fc.assert(fc.property(fc.integer({ min: -(2 ** 31), max: 2 ** 31 }), sameAsReference), { numRuns: 10_000 });
    fc.assert(fc.property(fc.maxSafeInteger(), sameAsReference), { numRuns: 5_000 });
    const decimal = fc.tuple(fc.integer({ min: -999_999_999, max: 999_999_999 }), fc.integer({ min: -50, max: 40 })).map(([m, k]) => Number(`${m}e${k}`));
    fc.assert(fc.property(decimal, sameAsReference), { numRuns: 20_000 });
    const dyadic = fc.tuple(fc.integer({ min: -(2 ** 24), max: 2 ** 24 }), fc.integer({ min: -40, max: 40 })).map(([m, j]) => m * 2 ** j);
    fc.assert(fc.property(dyadic, sameAsReference), { numRuns: 20_000 });
  });

  it('reads back to the same float with at most nine significant digits', () => {
    // Nine significant digits always identify a binary32 value (FLT_DECIMAL_DIG = 9, ISO/IEC 9899:2011 §5.2.4.2.2, from memory).
    fc.assert(
      fc.property(fc.float({ noNaN: true, noDefaultInfinity: true }), (f) => {
        const s = shortestFloat32Text(f);
        const digits = s.replace(/^-/, '').replace(/e.*$/, '').replace('.', '').replace(/^0+/, '').replace(/0+$/, '');
        return Math.fround(Number(s)) === f && digits.length <= 9;
      }),
      { numRuns: 20_000 },
    );
  });
});
