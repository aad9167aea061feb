import { describe, expect, it } from 'vitest';
import { summarizeProfile, type CpuProfile } from '../bench/cpuProfile.js';

// Self time is the samples taken in a function itself; inclusive time adds its callees, each
// sample counted once per function even when it recurses (common practice in CPU profilers).
describe('CPU profile summary', () => {
  const frame = (functionName: string, line: number) => ({ functionName, url: `file:///app/dist/solver/${functionName}.js`, lineNumber: line });
  // root → solve → walk → solve (recursion) ; root → (idle)
  const profile: CpuProfile = {
    nodes: [
      { id: 1, callFrame: { functionName: '(root)', url: '', lineNumber: -1 }, children: [2, 5] },
      { id: 2, callFrame: frame('solve', 9), children: [3] },
      { id: 3, callFrame: frame('walk', 19), children: [4] },
      { id: 4, callFrame: frame('solve', 9) },
      { id: 5, callFrame: { functionName: '(idle)', url: '', lineNumber: -1 } },
    ],
    samples: [2, 3, 3, 4, 5, 5],
    timeDeltas: [10, 20, 20, 30, 5, 15],
  };

  it('gives self and inclusive time per request, recursion counted once', () => {
    const s = summarizeProfile(profile, 10);
    expect(s.totalUsPerRequest).toBe(10);
    const self = Object.fromEntries(s.self.map((l) => [l.name, l.usPerRequest]));
    expect(self).toEqual({ 'solve solver/solve.js:10': 4, 'walk solver/walk.js:20': 4, '(idle)': 2 });
    const incl = Object.fromEntries(s.inclusive.map((l) => [l.name, l.usPerRequest]));
    expect(incl['(root)']).toBe(10);
    expect(incl['solve solver/solve.js:10']).toBe(8); // not 11: the recursive sample once
    expect(incl['walk solver/walk.js:20']).toBe(7);
    expect(s.inclusive[0]!.share).toBe(1);
  });

  it('keeps the top lines, largest first', () => {
    const s = summarizeProfile(profile, 1, 2);
    expect(s.self.map((l) => l.name)).toEqual(['solve solver/solve.js:10', 'walk solver/walk.js:20']);
    expect(s.self[0]!.usPerRequest).toBeGreaterThanOrEqual(s.self[1]!.usPerRequest);
  });
});
