// Knex CLI config: `node --import tsx node_modules/knex/bin/cli.js migrate:latest --knexfile knexfile.ts`.
// `npm start` and `npm test` migrate programmatically (scripts/database.ts); this file is for hand use.
export default {
  client: 'pg',
  connection: process.env.DATABASE_URL,
  migrations: { directory: './migrations', loadExtensions: ['.ts'], tableName: 'knex_migrations' },
};
