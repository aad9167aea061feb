/**
 * Summary of a V8 CPU profile (the `.cpuprofile` JSON that `node --cpu-prof` writes): time by
 * function, on its own (self) and with everything it called (inclusive), per request served.
 */

export interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string; lineNumber: number };
  children?: number[];
}

export interface CpuProfile {
  nodes: ProfileNode[];
  /** Node id of each sample. */
  samples: number[];
  /** µs before each sample. */
  timeDeltas: number[];
}

export interface ProfileLine {
  /** Function name, file (last two path parts) and 1-based line. */
  name: string;
  /** µs per request. */
  usPerRequest: number;
  /** Share of the whole profile, 0..1. */
  share: number;
}

export interface ProfileSummary {
  /** Whole profile, µs per request (idle included). */
  totalUsPerRequest: number;
  self: ProfileLine[];
  inclusive: ProfileLine[];
}

function frameName(n: ProfileNode): string {
  const f = n.callFrame;
  const file = f.url ? f.url.split('/').slice(-2).join('/') : '';
  return `${f.functionName || '(anonymous)'}${file ? ` ${file}:${f.lineNumber + 1}` : ''}`;
}

/** The `top` functions by self and by inclusive time, per request (requests >= 1). */
export function summarizeProfile(p: CpuProfile, requests: number, top = 25): ProfileSummary {
  const byId = new Map(p.nodes.map((n) => [n.id, n]));
  const parent = new Map<number, number>();
  for (const n of p.nodes) for (const c of n.children ?? []) parent.set(c, n.id);
  const perNode = new Map<number, number>();
  let total = 0;
  for (let i = 0; i < p.samples.length; i++) {
    const dt = p.timeDeltas[i] ?? 0;
    perNode.set(p.samples[i]!, (perNode.get(p.samples[i]!) ?? 0) + dt);
    total += dt;
  }
  const self = new Map<string, number>();
  const inclusive = new Map<string, number>();
  for (const [id, t] of perNode) {
    const name = frameName(byId.get(id)!);
    self.set(name, (self.get(name) ?? 0) + t);
    // Each function once per sample, however deep it recurses.
    const seen = new Set<string>();
    for (let cur: number | undefined = id; cur !== undefined; cur = parent.get(cur)) {
      const k = frameName(byId.get(cur)!);
      if (seen.has(k)) continue;
      seen.add(k);
      inclusive.set(k, (inclusive.get(k) ?? 0) + t);
    }
  }
  const n = Math.max(1, requests);
  const lines = (m: Map<string, number>) =>
    [...m]
      .sort((a, b) => b[1] - a[1])
      .slice(0, top)
      .map(([name, t]) => ({ name, usPerRequest: t / n, share: total > 0 ? t / total : 0 }));
  return { totalUsPerRequest: total / n, self: lines(self), inclusive: lines(inclusive) };
}
