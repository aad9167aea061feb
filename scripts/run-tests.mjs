// Runs the vitest suite with a JSON report and ends with the plain line
// "N passed, N failed, N skipped". Exit code 1 when anything failed or the run broke.
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync, rmSync } from 'node:fs';

const report = '.vitest-report.json';
rmSync(report, { force: true });
const args = ['vitest', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, ...process.argv.slice(2)];
const run = spawnSync('npx', args, { stdio: 'inherit' });

let passed = 0;
let failed = 0;
let skipped = 0;
if (existsSync(report)) {
  const r = JSON.parse(readFileSync(report, 'utf8'));
  passed = r.numPassedTests ?? 0;
  failed = r.numFailedTests ?? 0;
  skipped = (r.numPendingTests ?? 0) + (r.numTodoTests ?? 0);
  // A test file that fails to load has no tests but counts as a failure.
  for (const file of r.testResults ?? []) {
    if (file.status === 'failed' && (file.assertionResults ?? []).length === 0) failed += 1;
  }
} else {
  failed = 1;
  console.error('no test report was written (vitest did not finish)');
}
if (run.status !== 0 && failed === 0) failed = 1;
console.log(`${passed} passed, ${failed} failed, ${skipped} skipped`);
process.exit(failed > 0 ? 1 : 0);
