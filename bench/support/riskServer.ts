// The app in its own process for the portfolio-risk benchmark: listens on a free loopback port, prints it, serves
// until killed. Started by bench/portfolioRisk.bench.ts so that the load comes from a second process.
import { loadConfig } from '../../server/config';
import { createKnex, bindModels } from '../../server/db/knex';
import { createApp } from '../../server/app';

// The bench may stop reading our output before we exit: a closed pipe is not an error here.
process.stdout.on('error', () => {});
const config = loadConfig();
const knex = createKnex(config.databaseUrl, { max: 10 });
bindModels(knex);
const app = createApp(config, { serveClient: false });
const server = app.listen(0, '127.0.0.1', () => {
  const address = server.address();
  process.stdout.write(`PORT ${typeof address === 'object' && address ? address.port : 0}\n`);
});
// The bench asks for the process's CPU time around a load run (SIGUSR2): CPU per request does not depend on how busy
// the rest of the machine is, unlike latency.
process.on('SIGUSR2', () => {
  const usage = process.cpuUsage();
  process.stdout.write(`CPU ${usage.user + usage.system}\n`);
});
// Stopped by the bench when it is done: in-flight requests of the last load run do not matter.
process.on('SIGTERM', () => process.exit(0));
