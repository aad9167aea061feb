/**
 * Writes the OpenAPI 3.1 document generated from the route schemas to openapi/openapi.json;
 * with --check, exits 1 when the committed file differs from what the code generates.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { buildApp } from '../src/api/app.js';
import { configFromEnv } from '../src/config.js';
import { Registry } from '../src/store/registry.js';

const target = new URL('../openapi/openapi.json', import.meta.url);
const config = configFromEnv({});
const app = await buildApp({ config, registry: new Registry({ mapsDir: '/nonexistent', dataDir: '/nonexistent' }), logger: false });
await app.ready();
const text = JSON.stringify(app.swagger(), null, 2) + '\n';
await app.close();

if (process.argv.includes('--check')) {
  let current = '';
  try {
    current = readFileSync(target, 'utf8');
  } catch {
    // missing counts as stale
  }
  if (current !== text) {
    console.error('openapi/openapi.json is stale; run `npm run openapi` and commit the result');
    process.exit(1);
  }
  console.log('openapi/openapi.json is up to date');
} else {
  writeFileSync(target, text);
  console.log('wrote openapi/openapi.json');
}
