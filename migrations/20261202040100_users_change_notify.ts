import type { Knex } from 'knex';

/**
 * Every change to a user row is announced on the channel `loadline_user_changed` (payload: the user id), at commit.
 * Each API process keeps signed-in users in memory (server/auth/userCache.ts) and drops an entry when its id is
 * announced, so deactivation, role changes and password changes still bite at once in every process.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw(`
    CREATE FUNCTION users_announce_change() RETURNS trigger AS $$
    BEGIN
      PERFORM pg_notify('loadline_user_changed', OLD.id::text);
      RETURN NULL;
    END; $$ LANGUAGE plpgsql;
    CREATE TRIGGER users_announce_change AFTER UPDATE OR DELETE ON users
      FOR EACH ROW EXECUTE FUNCTION users_announce_change();
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS users_announce_change ON users; DROP FUNCTION IF EXISTS users_announce_change()');
}
