import express from 'express';
import helmet from 'helmet';
import cookieParser from 'cookie-parser';
import passport from 'passport';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { Config } from './config';
import { paths } from './config';
import { configurePassport, authenticate } from './auth/passport';
import { apiRouters } from './routes';
import { errorHandler, notFound } from './http/errors';

/** Builds the Express app without listening, so tests can mount it with supertest. */
export function createApp(config: Config, options: { serveClient?: boolean } = {}) {
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', config.trustProxy);
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"], // AG Grid and visx set inline styles
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
        },
      },
    }),
  );
  // CORS stays closed unless CORS_ORIGINS lists origins; same-origin browsers and scripts need none.
  if (config.corsOrigins.length) {
    app.use('/api', (req, res, next) => {
      const origin = req.headers.origin;
      if (origin && config.corsOrigins.includes(origin)) {
        res.setHeader('Access-Control-Allow-Origin', origin);
        res.setHeader('Access-Control-Allow-Credentials', 'true');
        res.setHeader('Access-Control-Allow-Headers', 'Authorization, Content-Type');
        res.setHeader('Access-Control-Allow-Methods', 'GET, POST, PUT, PATCH, DELETE');
        if (req.method === 'OPTIONS') return void res.status(204).end();
      }
      next();
    });
  }
  app.use(cookieParser());
  app.use('/api', express.json({ limit: '1mb' }));
  configurePassport(config.jwtSecret);
  app.use(passport.initialize());
  app.use('/api', authenticate);
  for (const api of apiRouters(config)) app.use(`/api${api.base}`, api.mount());
  app.use('/api', (_req, _res, next) => next(notFound('No such API route')));

  if (options.serveClient !== false && existsSync(paths.clientDist)) {
    app.use(express.static(paths.clientDist, { index: false, maxAge: '1h' }));
    // Single-page app: every other GET gets index.html and the client router takes over.
    app.get('/{*splat}', (_req, res) => res.sendFile(join(paths.clientDist, 'index.html')));
  }
  app.use(errorHandler);
  return app;
}
