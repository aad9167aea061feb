/**
 * Loss polynomial fitted to measured points: P_loss(ω, τ) = Σ c_ab·ω^a·τ^b (W, ω in rad/s,
 * τ in N·m), by linear least squares (Householder QR; Golub & Van Loan, Matrix Computations,
 * §5.3). Before solving, speed and torque are divided by their largest magnitudes and every
 * column of the design matrix is scaled to unit length, so the conditioning reflects the spread
 * of the points rather than the units; the coefficients are reported in physical units.
 */
import { Matrix, QrDecomposition, SingularValueDecomposition } from 'ml-matrix';
import { ModelError } from '../problem.js';

/**
 * Largest accepted 2-norm condition number of the scaled design matrix. Above it the points do
 * not determine every coefficient (rank-deficient or nearly so) and the fit is refused.
 */
export const MAX_FIT_CONDITION = 1e10;

export interface LossSamples {
  /** Shaft speed, rad/s. */
  speedRadS: Float64Array;
  /** Shaft torque, N·m. */
  torqueNm: Float64Array;
  /** Loss (DC terminals to shaft), W. */
  lossW: Float64Array;
}

export interface LossFitOptions {
  /** Highest power of speed. */
  speedDegree: number;
  /** Highest power of torque. */
  torqueDegree: number;
  /** Highest combined power a + b; no cap when absent. */
  totalDegree?: number;
}

export interface LossTerm {
  speedPower: number;
  torquePower: number;
}

export interface LossFit {
  /** Monomials ω^a·τ^b, speed power outer, torque power inner. */
  terms: LossTerm[];
  /** Coefficient of each term in physical units: W / ((rad/s)^a·(N·m)^b). */
  coefficients: Float64Array;
  /** Root-mean-square residual √(SSres/N), W. */
  rmsW: number;
  /** Coefficient of determination 1 − SSres/SStot. */
  r2: number;
  /** Condition number of the scaled design matrix. */
  conditionNumber: number;
}

function fail(message: string): never {
  throw new ModelError('fit-failed', message);
}

/** The monomials of a loss polynomial with the given degrees (speed power outer). */
export function lossTerms(opts: LossFitOptions): LossTerm[] {
  const { speedDegree, torqueDegree, totalDegree } = opts;
  for (const [name, v] of [['speedDegree', speedDegree], ['torqueDegree', torqueDegree]] as const) {
    if (!Number.isInteger(v) || v < 0) fail(`${name} must be a whole number >= 0 (got ${v})`);
  }
  if (totalDegree !== undefined && (!Number.isInteger(totalDegree) || totalDegree < 0)) {
    fail(`totalDegree must be a whole number >= 0 (got ${totalDegree})`);
  }
  const terms: LossTerm[] = [];
  for (let a = 0; a <= speedDegree; a++) {
    for (let b = 0; b <= torqueDegree; b++) {
      if (totalDegree === undefined || a + b <= totalDegree) terms.push({ speedPower: a, torquePower: b });
    }
  }
  return terms;
}

function maxAbs(x: Float64Array): number {
  let m = 0;
  for (let i = 0; i < x.length; i++) m = Math.max(m, Math.abs(x[i]!));
  return m;
}

/** Number of distinct values, treating values closer than `tol` as equal. */
function distinctCount(x: Float64Array, tol: number): number {
  const s = Float64Array.from(x).sort();
  let n = s.length > 0 ? 1 : 0;
  for (let i = 1; i < s.length; i++) if (s[i]! - s[i - 1]! > tol) n++;
  return n;
}

/**
 * Fits the loss polynomial by least squares. Units: speed rad/s, torque N·m, loss W.
 * Refuses (ModelError 'fit-failed') when there are fewer points than terms, or when the scaled
 * design matrix has condition number above {@link MAX_FIT_CONDITION}, naming the variable that
 * lacks spread where the count of distinct values explains it. R² is 1 − SSres/SStot; when all
 * losses are equal (SStot = 0) it is 1 if the residuals vanish and 0 otherwise.
 */
