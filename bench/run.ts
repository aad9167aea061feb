/**
 * `npm run bench`: every benchmark, each reported as a ratio against a baseline run in the same
 * process (never asserted by a test). Figures depend on the machine and its load.
 *
 *  1. per-point solver on the demo drivetrain vs a dense scan of the free variable;
 *  2. a 201 × 201 table: in process (baseline) vs the worker pool with 1 thread and all cores;
 *  3. an 1800-step drive cycle vs solving the same 1800 wheel points bare;
 *  4. HTTP (autocannon on loopback): single-point throughput vs GET /health with one connection
 *     and with four, and a 10 000-point batch vs the same points solved in process.
 * Options: --quick (shorter HTTP runs), --skip-http.
 */
import { availableParallelism } from 'node:os';
import { solvePoint } from '../src/solver/point.js';
import { buildTable } from '../src/solver/table.js';
import { cycleWheelDemand } from '../src/vehicle/roadLoad.js';
import { runCycle } from '../src/vehicle/cycleEnergy.js';
import { getBuiltinCycle } from '../src/vehicle/cycles.js';
import { parseVehicle, validateCycleTrace } from '../src/vehicle/schema.js';
import { radSToRpm } from '../src/units.js';
import { runHttpBench } from './http.js';
import { demoDrivetrain, runSolverBench } from './solver.js';
import { median } from './stats.js';

const args = new Set(process.argv.slice(2));
const time = (fn: () => void) => {
  const t0 = performance.now();
  fn();
  return performance.now() - t0;
};
const timeAsync = async (fn: () => Promise<unknown>) => {
  const t0 = performance.now();
  await fn();
  return performance.now() - t0;
};

const dt = await demoDrivetrain();

console.log(`episplit benchmarks — node ${process.version}, ${availableParallelism()} cores`);

// 1. Solver.
const s = runSolverBench(dt);
console.log(`solver: ${Math.round(s.solvesPerSecond)} solves/s (median of ${s.runs} runs over ${s.points} points); friction-braking points ${Math.round(s.frictionSolvesPerSecond)}/s; wheel-torque limits ${Math.round(s.limitsPerSecond)}/s`);
console.log(`solver vs dense scan (${s.scanSamples} samples): ${s.speedup.toFixed(0)}× faster; solver not worse on ${(100 * s.notWorseShare).toFixed(1)} % of ${s.scanPoints} points (scan above solver by up to ${s.maxScanExcessW.toFixed(3)} W)`);

// 2. Table 201 × 201. The pool is taken from the compiled build (npm run bench builds first), as
// the service runs it: worker threads under the TypeScript loader are markedly slower.
const distPool = new URL('../dist/solver/tablePool.js', import.meta.url).href;
const { buildTablePooled, TablePool } = (await import(distPool)) as typeof import('../src/solver/tablePool.js');
const spec = { speedRpm: { from: 0, to: 1700, steps: 201 }, torqueNm: { from: -2500, to: 2500, steps: 201 } };
buildTable(dt, { speedRpm: { from: 0, to: 1700, steps: 21 }, torqueNm: spec.torqueNm }); // warm-up
const inProc = median([0, 1, 2].map(() => time(() => buildTable(dt, spec))));
const pooled: Record<number, number> = {};
for (const threads of [1, availableParallelism()]) {
  const pool = new TablePool({ threads });
  await buildTablePooled(dt, { ...spec, speedRpm: { from: 0, to: 1700, steps: 2 * threads } }, { pool }); // start the workers
  const runs: number[] = [];
  for (let r = 0; r < 3; r++) runs.push(await timeAsync(() => buildTablePooled(dt, spec, { pool })));
  pooled[threads] = median(runs);
  await pool.close();
}
console.log(`table 201×201: in process ${inProc.toFixed(0)} ms (baseline); pool 1 thread ${pooled[1]!.toFixed(0)} ms (${(inProc / pooled[1]!).toFixed(2)}×); pool ${availableParallelism()} threads ${pooled[availableParallelism()]!.toFixed(0)} ms (${(inProc / pooled[availableParallelism()]!).toFixed(2)}×)`);

// 3. An 1800-step cycle: the NEDC followed by the first 620 s of the invented demo cycle.
const nedc = getBuiltinCycle('nedc');
const demo = getBuiltinCycle('demo-delivery');
const timeS: number[] = [...nedc.timeS];
const speedKph: number[] = [...nedc.speedKph];
for (let i = 1; timeS.length < 1801 && i < demo.timeS.length; i++) {
  timeS.push(timeS[timeS.length - 1]! + (demo.timeS[i]! - demo.timeS[i - 1]!));
  speedKph.push(demo.speedKph[i]!);
}
const cycle = validateCycleTrace({ name: 'bench-1800', timeS, speedKph }, 'cycle');
const van = parseVehicle({ massKg: 2600, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 });
const demand = cycleWheelDemand(van, cycle, dt.wheelRadiusM);
runCycle(dt, van, cycle);
const bare = median([0, 1, 2, 3, 4].map(() => time(() => {
  for (let k = 0; k < demand.steps; k++) solvePoint(dt, radSToRpm(demand.wheelSpeedRadS[k]!), demand.wheelTorqueNm[k]!);
})));
const cyc = median([0, 1, 2, 3, 4].map(() => time(() => runCycle(dt, van, cycle))));
console.log(`cycle of ${cycle.timeS.length - 1} steps: ${cyc.toFixed(1)} ms; bare solves of the same wheel points ${bare.toFixed(1)} ms (baseline); ratio ${(cyc / bare).toFixed(2)}`);

// 4. HTTP.
if (!args.has('--skip-http')) {
  // One connection is one simulation stepping point by point (each answer awaited before the next
  // request); four are several at once, the server's throughput.
  const length = args.has('--quick') ? { rounds: 3, roundS: 1 } : {};
  await runHttpBench({ ...length, connections: 1, batch: false });
  await runHttpBench({ ...length, connections: 4 });
}
