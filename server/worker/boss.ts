import PgBoss from 'pg-boss';

/** One pg-boss instance over Loadline's database: jobs live in PostgreSQL, so any number of workers share them. */
export function createBoss(databaseUrl: string): PgBoss {
  const boss = new PgBoss({ connectionString: databaseUrl, schema: 'pgboss', max: 4 });
  boss.on('error', (error) => console.error('[queue]', error));
  return boss;
}
