import { describe, it, expect } from 'vitest';
import { evaluateLossPolynomial, fitLossPolynomial, lossTerms, type LossFit } from '../src/machine/fitLoss.js';
import { catchModelError } from './support/modelError.js';

/** Known loss surface, W (invented): P = 200 + 0.02·ω² + 0.05·T² + 0.001·ω·T. */
const known = (w: number, t: number) => 200 + 0.02 * w * w + 0.05 * t * t + 0.001 * w * t;
const KNOWN_TERMS: Record<string, number> = { '0,0': 200, '2,0': 0.02, '0,2': 0.05, '1,1': 0.001 };

/** Seeded uniform PRNG on [0, 1) (mulberry32). */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let r = Math.imul(a ^ (a >>> 15), 1 | a);
    r = (r + Math.imul(r ^ (r >>> 7), 61 | r)) ^ r;
    return ((r ^ (r >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviate by the Box–Muller transform (Box & Muller, Ann. Math. Stat., 1958). */
function gaussian(u: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
}

function randomSamples(n: number, seed: number, loss: (w: number, t: number) => number) {
  const u = prng(seed);
  const speedRadS = new Float64Array(n);
  const torqueNm = new Float64Array(n);
  const lossW = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    speedRadS[i] = 1200 * u();
    torqueNm[i] = -250 + 500 * u();
    lossW[i] = loss(speedRadS[i]!, torqueNm[i]!);
  }
  return { speedRadS, torqueNm, lossW };
}

function coefficient(fit: LossFit, a: number, b: number): number {
  const k = fit.terms.findIndex((t) => t.speedPower === a && t.torquePower === b);
  return fit.coefficients[k]!;
}


describe('fitLossPolynomial', () => {
  it('builds the tensor-product and total-degree term sets', () => {
    // (p+1)(q+1) monomials for the tensor product; (d+1)(d+2)/2 with total degree <= d (common practice).
    expect(lossTerms({ speedDegree: 3, torqueDegree: 2 })).toHaveLength(12);
    expect(lossTerms({ speedDegree: 3, torqueDegree: 3, totalDegree: 3 })).toHaveLength(10);
  });

  for (const [p, q] of [
    [2, 2],
    [3, 3],
    [6, 6],
  ] as const) {
    it(`recovers an exact polynomial's coefficients (speed degree ${p}, torque degree ${q})`, () => {
      // Least squares reproduces a model that lies in the fitted space exactly (Golub & Van Loan,
      // Matrix Computations, full-rank least squares, §5.3 from memory); R² of an exact fit is 1
      // by its definition 1 − SSres/SStot.
      const s = randomSamples(400, 7, known);
      const fit = fitLossPolynomial(s, { speedDegree: p, torqueDegree: q });
      const scale = known(1200, 250);
      for (const term of fit.terms) {
        const key = `${term.speedPower},${term.torquePower}`;
        const c = coefficient(fit, term.speedPower, term.torquePower);
        if (key in KNOWN_TERMS) expect(Math.abs(c - KNOWN_TERMS[key]!)).toBeLessThan(1e-6 * Math.abs(KNOWN_TERMS[key]!));
        else expect(Math.abs(c) * 1200 ** term.speedPower * 250 ** term.torquePower).toBeLessThan(1e-6 * scale);
      }
      expect(fit.r2).toBeCloseTo(1, 12);
      expect(fit.rmsW).toBeLessThan(1e-6);
      expect(fit.conditionNumber).toBeLessThan(1e10);
      expect(evaluateLossPolynomial(fit, 517.3, -121.9)).toBeCloseTo(known(517.3, -121.9), 6);
    });
  }

  it('leaves a residual RMS of σ·√((N−M)/N) under Gaussian noise', () => {
    // For least squares with M parameters and noise variance σ², E[SSres] = σ²(N − M)
    // (standard result of linear regression, from memory; the unbiased estimate of σ² divides
    // SSres by N − M). With N = 4000 the
    // relative spread of the RMS is about 1/√(2(N − M)) ≈ 1.1 %, so 5 % is a safe bound.
    const sigma = 25;
    const noise = gaussian(prng(12345));
    const s = randomSamples(4000, 99, (w, t) => known(w, t) + sigma * noise());
    const fit = fitLossPolynomial(s, { speedDegree: 3, torqueDegree: 3 });
    const n = 4000;
    const m = fit.terms.length;
    expect(m).toBe(16);
    const expected = sigma * Math.sqrt((n - m) / n);
    expect(Math.abs(fit.rmsW - expected) / expected).toBeLessThan(0.05);
    expect(fit.r2).toBeGreaterThan(0.99);
    expect(fit.r2).toBeLessThan(1);
  });

  it('refuses fewer points than terms', () => {
    const s = randomSamples(5, 3, known);
    const e = catchModelError(() => fitLossPolynomial(s, { speedDegree: 2, torqueDegree: 2 }));
    expect(e.code).toBe('fit-failed');
    expect(e.message).toContain('5 points cannot fit 9 terms');
    expect(e.message).toContain('lower the degree');
  });

  it('refuses a rank-deficient design and names the variable without spread', () => {
    // All points at one speed: the speed columns are multiples of the constant column, so the
    // design matrix has rank below the number of terms (common practice).
    const s = randomSamples(200, 5, known);
    s.speedRadS.fill(300);
    for (let i = 0; i < 200; i++) s.lossW[i] = known(300, s.torqueNm[i]!);
    const e = catchModelError(() => fitLossPolynomial(s, { speedDegree: 2, torqueDegree: 2 }));
    expect(e.code).toBe('fit-failed');
    expect(e.message).toContain('ill-conditioned');
    expect(e.message).toContain('1e+10');
    expect(e.message).toContain('speed takes only 1 distinct value');
    expect(e.message).not.toContain('torque takes');
  });

  it('refuses points on a curve that do not determine the cross terms', () => {
    // Points on the line T = 0.2·ω: ω and T columns are proportional (common practice).
    const s = randomSamples(200, 6, known);
    for (let i = 0; i < 200; i++) {
      s.torqueNm[i] = 0.2 * s.speedRadS[i]!;
      s.lossW[i] = known(s.speedRadS[i]!, s.torqueNm[i]!);
    }
    const e = catchModelError(() => fitLossPolynomial(s, { speedDegree: 1, torqueDegree: 1 }));
    expect(e.code).toBe('fit-failed');
    expect(e.message).toContain('do not spread over speed and torque');
  });
});
