import { upsertUser } from './authService';

/** LOADLINE_ADMIN_EMAIL and LOADLINE_ADMIN_PASSWORD create (or reset) the first admin at start. */
export async function ensureAdminFromEnv(env: NodeJS.ProcessEnv = process.env): Promise<void> {
  const email = env.LOADLINE_ADMIN_EMAIL;
  const password = env.LOADLINE_ADMIN_PASSWORD;
  if (!email || !password) return;
  if (password.length < 10) throw new Error('LOADLINE_ADMIN_PASSWORD must have at least 10 characters');
  await upsertUser({ email, name: env.LOADLINE_ADMIN_NAME ?? 'Administrator', role: 'admin', password });
  console.log(`[api] admin ${email} is ready`);
}
