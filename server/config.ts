import { existsSync, linkSync, mkdirSync, readFileSync, unlinkSync, writeFileSync } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { join, resolve } from 'node:path';

/** Everything the server reads from its environment, read once. */
export interface Config {
  databaseUrl: string;
  port: number;
  host: string;
  jwtSecret: string;
  /** Session token lifetime in seconds. */
  sessionTtlSeconds: number;
  smtpUrl: string;
  smtpSinkPort: number;
  mailFrom: string;
  publicUrl: string;
  dataDir: string;
  uploadLimitBytes: number;
  /** Behind a proxy, Express must trust it to see client IPs (rate limits, audit). */
  trustProxy: boolean;
  corsOrigins: string[];
  /** How long an invitation link stays valid. */
  invitationTtlHours: number;
  /** How long a password-reset link stays valid. */
  passwordResetTtlMinutes: number;
  /** Rate limits (per window) on sign-in failures and password-reset requests, by client IP and by e-mail. */
  rateLimits: {
    windowSeconds: number;
    signInFailuresPerIp: number;
    signInFailuresPerAccount: number;
    passwordResetsPerIp: number;
    passwordResetsPerAccount: number;
  };
}

const repoRoot = resolve(import.meta.dirname, '..');

/**
 * The session signing secret kept in the data folder, made on first use. Several processes may start at once (the
 * API server, the worker, parallel test files): the secret is written to a private temporary file and linked into
 * place, which fails if another process got there first, so every process ends up with the same secret.
 */
function secretFromDataDir(dataDir: string): string {
  const file = join(dataDir, 'jwt-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dataDir, { recursive: true });
  const temporary = join(dataDir, `jwt-secret.${process.pid}.${randomBytes(4).toString('hex')}`);
  writeFileSync(temporary, randomBytes(32).toString('hex'), { mode: 0o600 });
  try {
    linkSync(temporary, file);
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
  } finally {
    unlinkSync(temporary);
  }
  return readFileSync(file, 'utf8').trim();
}

/** A whole number > 0 from the environment, or the default; anything else stops the start with a clear message. */
function positiveInteger(env: NodeJS.ProcessEnv, name: string, fallback: number): number {
  const raw = env[name];
  if (raw === undefined || raw === '') return fallback;
  const value = Number(raw);
  if (!Number.isInteger(value) || value <= 0) throw new Error(`${name} must be a whole number above 0 (got "${raw}")`);
  return value;
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const dataDir = env.LOADLINE_DATA_DIR ?? join(repoRoot, '.data');
  const port = Number(env.PORT ?? 5180);
  const smtpSinkPort = Number(env.SMTP_SINK_PORT ?? 2525);
  if (!env.DATABASE_URL) throw new Error('DATABASE_URL is not set: start Loadline with `npm start` or set it to a PostgreSQL URL');
  return {
    databaseUrl: env.DATABASE_URL,
    port,
    host: env.HOST ?? '127.0.0.1',
    jwtSecret: env.JWT_SECRET ?? secretFromDataDir(dataDir),
    sessionTtlSeconds: Number(env.SESSION_TTL_SECONDS ?? 8 * 3600),
    smtpUrl: env.SMTP_URL ?? `smtp://127.0.0.1:${smtpSinkPort}`,
    smtpSinkPort,
    mailFrom: env.MAIL_FROM ?? 'Loadline <loadline@localhost>',
    publicUrl: env.PUBLIC_URL ?? `http://127.0.0.1:${port}`,
    dataDir,
    uploadLimitBytes: Number(env.UPLOAD_LIMIT_MB ?? 200) * 1024 * 1024,
    trustProxy: env.TRUST_PROXY === 'true',
    corsOrigins: (env.CORS_ORIGINS ?? '').split(',').map((s) => s.trim()).filter(Boolean),
    invitationTtlHours: positiveInteger(env, 'INVITATION_TTL_HOURS', 72),
    passwordResetTtlMinutes: positiveInteger(env, 'PASSWORD_RESET_TTL_MINUTES', 60),
    rateLimits: {
      windowSeconds: positiveInteger(env, 'RATE_LIMIT_WINDOW_SECONDS', 15 * 60),
      signInFailuresPerIp: positiveInteger(env, 'SIGN_IN_MAX_FAILURES_PER_IP', 20),
      signInFailuresPerAccount: positiveInteger(env, 'SIGN_IN_MAX_FAILURES_PER_ACCOUNT', 5),
      passwordResetsPerIp: positiveInteger(env, 'PASSWORD_RESET_MAX_PER_IP', 10),
      passwordResetsPerAccount: positiveInteger(env, 'PASSWORD_RESET_MAX_PER_ACCOUNT', 3),
    },
  };
}

export const paths = {
  repoRoot,
  clientDist: join(repoRoot, 'dist', 'client'),
  migrations: join(repoRoot, 'migrations'),
};
