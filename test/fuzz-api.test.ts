/**
 * Property-based hardening of the HTTP layer: random and malformed documents and requests at every
 * route of a really listening server. Properties, from the HTTP status classes of RFC 9110 §15
 * (4xx: the client's mistake, 5xx: the server's fault) and the error catalogue of this service:
 * never a 5xx; every 4xx carries `{ error: { code, message } }` with a catalogue code whose status
 * is the one answered; /health keeps answering; a failed write changes no stored document.
 *
 * To fuzz a new route, add one line to ROUTES (a generator of plausible bodies is optional).
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ERROR_CATALOGUE } from '../src/api/errors.js';
import { SMALL_GRID } from './support/documents.js';
import { REPO_MAPS, startServer, tempDirs, type TestServer } from './support/server.js';

// ---------------------------------------------------------------------------------------------
// Seed documents (invented, for these checks only)

const seedGrid = { ...SMALL_GRID, description: 'invented fuzz seed', reverse: true };

/** Invented measured points: loss 80 W + 0.05·ω + 0.05·T² (ω rad/s), electrical = T·ω + loss. */
function seedPointsDoc() {
  const points: Array<{ speedRpm: number; torqueNm: number; electricalW: number }> = [];
  for (let rpm = 0; rpm <= 4000; rpm += 500) {
    for (let t = -40; t <= 40; t += 10) {
      const w = (rpm * Math.PI) / 30;
      points.push({ speedRpm: rpm, torqueNm: t, electricalW: t * w + 80 + 0.05 * w + 0.05 * t * t });
    }
  }
  return {
    kind: 'points',
    description: 'invented fuzz seed',
    points,
    envelope: { speedRpm: [0, 2000, 4000], maxTorqueNm: [40, 40, 30], minTorqueNm: [-40, -40, -30] },
    maxSpeedRpm: 4000,
    fit: { speedDegree: 2, torqueDegree: 2 },
    grid: { speedSteps: 9, torqueSteps: 11 },
  };
}

const readMap = (file: string): Record<string, unknown> => JSON.parse(readFileSync(path.join(REPO_MAPS, file), 'utf8'));
const sunDoc = readMap('sun-machine.json');
const dqDoc = readMap('ring-machine.json');
const axleDoc = readMap('van-axle.json');
const pointsDoc = seedPointsDoc();

/** The seed grid as long-format CSV (settings line, data table, envelope table). */
function seedCsvLines(): string[] {
  const lines = ['# maxSpeedRpm=4000', 'speedRpm,torqueNm,lossW'];
  seedGrid.speedRpm.forEach((n, i) => seedGrid.torqueNm.forEach((t, j) => lines.push(`${n},${t},${seedGrid.lossW[i]![j]}`)));
  lines.push('speedRpm,maxTorqueNm,minTorqueNm');
  seedGrid.speedRpm.forEach((n, i) => lines.push(`${n},${seedGrid.maxTorqueNm[i]},${seedGrid.minTorqueNm[i]}`));
  return lines;
}

// ---------------------------------------------------------------------------------------------
// Generators

/**
 * Raw JSON tokens that JSON.stringify cannot produce: a string `RAW + token` inside a value is
 * replaced by the bare token in the body text. `DEEP:n` becomes n nested arrays.
 */
const RAW = '\u0001RAW:';
const RAW_TOKENS = ['1e400', '-1e400', '1e-400', 'NaN', 'Infinity', '-Infinity', '-0', '0e0', '1E+2', '00', '.5', '+1', '1.', '-', '0x10', 'undefined', 'DEEP:1000', 'DEEP:20000', 'DEEP:200000'];

function toText(value: unknown): string {
  const text = JSON.stringify(value);
  if (text === undefined) return '';
  return text.replace(/"\\u0001RAW:([^"]*)"/g, (_m, tok: string) => {
    if (tok.startsWith('DEEP:')) {
      const n = Number(tok.slice(5));
      return '['.repeat(n) + ']'.repeat(n);
    }
    return tok;
  });
}

const nastyNumber = fc.constantFrom(0, -0, -1, 1, 0.5, 1e308, -1e308, 5e-324, -5e-324, 1e21, 2 ** 53 + 2, -(2 ** 31), 2 ** 32, 2, 63, 64, 65, 400, 401, 20_001, 1e9);
const nastyString = fc.constantFrom('', ' ', 'NaN', 'Infinity', '1e309', '12', '0x10', '\u0000', '__proto__', '../../etc/passwd', 'grid', 'points', 'dq-model', 'sun-machine', 'split', 'ü', '😀', '\u202e', 'x'.repeat(5000));
const nastyValue: fc.Arbitrary<unknown> = fc.oneof(
  nastyNumber,
  nastyString,
  fc.constant(null),
  fc.boolean(),
  fc.constant([]),
  fc.constant({}),
  fc.double(),
  fc.integer(),
  fc.constantFrom(...RAW_TOKENS).map((t) => RAW + t),
  fc.array(nastyNumber, { maxLength: 5 }),
  fc.jsonValue({ maxDepth: 2 }),
  fc.constant(Array.from({ length: 450 }, (_, i) => i)),
);

