import { ensureDatabase, migrate } from './database';
import { seedDemoWhereMissing } from './seed';

/** Database ready for use: created if missing (or fresh), migrated, the demo's missing parts seeded into a demo database. */
export async function prepareDatabase(options: { fresh?: boolean } = {}): Promise<string> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run through `npm start` / `npm test`');
  await ensureDatabase(url, process.env.LOADLINE_ADMIN_DATABASE_URL ?? '', options);
  await migrate(url);
  const seeded = await seedDemoWhereMissing(url);
  console.log(seeded.length ? `[loadline] demo data seeded: ${seeded.join(', ')}` : '[loadline] demo data: nothing to add (complete, or not a demo database)');
  return url;
}
