/**
 * Shortest decimal text of a float32 value, for the C header's `float` literals.
 *
 * The rule ({@link byPrecision}): the fewest significant digits p (1 to 9) such that the value
 * rounded to p digits (`toPrecision(p)`: nearest, ties away from zero) reads back — as a double,
 * then rounded to float — to the same float, written as JavaScript writes that number
 * (`String`). Trying `toPrecision(1…9)` in turn costs up to nine conversions to text and back
 * per value; {@link shortestFloat32Text} gives the same text with arithmetic:
 *
 * - q = a / 10^(e−8) puts the nine leading digits of a (decimal exponent e) before the point.
 *   With at most three roundings of a double, q and each q / 10^(9−p) are within 3.4e-16 of
 *   their exact values relative, so below 4e-7 absolutely (they are below 10^9): the p-digit
 *   rounding is exact unless the fraction lies within 1e-6 of one half, where `toPrecision`
 *   itself decides (exact halves such as 0.125 always go that way).
 * - The candidate m · 10^k reads back as one correctly rounded multiplication or division when
 *   |k| ≤ 22 (exact operands), else through `Number` of its text.
 * - A decimal of at most 15 significant digits is the shortest text of its double, so its
 *   digits are the ones `String` writes.
 * - When q lies within a millionth (relative) of either end of [10^8, 10^9), the exponent
 *   might be off by one; those values (exact powers of ten among them) take {@link byPrecision}.
 */

/** Exact powers of ten as doubles (10^0 … 10^22 are exactly representable). */
const POW10: readonly number[] = Array.from({ length: 23 }, (_, k) => Number(`1e${k}`));
/** 10^k as the nearest double for k = −60 … 60, at index k + 60 (float32 needs −54 … 31). */
const POW10_WIDE = Float64Array.from({ length: 121 }, (_, i) => Number(`1e${i - 60}`));

/** a / 10^(e−8) for a > 0 with decimal exponent e: a's nine leading digits before the point. */
function nineDigits(a: number, e: number): number {
  return e >= 8 ? a / POW10_WIDE[e - 8 + 60]! : a * POW10_WIDE[8 - e + 60]!;
}

/** The double nearest to m · 10^k (m a whole number below 2^53), as `Number('<m>e<k>')` reads it. */
function scaled(m: number, k: number): number {
  // One correctly rounded operation on exact operands: the same double the text reads as.
  if (k >= 0 && k <= 22) return m * POW10[k]!;
  if (k < 0 && k >= -22) return m / POW10[-k]!;
  return Number(`${m}e${k}`);
}

/**
 * m · 10^k written as `String` writes the double nearest to it, for m ≥ 1 with at most 15
 * significant digits (such a decimal is the shortest text of its double, so the digits are m's).
 */
function numberText(m: number, k: number): string {
  while (m % 10 === 0) {
    m /= 10;
    k++;
  }
  const digits = String(m);
  const nd = digits.length;
  const n = k + nd; // the decimal point sits after n digits
  if (nd <= n && n <= 21) return digits + '0'.repeat(n - nd);
  if (0 < n && n <= 21) return `${digits.slice(0, n)}.${digits.slice(n)}`;
  if (-6 < n && n <= 0) return `0.${'0'.repeat(-n)}${digits}`;
  const e = n - 1;
  const exp = e < 0 ? `e-${-e}` : `e+${e}`;
  return nd === 1 ? digits + exp : `${digits[0]}.${digits.slice(1)}${exp}`;
}

/** The rule itself, one `toPrecision` after another (for the rare values the arithmetic cannot settle). */
function byPrecision(f: number): string {
  let s = '';
  for (let p = 1; p <= 9; p++) {
    s = String(Number(f.toPrecision(p)));
    if (Math.fround(Number(s)) === f) break;
  }
  return s;
}

/**
 * The shortest text of a finite float32 value `f` (a double that `Math.fround` leaves alone) that
 * reads back to it: `String(Number(f.toPrecision(p)))` for the least p in 1..9 whose value
 * rounds back to `f`, else p = 9. Both zeros give "0".
 */
export function shortestFloat32Text(f: number): string {
  if (f === 0) return '0';
  const neg = f < 0;
  const a = neg ? -f : f;
  let e = Math.floor(Math.log10(a));
  let q = nineDigits(a, e);
  if (q < 1e8) q = nineDigits(a, --e);
  else if (q >= 1e9) q = nineDigits(a, ++e);
  if (q < 1.000001e8 || q > 9.99999e8) return byPrecision(f);
  let text = '';
  for (let p = 1; p <= 9; p++) {
    const x = p === 9 ? q : q / POW10[9 - p]!;
    const whole = Math.floor(x);
    const frac = x - whole;
    if (frac > 0.499999 && frac < 0.500001) {
      // Too near a half to round by arithmetic: the exact value decides.
      const v = Number(a.toPrecision(p));
      if (Math.fround(v) === a || p === 9) {
        text = String(v);
        break;
      }
      continue;
    }
    const m = frac > 0.5 ? whole + 1 : whole;
    const k = e - p + 1;
    if (Math.fround(scaled(m, k)) === a || p === 9) {
      text = numberText(m, k);
      break;
    }
  }
  return neg ? `-${text}` : text;
}
