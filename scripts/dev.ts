// `npm run dev`: the API server, worker and mail sink as in npm start, plus Vite's hot reload on :5173 proxying /api.
import { prepareDatabase } from './prepare';
import { startTs, runSync } from './processes';

await prepareDatabase();
startTs('mail', 'server/mail/sinkMain.ts');
startTs('worker', 'server/worker/main.ts');
startTs('api', 'server/index.ts');
await runSync(process.execPath, ['node_modules/vite/bin/vite.js', '--host', '127.0.0.1']);
