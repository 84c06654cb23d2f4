// `npm run migrate`: brings DATABASE_URL's schema up to date.
import { migrate } from './database';

if (!process.env.DATABASE_URL) throw new Error('DATABASE_URL is not set');
await migrate(process.env.DATABASE_URL);
console.log('migrations are up to date');
