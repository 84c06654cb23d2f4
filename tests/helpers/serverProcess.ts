// The real app in a child process on a free loopback port (for tests that kill the server, and benchmarks that
// measure its memory). Prints one JSON line {"port": N} when listening.
import { loadConfig } from '../../server/config';
import { createKnex, bindModels } from '../../server/db/knex';
import { createApp } from '../../server/app';

const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 5 });
bindModels(knex);
const app = createApp(config, { serveClient: false });
const server = app.listen(0, '127.0.0.1', () => {
  const address = server.address();
  process.stdout.write(`${JSON.stringify({ port: typeof address === 'object' && address ? address.port : 0 })}\n`);
});
process.on('SIGTERM', () => server.close(() => knex.destroy().then(() => process.exit(0))));