const EXTRA_KEYS = ['__proto__', 'constructor', 'prototype', 'colour', 'kind', '', 'toString', 'valueOf', 'Points', 'points ', 'x'.repeat(300)];

type Key = string | number;
type Mutation = { at: number; top: boolean; op: 'delete' | 'set' | 'extra' | 'truncate' | 'extend' | 'wrap' | 'stringify'; value: unknown; key: string; len: number };

const mutationArb: fc.Arbitrary<Mutation> = fc.record({
  at: fc.nat(),
  top: fc.boolean(),
  op: fc.constantFrom('delete', 'set', 'set', 'set', 'extra', 'truncate', 'extend', 'wrap', 'stringify'),
  value: nastyValue,
  key: fc.constantFrom(...EXTRA_KEYS),
  len: fc.nat({ max: 5 }),
});

function allPaths(v: unknown, prefix: Key[] = [], out: Key[][] = []): Key[][] {
  out.push(prefix);
  if (Array.isArray(v)) v.forEach((x, i) => allPaths(x, [...prefix, i], out));
  else if (v !== null && typeof v === 'object') for (const k of Object.keys(v)) allPaths((v as Record<string, unknown>)[k], [...prefix, k], out);
  return out;
}

/** Own data property, so that keys like `__proto__` are serialised instead of changing the prototype. */
function setOwn(target: Record<string, unknown> | unknown[], key: Key, value: unknown): void {
  Object.defineProperty(target, key, { value, enumerable: true, writable: true, configurable: true });
}

function mutate(doc: unknown, m: Mutation): unknown {
  const root: { v: unknown } = { v: structuredClone(doc) };
  const paths = allPaths(root.v);
  const candidates = m.top ? paths.filter((p) => p.length <= 1) : paths;
  const p = candidates[m.at % candidates.length]!;
  let parent: Record<string, unknown> | unknown[] = root as unknown as Record<string, unknown>;
  let key: Key = 'v';
  for (const k of p) {
    parent = (parent as Record<Key, unknown>)[key] as Record<string, unknown>;
    key = k;
  }
  const node = (parent as Record<Key, unknown>)[key];
  switch (m.op) {
    case 'delete':
      if (Array.isArray(parent) && typeof key === 'number') parent.splice(key, 1);
      else if (parent === (root as unknown)) root.v = undefined;
      else delete (parent as Record<string, unknown>)[key as string];
      break;
    case 'set':
      setOwn(parent, key, m.value);
      break;
    case 'extra':
      if (node !== null && typeof node === 'object' && !Array.isArray(node)) setOwn(node as Record<string, unknown>, m.key, m.value);
      else if (Array.isArray(node)) node.push(m.value);
      else setOwn(parent, key, { [m.key]: m.value });
      break;
    case 'truncate':
      if (Array.isArray(node)) node.length = Math.min(node.length, m.len);
      else setOwn(parent, key, []);
      break;
    case 'extend':
      if (Array.isArray(node)) for (let i = 0; i <= m.len; i++) node.push(structuredClone(node[node.length - 1] ?? m.value));
      else setOwn(parent, key, [node, node]);
      break;
    case 'wrap':
      setOwn(parent, key, [node]);
      break;
    case 'stringify':
      setOwn(parent, key, typeof node === 'string' ? node : JSON.stringify(node));
      break;
  }
  return root.v;
}

/** A valid document with one to three mutations (raw tokens still as marked strings). */
const mutatedValue = (base: unknown): fc.Arbitrary<unknown> => fc.array(mutationArb, { minLength: 1, maxLength: 3 }).map((ms) => ms.reduce((d, m) => mutate(d, m), base));
/** The same as JSON text, raw tokens substituted. */
const mutatedText = (base: unknown): fc.Arbitrary<string> => mutatedValue(base).map(toText);

