// `npm run bench`: runs every bench/*.bench.ts in turn (each exports `default async function run()`).
// Speed targets are measured here, never by timed assertions in tests.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';

const only = process.argv.slice(2);
const files = readdirSync(import.meta.dirname)
  .filter((f) => f.endsWith('.bench.ts'))
  .filter((f) => !only.length || only.some((o) => f.includes(o)))
  .sort();
for (const file of files) {
  console.log(`\n=== ${file} ===`);
  const module = (await import(pathToFileURL(join(import.meta.dirname, file)).href)) as { default: () => Promise<void> };
  await module.default();
}
process.exit(0);
