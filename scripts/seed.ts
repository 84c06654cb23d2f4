// Seeds the invented demo into a demo database, part by part where absent (npm start and npm test run this).
import { createKnex, bindModels } from '../server/db/knex';
import { completeDemo } from '../server/demo/seed';

/** Answers the demo parts seeded now (none when the database has them all, or is not a demo database). */
export async function seedDemoWhereMissing(url: string): Promise<string[]> {
  const knex = createKnex(url, { max: 4 });
  bindModels(knex);
  try {
    return await completeDemo(knex);
  } finally {
    await knex.destroy();
  }
}