const CONTENT_TYPES = [
  'application/json',
  'application/json; charset=utf-8',
  'application/json; charset=latin1',
  'application/JSON',
  'text/csv',
  'text/plain',
  'text/html',
  'application/x-www-form-urlencoded',
  'multipart/form-data; boundary=xyz',
  'application/octet-stream',
  'application/merge-patch+json',
  'image/png',
  '*/*',
  'json',
  ';',
];
const contentTypeArb = fc.oneof(fc.constantFrom(...CONTENT_TYPES), fc.stringMatching(/^[a-z*]{1,8}\/[a-z0-9+.*-]{1,12}(; ?[a-z]{1,8}=[a-z0-9-]{1,8})?$/));

interface Body {
  contentType?: string;
  body?: string | Uint8Array;
}

/** Bodies for a route: mostly mutations of its valid documents, then random JSON, random bytes, random text, none. */
function bodyArb(valid: fc.Arbitrary<unknown> | undefined): fc.Arbitrary<Body> {
  const json = (text: fc.Arbitrary<string>) => text.map((body): Body => ({ contentType: 'application/json', body }));
  const options: Array<fc.WeightedArbitrary<Body>> = [
    { weight: 2, arbitrary: json(fc.jsonValue({ maxDepth: 3 }).map((v) => JSON.stringify(v) ?? 'null')) },
    { weight: 1, arbitrary: fc.record({ contentType: contentTypeArb, body: fc.uint8Array({ maxLength: 2048 }) }) },
    { weight: 1, arbitrary: fc.record({ contentType: contentTypeArb, body: fc.string({ unit: 'grapheme', maxLength: 300 }) }) },
    { weight: 1, arbitrary: fc.constant({}) },
  ];
  if (valid) {
    options.push({ weight: 2, arbitrary: json(valid.map((v) => JSON.stringify(v))) });
    options.push({ weight: 4, arbitrary: json(valid.chain(mutatedText)) });
    options.push({ weight: 1, arbitrary: fc.record({ contentType: contentTypeArb, body: valid.map((v) => JSON.stringify(v)) }) });
  }
  return fc.oneof(...options);
}

// Path segments, already encoded: documents that exist, path tricks, unicode, random.
const MACHINE_NAMES = ['sun-machine', 'ring-machine', 'seed-grid', 'seed-points', 'seed-dq'];
const DRIVETRAIN_NAMES = ['van-axle', 'seed-axle'];
const EXISTING_NAMES = [...MACHINE_NAMES, ...DRIVETRAIN_NAMES, 'fz-new'];
const TRICK_SEGMENTS = [
  '..',
  '.',
  '%2e%2e',
  '..%2F..%2Fetc%2Fpasswd',
  '%2F',
  'a%2Fb',
  'a%00b',
  '%00',
  'UPPER',
  '-lead',
  'a'.repeat(64),
  'a'.repeat(65),
  '.hidden',
  'x.json',
  'seed-grid.json',
  'seed-grid%20',
  'con',
  '%EF%BF%BD',
  '~',
  'sun-machine%0Aevil',
  'a;b',
  'a?b=c',
  'a#b',
];
/** Segments the router itself refuses: malformed percent-encoding, a parameter over 100 characters. */
const BAD_URL_SEGMENTS = ['%', '%E0%A4%A', '%C0%AE%C0%AE', '%ZZ', 'abc%', 'a'.repeat(101), 'a'.repeat(300)];
const nameSegmentArb: fc.Arbitrary<string> = fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom(...EXISTING_NAMES) },
  { weight: 3, arbitrary: fc.constantFrom(...TRICK_SEGMENTS) },
  { weight: 1, arbitrary: fc.string({ unit: 'grapheme', maxLength: 20 }).map(encodeURIComponent) },
  { weight: 1, arbitrary: fc.stringMatching(/^[a-z0-9][a-z0-9-]{0,70}$/) },
);

/** Names for the document properties: mostly documents that exist, so that failed writes hit stored ones. */
const docNameArb: fc.Arbitrary<string> = fc.oneof(
  { weight: 8, arbitrary: fc.constantFrom(...EXISTING_NAMES) },
  { weight: 1, arbitrary: fc.constantFrom(...TRICK_SEGMENTS) },
  { weight: 1, arbitrary: fc.stringMatching(/^[a-z0-9][a-z0-9-]{0,70}$/) },
);

