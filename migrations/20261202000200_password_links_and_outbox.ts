import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  // One-time links that let a user set a password (invitation) or choose a new one (reset).
  await knex.schema.createTable('password_links', (t) => {
    t.increments('id').primary();
    t.integer('user_id').notNullable().references('users.id').onDelete('CASCADE');
    t.text('purpose').notNullable();
    t.text('token_hash').notNullable().unique(); // SHA-256 of the secret in the link; the secret is only in the mail
    t.timestamp('expires_at', { useTz: true }).notNullable();
    t.timestamp('used_at', { useTz: true }); // set when used or superseded by a newer link
    t.timestamp('created_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.index(['user_id']);
  });
  await knex.raw(`ALTER TABLE password_links ADD CONSTRAINT password_links_purpose_check CHECK (purpose IN ('invitation','reset'))`);

  // Every message the local SMTP sink receives (the stand-in for the firm's mail service).
  await knex.schema.createTable('outbox_messages', (t) => {
    t.bigIncrements('id').primary();
    t.timestamp('received_at', { useTz: true }).notNullable().defaultTo(knex.fn.now());
    t.text('from_address').notNullable();
    t.text('to_address').notNullable();
    t.text('subject').notNullable();
    t.text('text').notNullable();
    t.text('html');
    t.index(['received_at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('outbox_messages');
  await knex.schema.dropTable('password_links');
}