export function fitLossPolynomial(samples: LossSamples, opts: LossFitOptions): LossFit {
  const { speedRadS: w, torqueNm: t, lossW: y } = samples;
  const n = y.length;
  if (w.length !== n || t.length !== n) fail(`speed, torque and loss need the same number of samples (${w.length}, ${t.length}, ${n})`);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(w[i]!) || !Number.isFinite(t[i]!) || !Number.isFinite(y[i]!)) fail(`sample ${i} is not a finite number`);
  }
  const terms = lossTerms(opts);
  const m = terms.length;
  if (n < m) fail(`${n} points cannot fit ${m} terms; measure more points or lower the degree`);

  // Scaled variables in [−1, 1]; a variable that is zero throughout keeps scale 1.
  const sw = maxAbs(w) || 1;
  const st = maxAbs(t) || 1;
  const a = new Matrix(n, m);
  const colScale = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const { speedPower: p, torquePower: q } = terms[k]!;
    let ss = 0;
    for (let i = 0; i < n; i++) {
      const v = (w[i]! / sw) ** p * (t[i]! / st) ** q;
      a.set(i, k, v);
      ss += v * v;
    }
    const norm = Math.sqrt(ss) || 1;
    colScale[k] = norm;
    for (let i = 0; i < n; i++) a.set(i, k, a.get(i, k) / norm);
  }

  const qr = new QrDecomposition(a);
  const svd = new SingularValueDecomposition(qr.upperTriangularMatrix, {
    computeLeftSingularVectors: false,
    computeRightSingularVectors: false,
  });
  const sv = svd.diagonal;
  const smax = Math.max(...sv);
  const smin = Math.min(...sv);
  const cond = smin > 0 ? smax / smin : Number.POSITIVE_INFINITY;
  if (!(cond <= MAX_FIT_CONDITION)) {
    const spd = opts.totalDegree === undefined ? opts.speedDegree : Math.min(opts.speedDegree, opts.totalDegree);
    const trq = opts.totalDegree === undefined ? opts.torqueDegree : Math.min(opts.torqueDegree, opts.totalDegree);
    const nw = distinctCount(w, 1e-9 * sw);
    const nt = distinctCount(t, 1e-9 * st);
    const reasons: string[] = [];
    if (nw <= spd) reasons.push(`speed takes only ${nw} distinct value${nw === 1 ? '' : 's'}; a degree-${spd} polynomial in speed needs at least ${spd + 1}`);
    if (nt <= trq) reasons.push(`torque takes only ${nt} distinct value${nt === 1 ? '' : 's'}; a degree-${trq} polynomial in torque needs at least ${trq + 1}`);
    const why = reasons.length > 0 ? reasons.join('; ') : 'the points do not spread over speed and torque enough to determine every term';
    fail(
      `the loss fit is ill-conditioned (condition number of the scaled design matrix ${cond === Infinity ? 'infinite' : cond.toExponential(2)} > ${MAX_FIT_CONDITION.toExponential(0)}): ${why}; spread the points over the envelope or lower the degree`,
    );
  }
  const x = qr.solve(Matrix.columnVector(Array.from(y)));

  const coefficients = new Float64Array(m);
  for (let k = 0; k < m; k++) {
    const { speedPower: p, torquePower: q } = terms[k]!;
    coefficients[k] = x.get(k, 0) / (colScale[k]! * sw ** p * st ** q);
  }
  const fit: LossFit = { terms, coefficients, rmsW: 0, r2: 1, conditionNumber: cond };

  let mean = 0;
  for (let i = 0; i < n; i++) mean += y[i]!;
  mean /= n;
  let ssRes = 0;
  let ssTot = 0;
  for (let i = 0; i < n; i++) {
    const r = y[i]! - evaluateLossPolynomial(fit, w[i]!, t[i]!);
    ssRes += r * r;
    ssTot += (y[i]! - mean) ** 2;
  }
  fit.rmsW = Math.sqrt(ssRes / n);
  if (ssTot > 0) fit.r2 = 1 - ssRes / ssTot;
  else fit.r2 = ssRes <= 1e-24 * Math.max(1, mean * mean) * n ? 1 : 0;
  return fit;
}

/** Fitted loss (W) at speed ω (rad/s) and torque τ (N·m); no clamping, no allocation. */
export function evaluateLossPolynomial(fit: LossFit, speedRadS: number, torqueNm: number): number {
  const { terms, coefficients } = fit;
  let sum = 0;
  for (let k = 0; k < terms.length; k++) {
    const term = terms[k]!;
    sum += coefficients[k]! * speedRadS ** term.speedPower * torqueNm ** term.torquePower;
  }
  return sum;
}