const queryArb: fc.Arbitrary<string> = fc.oneof(
  { weight: 3, arbitrary: fc.constant('') },
  {
    weight: 2,
    arbitrary: fc.constantFrom(
      '?speedRpm=0:800:3&torqueNm=-500:500:3',
      '?speedRpm=0:1e308:201&torqueNm=-1e308:1e308:201',
      '?speedRpm=800:0:5',
      '?torqueNm=1,2,NaN',
      '?modes=split,warp',
      '?modes=',
      '?modeSwitchMarginW=-1',
      '?modeSwitchMarginW=abc',
      '?document=true',
      '?document=maybe',
      '?document[]=true',
      '?kind=grid',
      '?kind=points',
      '?kind=dq-model',
      '?kind=grid&kind=points',
      '?wheelSpeedRpm=400&wheelTorqueNm=800',
      '?wheelSpeedRpm=&wheelTorqueNm=1',
      '?wheelSpeedRpm=1e400&wheelTorqueNm=0',
      '?wheelSpeedRpm=0x10&wheelTorqueNm=1',
      '?wheelSpeedRpm=1&wheelSpeedRpm=2&wheelTorqueNm=3',
      '?wheelSpeedRpm=-0&wheelTorqueNm=-1e8&strict=true&alternatives=false&modes=split,locked',
      '?__proto__[x]=1',
      '?constructor=1',
      '?&&==',
      '?%ZZ',
      '?' + 'a='.repeat(2000),
    ),
  },
  {
    weight: 2,
    arbitrary: fc
      .array(fc.tuple(fc.constantFrom('document', 'kind', 'strict', 'modes', 'speedRpm', 'torqueNm', 'modeSwitchMarginW', 'x', '__proto__'), fc.string({ unit: 'grapheme', maxLength: 12 })), { maxLength: 4 })
      .map((kv) => (kv.length ? '?' + kv.map(([k, v]) => `${k}=${encodeURIComponent(v)}`).join('&') : '')),
  },
);

// Operating points: extreme values and option fields.
const extremeNumber = fc.oneof(
  fc.constantFrom(0, -0, 1e308, -1e308, 1.7976931348623157e308, 5e-324, -5e-324, 1e12, -1e12, 1e6, 16_000, -16_000, 2 ** 53),
  fc.double({ noNaN: true, noDefaultInfinity: true }),
  fc.double({ min: -3000, max: 3000, noNaN: true }),
);
const wheelPointArb = fc.record({ wheelSpeedRpm: extremeNumber, wheelTorqueNm: extremeNumber });
const solveBodyArb = fc.record(
  {
    points: fc.array(wheelPointArb, { minLength: 1, maxLength: 40 }),
    modes: fc.oneof(
      { weight: 4, arbitrary: fc.subarray(['split', 'ring-held', 'sun-held', 'locked'], { minLength: 1 }) },
      { weight: 1, arbitrary: fc.array(fc.constantFrom('split', 'ring-held', 'sun-held', 'locked', 'warp', ''), { maxLength: 6 }) },
    ),
    strict: fc.boolean(),
  },
  { requiredKeys: ['points'] },
);
const inlineBodyArb = fc.tuple(solveBodyArb, fc.oneof(fc.constant(axleDoc as unknown), mutatedValue(axleDoc))).map(([b, drivetrain]) => ({ ...b, drivetrain }));

const machineDocArb = fc.constantFrom<unknown>(seedGrid, pointsDoc, dqDoc, sunDoc);

// Tables and cycles: small requests, so that the valid ones stay cheap.
const axisArb = (lo: number, hi: number) =>
  fc.oneof(
    fc.record({ from: fc.constant(lo), to: fc.constant(hi), steps: fc.integer({ min: 2, max: 12 }) }),
    fc.uniqueArray(fc.integer({ min: lo, max: hi }), { minLength: 2, maxLength: 8 }).map((xs) => xs.sort((a, b) => a - b)),
  );
const tableBodyArb = fc.record(
  {
    speedRpm: axisArb(0, 800),
    torqueNm: axisArb(-1500, 2500),
    modes: fc.subarray(['split', 'ring-held', 'sun-held', 'locked'], { minLength: 1 }),
    strict: fc.boolean(),
    modeSwitchMarginW: fc.constantFrom(0, 50, 1e7),
    format: fc.constantFrom('json', 'csv', 'c'),
  },
  { requiredKeys: ['speedRpm', 'torqueNm'] },
);
/** An invented light delivery van (the same kind of vehicle as the demo drivetrain). */
const vanVehicle = { massKg: 2600, rotatingMassFactor: 0.05, rollingResistance: 0.011, dragAreaM2: 1.9, auxiliaryW: 400 };
const shortCycleArb = fc.array(fc.integer({ min: 0, max: 90 }), { minLength: 2, maxLength: 30 }).map((v) => ({ timeS: v.map((_, i) => i), speedKph: [0, ...v.slice(1)] }));
const cycleBodyArb = fc.record(
  {
    vehicle: fc.constant(vanVehicle),
    cycle: fc.oneof({ weight: 4, arbitrary: shortCycleArb }, { weight: 1, arbitrary: fc.constant({ builtin: 'nedc' }) }),
    series: fc.boolean(),
    usableBatteryWh: fc.constantFrom(60_000, 1),
  },
  { requiredKeys: ['vehicle', 'cycle'] },
);

