// Seeds the invented demo when the database is empty (npm start and npm test run this).
import { createKnex, bindModels } from '../server/db/knex';
import { seedDemo, databaseIsEmpty } from '../server/demo/seed';

export async function seedIfEmpty(url: string): Promise<boolean> {
  const knex = createKnex(url, { max: 4 });
  bindModels(knex);
  try {
    if (!(await databaseIsEmpty(knex))) return false;
    await seedDemo(knex);
    return true;
  } finally {
    await knex.destroy();
  }
}
