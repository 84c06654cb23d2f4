// The app in its own process for the portfolio-risk benchmark: listens on a free loopback port, prints it, serves
// until killed. Started by bench/portfolioRisk.bench.ts so that the load comes from a second process.
import { loadConfig } from '../../server/config';
import { createKnex, bindModels } from '../../server/db/knex';
import { createApp } from '../../server/app';

const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 10 });
bindModels(knex);
const app = createApp(config, { serveClient: false });
const server = app.listen(0, '127.0.0.1', () => {
  const address = server.address();
  process.stdout.write(`PORT ${typeof address === 'object' && address ? address.port : 0}\n`);
});
process.on('SIGTERM', () => server.close(() => knex.destroy().then(() => process.exit(0))));
