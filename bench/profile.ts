/**
 * `npm run profile`: the compiled server under `node --cpu-prof`, loaded by autocannon with one
 * kind of request, then a summary of where its time went per request (self and inclusive, idle
 * and the socket writes included). Profile before optimising: the summary names the hot path.
 *
 *   npm run profile -- [--load spread|cycle|health] [--seconds S] [--connections N] [--top N]
 *
 * Loads: `spread` single points by GET over the speed × torque box, every point new; `cycle` the
 * NEDC wheel demand of the invented demo van, a new payload each pass; `health` GET /health. The
 * `.cpuprofile` stays in tmp/profiles/ for Chrome DevTools or any other viewer.
 */
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import autocannon from 'autocannon';
import { freePort } from '../test/support/freePort.js';
import { Registry } from '../src/store/registry.js';
import { describeDrivetrain } from '../src/solver/drivetrain.js';
import { summarizeProfile, type CpuProfile } from './cpuProfile.js';
import { loadPerConnection, nedcVanPass, pointGet, spreadPoints, startServer } from './http.js';

const ROOT = path.resolve(import.meta.dirname, '..');
const OUT = path.join(ROOT, 'tmp/profiles');
const LOADS = ['spread', 'cycle', 'health'] as const;
type Load = (typeof LOADS)[number];

function option(name: string, fallback: number, lo: number, hi: number): number {
  const i = process.argv.indexOf(`--${name}`);
  const v = i > 0 ? Number(process.argv[i + 1]) : fallback;
  if (!Number.isFinite(v) || v < lo || v > hi) throw new Error(`--${name} must be a number from ${lo} to ${hi}`);
  return v;
}

const i = process.argv.indexOf('--load');
const load = (i > 0 ? process.argv[i + 1] : 'spread') as Load;
if (!LOADS.includes(load)) throw new Error(`--load must be one of ${LOADS.join(', ')}`);
const seconds = option('seconds', 8, 1, 60);
const connections = Math.round(option('connections', 4, 1, 64));
const top = Math.round(option('top', 25, 1, 200));

const dataDir = mkdtempSync(path.join(tmpdir(), 'episplit-profile-'));
const registry = new Registry({ mapsDir: path.join(ROOT, 'maps'), dataDir });
await registry.load();
const dt = registry.getDrivetrain('van-axle');
if (!dt) throw new Error('the demo drivetrain van-axle is not in maps/');
const facts = describeDrivetrain(dt);

// Each connection its own sequence, long enough not to repeat within the run.
const perConnection = Math.ceil(seconds * 12_000);
const requests = (c: number): autocannon.Request[] => {
  if (load === 'health') return [{ method: 'GET', path: '/health' }];
  if (load === 'spread') return spreadPoints(perConnection, facts.maxWheelSpeedRpm, facts.standstillMaxWheelNm, 101 + c).map((p) => pointGet(p));
  const pass = nedcVanPass(dt.wheelRadiusM, 0).length;
  return Array.from({ length: Math.ceil(perConnection / pass) }, (_, j) => nedcVanPass(dt.wheelRadiusM, 1000 * c + j))
    .flat()
    .map((p) => pointGet(p));
};

mkdirSync(OUT, { recursive: true });
const before = new Set(readdirSync(OUT));
const port = await freePort();
const child = await startServer(port, dataDir, 200_000, ['--cpu-prof', `--cpu-prof-dir=${OUT}`]);
let served = 0;
try {
  const streams = Array.from({ length: connections }, (_, c) => requests(c));
  const results = await loadPerConnection(`http://127.0.0.1:${port}`, streams, seconds);
  served = results.reduce((s, r) => s + r.requests.total, 0);
  const bad = results.reduce((s, r) => s + r.non2xx + r.errors, 0);
  console.log(`${load}: ${served} requests in ${seconds} s over ${connections} connection${connections === 1 ? '' : 's'} (${(served / seconds).toFixed(0)} req/s), ${bad} not 2xx or failed`);
} finally {
  // SIGINT: the server closes gracefully and node writes the profile on exit.
  child.kill('SIGINT');
  await new Promise((r) => (child.exitCode !== null ? r(null) : child.once('exit', r)));
  rmSync(dataDir, { recursive: true, force: true });
}

const written = readdirSync(OUT).filter((f) => f.endsWith('.cpuprofile') && !before.has(f));
if (written.length === 0) throw new Error(`the server wrote no profile into ${OUT}`);
const file = path.join(OUT, written.sort((a, b) => statSync(path.join(OUT, b)).mtimeMs - statSync(path.join(OUT, a)).mtimeMs)[0]!);
// The profile covers the whole process life (start-up included), counted against the requests served.
const summary = summarizeProfile(JSON.parse(readFileSync(file, 'utf8')) as CpuProfile, served, top);
const row = (l: { name: string; usPerRequest: number; share: number }) => `${l.usPerRequest.toFixed(1).padStart(8)} µs ${(100 * l.share).toFixed(1).padStart(5)} %  ${l.name}`;
console.log(`profile: ${path.relative(ROOT, file)}; ${summary.totalUsPerRequest.toFixed(1)} µs of process time per request, start-up and idle included`);
console.log(`\nself time per request (top ${top}):`);
for (const l of summary.self) console.log(row(l));
console.log(`\ninclusive time per request (top ${top}):`);
for (const l of summary.inclusive) console.log(row(l));
