import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('users', (t) => {
    t.increments('id').primary();
    t.text('email').notNullable();
    t.text('name').notNullable();
    t.text('password_hash'); // null until an invited user sets a password
    t.text('role').notNullable();
    t.boolean('active').notNullable().defaultTo(true);
    // Sessions issued before this instant stop working (sign-out everywhere, deactivation, password change).
    t.timestamp('sessions_valid_after', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.timestamp('last_sign_in_at', { useTz: true });
    t.timestamps(true, true);
  });
  await knex.raw(`ALTER TABLE users ADD CONSTRAINT users_role_check CHECK (role IN ('admin','analyst','pm','compliance'))`);
  await knex.raw('CREATE UNIQUE INDEX users_email_lower_unique ON users (lower(email))');

  await knex.schema.createTable('api_tokens', (t) => {
    t.increments('id').primary();
    t.integer('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('name').notNullable();
    t.text('token_hash').notNullable().unique(); // SHA-256 of the secret; the secret is shown once
    t.text('prefix').notNullable(); // first characters, to tell tokens apart in lists
    t.timestamp('expires_at', { useTz: true });
    t.timestamp('last_used_at', { useTz: true });
    t.timestamp('revoked_at', { useTz: true });
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
  });

  // Append-only: the application role never updates or deletes rows (enforced by a trigger).
  await knex.schema.createTable('audit_events', (t) => {
    t.bigIncrements('id').primary();
    t.timestamp('at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.integer('actor_id').references('users.id').onDelete('SET NULL');
    t.text('actor_email'); // kept even if the user is later removed
    t.text('action').notNullable(); // e.g. 'auth.sign-in', 'user.role-changed'
    t.text('object_type');
    t.text('object_id');
    t.text('ip');
    t.jsonb('details').notNullable().defaultTo('{}');
    t.index(['at']);
    t.index(['action']);
    t.index(['object_type', 'object_id']);
  });
  await knex.raw(`
    CREATE FUNCTION audit_events_append_only() RETURNS trigger AS $$
    BEGIN RAISE EXCEPTION 'audit_events is append-only'; END; $$ LANGUAGE plpgsql;
    CREATE TRIGGER audit_events_no_update BEFORE UPDATE OR DELETE ON audit_events
      FOR EACH ROW EXECUTE FUNCTION audit_events_append_only();
  `);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('audit_events');
  await knex.raw('DROP FUNCTION IF EXISTS audit_events_append_only');
  await knex.schema.dropTable('api_tokens');
  await knex.schema.dropTable('users');
}