// ---------------------------------------------------------------------------------------------
// The routes under fuzz. `{…}` segments are replaced by generated names.

interface FuzzRoute {
  method: string;
  path: string;
  /** Plausible bodies for this route (mutated by the fuzzer); random bodies are sent as well. */
  valid?: fc.Arbitrary<unknown>;
}

const route = (method: string, path: string, valid?: fc.Arbitrary<unknown>): FuzzRoute => ({ method, path, ...(valid ? { valid } : {}) });

/** Path names for a route: often a document of the kind the path names, so that valid bodies get through. */
function routeNameArb(path: string): fc.Arbitrary<string> {
  const own = path.startsWith('/v1/drivetrains/') ? DRIVETRAIN_NAMES : path.startsWith('/v1/machines/') ? MACHINE_NAMES : EXISTING_NAMES;
  return fc.oneof({ weight: 1, arbitrary: fc.constantFrom(...own) }, { weight: 1, arbitrary: nameSegmentArb });
}

const ROUTES: FuzzRoute[] = [
  route('GET', '/health'),
  route('GET', '/ready'),
  route('GET', '/metrics'),
  route('GET', '/v1/machines'),
  route('GET', '/v1/machines/{name}'),
  route('PUT', '/v1/machines/{name}', machineDocArb),
  route('DELETE', '/v1/machines/{name}'),
  route('GET', '/v1/drivetrains'),
  route('GET', '/v1/drivetrains/{name}'),
  route('PUT', '/v1/drivetrains/{name}', fc.constant(axleDoc)),
  route('DELETE', '/v1/drivetrains/{name}'),
  route('POST', '/v1/drivetrains/{name}/operating-points', solveBodyArb),
  route('POST', '/v1/operating-points', inlineBodyArb),
  route('GET', '/v1/drivetrains/{name}/operating-point'),
  route('POST', '/v1/drivetrains/{name}/tables', tableBodyArb),
  route('GET', '/v1/drivetrains/{name}/plot.svg'),
  route('GET', '/v1/machines/{name}/plot.svg'),
  route('GET', '/v1/cycles'),
  route('POST', '/v1/drivetrains/{name}/cycles', cycleBodyArb),
  route('POST', '/v1/drivetrains/{name}/cycles/plot.svg', cycleBodyArb),
];

// ---------------------------------------------------------------------------------------------
// Client and checks

interface Reply {
  status: number;
  headers: http.IncomingHttpHeaders;
  text: string;
}

const agent = new http.Agent({ keepAlive: true, maxSockets: 4 });

/** One request with the path sent byte for byte as given (no URL normalisation). */
function send(base: string, method: string, rawPath: string, b: Body = {}): Promise<Reply> {
  const { hostname, port } = new URL(base);
  const payload = b.body === undefined ? undefined : typeof b.body === 'string' ? Buffer.from(b.body, 'utf8') : Buffer.from(b.body);
  const headers: Record<string, string> = {};
  if (b.contentType !== undefined) headers['content-type'] = b.contentType;
  if (payload) headers['content-length'] = String(payload.length);
  return new Promise((resolve, reject) => {
    const req = http.request({ host: hostname, port: Number(port), method, path: rawPath, headers, agent, timeout: 60_000 }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, text: Buffer.concat(chunks).toString('utf8') }));
      res.on('error', reject);
    });
    req.on('timeout', () => req.destroy(new Error(`no answer within 60 s to ${method} ${rawPath}`)));
    req.on('error', reject);
    req.end(payload);
  });
}

function describeRequest(method: string, rawPath: string, b: Body): string {
  const body = b.body === undefined ? '(none)' : typeof b.body === 'string' ? b.body.slice(0, 600) : `<${b.body.length} bytes>`;
  return `${method} ${rawPath.slice(0, 300)} content-type=${JSON.stringify(b.contentType)} body=${body}`;
}

