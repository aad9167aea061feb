/**
 * One linear piece of a piecewise-linear problem in one variable: objective and constraint
 * slacks are known at both ends (all linear in between), so the feasible part of the piece is an
 * interval of the piece parameter t ∈ [0, 1] and the best point is one of its ends.
 */

/** Result of {@link bestOnPiece}: t of the best feasible point and its objective. */
export const PIECE = { t: 0, f: 0 };

/**
 * Looks at ev[aOff..] and ev[bOff..]: entry 0 is the objective, entries 1..nSlack are slacks that
 * must stay >= 0 (an end within −tol counts as feasible, for rounding; entries 1..nTorque use
 * tolT, the rest tolP). Where a slack changes sign inside the piece the feasible part ends at its
 * root. Returns false when no point of the piece is feasible; otherwise sets PIECE.t and PIECE.f
 * to the feasible minimum.
 */
export function bestOnPiece(ev: Float64Array, aOff: number, bOff: number, nSlack: number, nTorque: number, tolT: number, tolP: number): boolean {
  let tlo = 0;
  let thi = 1;
  for (let m = 1; m <= nSlack; m++) {
    const tol = m <= nTorque ? tolT : tolP;
    const ga = ev[aOff + m]!;
    const gb = ev[bOff + m]!;
    const okA = ga >= -tol;
    const okB = gb >= -tol;
    if (okA && okB) continue;
    if (!okA && !okB) return false;
    // The limit itself is crossed inside the piece: cut at its root (clamped to the piece).
    let t = ga / (ga - gb);
    if (!(t > 0)) t = 0;
    else if (t > 1) t = 1;
    if (okA) {
      if (t < thi) thi = t;
    } else if (t > tlo) tlo = t;
  }
  if (tlo > thi) {
    // Cuts that meet at one point cross by rounding: accept it if every slack holds there.
    const tm = 0.5 * (tlo + thi);
    for (let m = 1; m <= nSlack; m++) {
      const ga = ev[aOff + m]!;
      if (ga + tm * (ev[bOff + m]! - ga) < -(m <= nTorque ? tolT : tolP)) return false;
    }
    tlo = thi = tm;
  }
  const fa = ev[aOff]!;
  const fb = ev[bOff]!;
  const t = fb < fa ? thi : tlo;
  PIECE.t = t;
  PIECE.f = fa + t * (fb - fa);
  return true;
}
