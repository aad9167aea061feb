#!/usr/bin/env node
// Launcher of the episplit command line: the compiled dist/cli/main.js when it exists (after
// `npm run build`), else the TypeScript source through tsx's loader.
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

const compiled = new URL('../dist/cli/main.js', import.meta.url);
if (existsSync(fileURLToPath(compiled))) {
  await import(compiled.href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import(new URL('../src/cli/main.ts', import.meta.url).href);
}