/** The response properties every request must satisfy. */
function checkReply(r: Reply, method: string, what: string): void {
  expect(r.status, `5xx for ${what}: ${r.text.slice(0, 400)}`).toBeLessThan(500);
  if (r.status < 400 || method === 'HEAD') return;
  expect(r.headers['content-type'], what).toMatch(/^application\/json/);
  let body: { error?: { code?: unknown; message?: unknown; path?: unknown } };
  try {
    body = JSON.parse(r.text);
  } catch {
    throw new Error(`error body is not JSON for ${what}: ${r.text.slice(0, 200)}`);
  }
  const code = body.error?.code;
  expect(typeof code, what).toBe('string');
  expect(Object.keys(ERROR_CATALOGUE), what).toContain(code);
  expect(ERROR_CATALOGUE[code as keyof typeof ERROR_CATALOGUE].status, `status of ${String(code)} for ${what}`).toBe(r.status);
  expect(typeof body.error?.message, what).toBe('string');
  if (body.error?.path !== undefined) expect(typeof body.error.path, what).toBe('string');
}

interface Snapshot {
  files: Record<string, string>;
  http: Record<string, string>;
}

function readTree(dir: string, prefix: string, out: Record<string, string>): void {
  let entries: string[];
  try {
    entries = readdirSync(dir);
  } catch {
    return;
  }
  for (const e of entries) {
    const full = path.join(dir, e);
    if (statSync(full).isDirectory()) readTree(full, `${prefix}${e}/`, out);
    else out[prefix + e] = readFileSync(full, 'utf8');
  }
}

/** Every stored file (DATA_DIR and MAPS_DIR, temp files included) and every document as GET answers it. */
async function snapshot(srv: TestServer): Promise<Snapshot> {
  const files: Record<string, string> = {};
  readTree(srv.dirs.dataDir, 'data/', files);
  readTree(srv.dirs.mapsDir, 'maps/', files);
  const out: Record<string, string> = {};
  for (const kind of ['machines', 'drivetrains'] as const) {
    const list = await send(srv.url, 'GET', `/v1/${kind}`);
    out[kind] = list.text;
    for (const item of (JSON.parse(list.text) as Record<string, Array<{ name: string }>>)[kind]!) {
      const one = await send(srv.url, 'GET', `/v1/${kind}/${item.name}${kind === 'machines' ? '?document=true' : ''}`);
      out[`${kind}/${item.name}`] = `${one.status} ${one.text}`;
    }
  }
  return { files, http: out };
}

async function expectHealthy(srv: TestServer): Promise<void> {
  const h = await send(srv.url, 'GET', '/health');
  expect(h.status).toBe(200);
  expect(JSON.parse(h.text)).toEqual({ status: 'ok' });
}

const WRITE_METHODS = new Set(['PUT', 'POST', 'DELETE', 'PATCH']);

/** FUZZ_SCALE=n multiplies every run count (longer hunts by hand); FUZZ_VERBOSE=1 prints answers by status and code. */
const SCALE = Math.max(1, Number(process.env.FUZZ_SCALE) || 1);
const runs = (n: number) => ({ numRuns: n * SCALE });
const tally = new Map<string, number>();

/**
 * Sends one request and checks it. Write requests that fail (and operating-point requests
 * always) must leave every stored file and every GET answer as it was.
 */
async function exercise(srv: TestServer, state: { snap: Snapshot }, method: string, rawPath: string, b: Body, opts: { neverWrites?: boolean } = {}): Promise<Reply> {
  const what = describeRequest(method, rawPath, b);
  const r = await send(srv.url, method, rawPath, b);
  checkReply(r, method, what);
  const key = `${method} ${r.status}${r.status >= 400 && method !== 'HEAD' ? ' ' + (JSON.parse(r.text) as { error: { code: string } }).error.code : ''}`;
  tally.set(key, (tally.get(key) ?? 0) + 1);
  if (WRITE_METHODS.has(method)) {
    const after = await snapshot(srv);
    if (opts.neverWrites || r.status >= 300) expect(after, `stored documents changed by ${r.status} answer to ${what}`).toEqual(state.snap);
    state.snap = after;
  }
  await expectHealthy(srv);
  return r;
}

// ---------------------------------------------------------------------------------------------

