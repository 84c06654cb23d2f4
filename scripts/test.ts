// `npm test`: the same bootstrap into a fresh test database, a client build for the browser tests, then every test.
import { readFileSync, existsSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { prepareDatabase } from './prepare';
import { runSync } from './processes';
import { loadConfig } from '../server/config';

const dataDir = process.env.LOADLINE_DATA_DIR ?? '.data';
const report = join(dataDir, `vitest-report-${process.pid}.json`);

await prepareDatabase({ fresh: true });
loadConfig(); // makes the session secret once, before parallel test files read it
console.log('[loadline] building the client for browser tests');
await runSync(process.execPath, ['node_modules/vite/bin/vite.js', 'build', '--logLevel', 'warn']);

let failed = false;
try {
  await runSync(process.execPath, ['node_modules/vitest/vitest.mjs', 'run', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, ...process.argv.slice(2)], {
    NO_COLOR: '1',
    CI: process.env.CI ?? '',
  });
} catch {
  failed = true;
}
if (existsSync(report)) {
  const summary = JSON.parse(readFileSync(report, 'utf8')) as { numPassedTests: number; numFailedTests: number; numPendingTests: number; numTotalTests: number };
  rmSync(report);
  // The plain closing line CI reads.
  console.log(`\n${summary.numPassedTests} passed, ${summary.numFailedTests} failed, ${summary.numPendingTests} skipped`);
  if (summary.numTotalTests === 0) failed = true;
}
process.exit(failed ? 1 : 0);
