// `npm start`: database ready, client built, then the API server, the background worker and the mail sink.
import { prepareDatabase } from './prepare';
import { runSync, startTs } from './processes';
import { loadConfig } from '../server/config';
import { DEMO_USERS } from '../server/demo/users';

await prepareDatabase();
console.log('[loadline] building the client');
await runSync(process.execPath, ['node_modules/vite/bin/vite.js', 'build', '--logLevel', 'warn']);
const config = loadConfig();
startTs('mail', 'server/mail/sinkMain.ts');
startTs('worker', 'server/worker/main.ts');
startTs('api', 'server/index.ts');

setTimeout(() => {
  console.log(`\n  Loadline is running at ${config.publicUrl}\n`);
  console.log('  Demo sign-ins (invented firm, demo database only):');
  for (const user of DEMO_USERS) console.log(`    ${user.role.padEnd(11)} ${user.email.padEnd(32)} ${user.password}`);
  console.log(`\n  Mail sent by Loadline lands in the local sink (admins: Outbox page). Stop with Ctrl+C; npm run db:stop stops PostgreSQL.\n`);
}, 2500);