describe('HTTP fuzzing: no 5xx, catalogue error bodies, failed writes change nothing', () => {
  let dirs: ReturnType<typeof tempDirs>;
  let srv: TestServer;
  const state = {} as { snap: Snapshot };

  /** Puts the seed documents back (a fuzzed DELETE or PUT may have removed or replaced them). */
  async function ensureSeeds(): Promise<void> {
    const seeds: Array<[string, unknown]> = [
      ['/v1/machines/seed-grid', seedGrid],
      ['/v1/machines/seed-points', pointsDoc],
      ['/v1/machines/seed-dq', dqDoc],
      ['/v1/drivetrains/seed-axle', { ...axleDoc, description: 'invented fuzz seed' }],
    ];
    for (const [p, doc] of seeds) {
      const r = await send(srv.url, 'PUT', p, { contentType: 'application/json', body: JSON.stringify(doc) });
      expect([200, 201], `seeding ${p}: ${r.text.slice(0, 300)}`).toContain(r.status);
    }
    state.snap = await snapshot(srv);
  }

  beforeAll(async () => {
    dirs = tempDirs();
    srv = await startServer(dirs);
  });
  afterAll(async () => {
    if (process.env.FUZZ_VERBOSE) console.log([...tally].sort().map(([k, n]) => `${k}: ${n}`).join('\n'));
    agent.destroy();
    await srv.close();
    dirs.cleanup();
  });

  it('fuzzes every route the OpenAPI document lists', async () => {
    const doc = JSON.parse((await send(srv.url, 'GET', '/openapi.json')).text) as { paths: Record<string, Record<string, unknown>> };
    const fuzzed = new Set(ROUTES.map((r) => `${r.method} ${r.path}`));
    const documented = Object.entries(doc.paths).flatMap(([p, ops]) => Object.keys(ops).map((m) => `${m.toUpperCase()} ${p}`));
    expect(documented.length).toBeGreaterThan(5);
    expect(documented.filter((k) => !fuzzed.has(k))).toEqual([]);
  });

  it('malformed percent-encoding and over-long names in the path get a catalogue error body', async () => {
    await ensureSeeds();
    const templates = [...new Set(ROUTES.filter((r) => r.path.includes('{')).map((r) => `${r.method} ${r.path}`))];
    for (const t of templates) {
      const [method, p] = t.split(' ') as [string, string];
      for (const seg of BAD_URL_SEGMENTS) await exercise(srv, state, method, p.replace(/\{[^}]+\}/g, seg), { contentType: 'application/json', body: '{}' });
    }
  });

  it('every route: random names, query strings, content types and bodies', async () => {
    await ensureSeeds();
    const arb = fc
      .constantFrom(...ROUTES)
      .chain((rt) =>
        fc.record({
          rt: fc.constant(rt),
          method: fc.oneof({ weight: 6, arbitrary: fc.constant(rt.method) }, { weight: 1, arbitrary: fc.constantFrom('GET', 'PUT', 'POST', 'DELETE', 'PATCH', 'OPTIONS', 'HEAD') }),
          names: fc.array(routeNameArb(rt.path), { minLength: 4, maxLength: 4 }),
          query: queryArb,
          body: bodyArb(rt.valid),
        }),
      );
    await fc.assert(
      fc.asyncProperty(arb, async ({ rt, method, names, query, body }) => {
        let i = 0;
        const p = rt.path.replace(/\{[^}]+\}/g, () => names[i++ % names.length]!) + query;
        await exercise(srv, state, method, p, body);
      }),
      runs(150),
    );
  });

  it('GET /v1/drivetrains/{name}/operating-point: random query values', async () => {
    await ensureSeeds();
    const value = fc.oneof(
      fc.double().map(String),
      fc.integer({ min: -3000, max: 3000 }).map(String),
      fc.constantFrom('', ' ', 'NaN', 'Infinity', '-', '1e', '.', '1,5', '١٢', '%00', '1%20', 'true', 'split,locked', 'split,,locked'),
    );
    const arb = fc.record(
      {
        wheelSpeedRpm: value,
        wheelTorqueNm: value,
        modes: fc.oneof(value, fc.constantFrom('split', 'locked,split', 'ring-held,sun-held', 'warp')),
        strict: fc.oneof(value, fc.constantFrom('true', 'false')),
        alternatives: fc.oneof(value, fc.constantFrom('true', 'false')),
      },
      { requiredKeys: [] },
    );
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...DRIVETRAIN_NAMES), arb, async (name, q) => {
        const query = Object.entries(q)
          .map(([k, v]) => `${k}=${encodeURIComponent(v as string)}`)
          .join('&');
        await exercise(srv, state, 'GET', `/v1/drivetrains/${name}/operating-point?${query}`, {});
      }),
      runs(150),
    );
  });

  it('PUT /v1/machines/{name}: mutated grid, points and dq-model documents', async () => {
    await ensureSeeds();
    const arb = fc.record({ name: docNameArb, text: machineDocArb.chain(mutatedText) });
    await fc.assert(
      fc.asyncProperty(arb, async ({ name, text }) => {
        await exercise(srv, state, 'PUT', `/v1/machines/${name}`, { contentType: 'application/json', body: text });
      }),
      runs(150),
    );
  });

  it('PUT /v1/machines/{name}: random JSON values', async () => {
    await ensureSeeds();
    const value = fc.oneof(fc.jsonValue({ maxDepth: 4 }), fc.dictionary(fc.constantFrom('kind', 'speedRpm', 'torqueNm', 'lossW', 'points', 'envelope', 'maxSpeedRpm', 'polePairs'), nastyValue));
    await fc.assert(
      fc.asyncProperty(fc.constantFrom('seed-grid', 'sun-machine', 'fz-new'), value, async (name, v) => {
        await exercise(srv, state, 'PUT', `/v1/machines/${name}`, { contentType: 'application/json', body: toText(v) });
      }),
      runs(80),
    );
  });

  it('PUT /v1/machines/{name}?kind=…: mutated CSV bodies', async () => {
    await ensureSeeds();
    const lines = seedCsvLines();
    const lineOp = fc.record({
      at: fc.nat(),
      op: fc.constantFrom('delete', 'duplicate', 'replace-cell', 'add-column', 'blank', 'garbage'),
      token: fc.oneof(nastyString, fc.constantFrom('NaN', '1e400', '-1e308', '', '"', '""', '"1,2"', '#', '﻿0', ' 1 ', '1;2', '\r')),
      garbage: fc.string({ unit: 'grapheme', maxLength: 40 }),
    });
    const csvArb = fc.tuple(fc.array(lineOp, { minLength: 1, maxLength: 4 }), fc.boolean()).map(([ops, crlf]) => {
      const out = [...lines];
      for (const o of ops) {
        const i = o.at % out.length;
        const cells = out[i]!.split(',');
        if (o.op === 'delete') out.splice(i, 1);
        else if (o.op === 'duplicate') out.splice(i, 0, out[i]!);
        else if (o.op === 'replace-cell') out[i] = cells.map((c, j) => (j === o.at % cells.length ? o.token : c)).join(',');
        else if (o.op === 'add-column') out[i] = out[i] + ',' + o.token;
        else if (o.op === 'blank') out[i] = '';
        else out[i] = o.garbage;
      }
      return out.join(crlf ? '\r\n' : '\n');
    });
    await fc.assert(
      fc.asyncProperty(fc.constantFrom('seed-grid', 'fz-new', 'sun-machine'), fc.constantFrom('?kind=grid', '?kind=points', '', '?kind=dq-model'), csvArb, async (name, q, csv) => {
        await exercise(srv, state, 'PUT', `/v1/machines/${name}${q}`, { contentType: 'text/csv', body: csv });
      }),
      runs(100),
    );
  });

  it('PUT /v1/drivetrains/{name}: mutated van-axle documents', async () => {
    await ensureSeeds();
    const arb = fc.record({ name: docNameArb, text: mutatedText(axleDoc) });
    await fc.assert(
      fc.asyncProperty(arb, async ({ name, text }) => {
        await exercise(srv, state, 'PUT', `/v1/drivetrains/${name}`, { contentType: 'application/json', body: text });
      }),
      runs(120),
    );
  });

  it('operating points: extreme values answer one result per point, in order, and store nothing', async () => {
    await ensureSeeds();
    const arb = fc
      .oneof(
        fc.record({ p: fc.constantFrom('/v1/drivetrains/van-axle/operating-points', '/v1/drivetrains/seed-axle/operating-points'), body: solveBodyArb }),
        fc.record({ p: fc.constant('/v1/operating-points'), body: inlineBodyArb }),
      )
      .chain(({ p, body }) => fc.record({ p: fc.constant(p), text: fc.oneof(fc.constant(toText(body)), mutatedText(body)) }));
    await fc.assert(
      fc.asyncProperty(arb, async ({ p, text }) => {
        const r = await exercise(srv, state, 'POST', p, { contentType: 'application/json', body: text }, { neverWrites: true });
        if (r.status !== 200) return;
        const sent = JSON.parse(text) as { points: Array<{ wheelSpeedRpm: number; wheelTorqueNm: number }> };
        const got = JSON.parse(r.text) as { results: Array<Record<string, unknown>> };
        expect(got.results).toHaveLength(sent.points.length);
        got.results.forEach((res, i) => {
          // `+ 0` folds −0 into 0: JSON writes −0 as 0.
          expect((res.wheelSpeedRpm as number) + 0).toBe(sent.points[i]!.wheelSpeedRpm + 0);
          expect((res.wheelTorqueNm as number) + 0).toBe(sent.points[i]!.wheelTorqueNm + 0);
          expect(typeof res.feasible).toBe('boolean');
          // A feasible answer has a battery power; NaN would have been serialised as null.
          if (res.feasible) expect(typeof res.batteryW, `batteryW at ${JSON.stringify(sent.points[i])}`).toBe('number');
        });
      }),
      runs(120),
    );
  });
});
