import { ensureDatabase, migrate } from './database';
import { seedIfEmpty } from './seed';

/** Database ready for use: created if missing (or fresh), migrated, demo seeded when empty. */
export async function prepareDatabase(options: { fresh?: boolean } = {}): Promise<string> {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run through `npm start` / `npm test`');
  await ensureDatabase(url, process.env.LOADLINE_ADMIN_DATABASE_URL ?? '', options);
  await migrate(url);
  const seeded = await seedIfEmpty(url);
  console.log(seeded ? '[loadline] demo data seeded' : '[loadline] database already has data: demo not seeded');
  return url;
}
