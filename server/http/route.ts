import express, { type NextFunction, type Request, type RequestHandler, type Response } from 'express';
import type { z, ZodType } from 'zod';
import type { Role } from '../../shared/schemas/common';
import { requireAccess } from '../auth/access';
import type { AuthenticatedUser } from '../auth/access';
import { zodIssues, HttpError } from './errors';

/** Who may call a route: anyone, any signed-in user, or the listed roles. */
export type Access = 'public' | 'signed-in' | readonly Role[];
type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface RouteContext<B, Q, P> {
  body: B;
  query: Q;
  params: P;
  /** Set on every route but 'public' ones (where it may be undefined). */
  user: AuthenticatedUser;
  req: Request;
  res: Response;
}

export interface RouteSpec<B extends ZodType, Q extends ZodType, P extends ZodType> {
  method: Method;
  /** Express path relative to the router's base, e.g. '/users/:id'. */
  path: string;
  access: Access;
  summary: string;
  description?: string;
  body?: B;
  /** Content type of the request body as documented (default application/json). */
  bodyContentType?: 'application/json' | 'multipart/form-data';
  query?: Q;
  params?: P;
  /** JSON schema of a successful answer, for the OpenAPI document. */
  response?: ZodType;
  /** A non-JSON successful answer (e.g. 'text/csv'). */
  responseContentType?: string;
  status?: number;
  /** Extra middleware run after the access check and before validation (uploads, rate limits). */
  before?: RequestHandler[];
  /** Returns the JSON payload, or undefined when it wrote the response itself. */
  handler: (ctx: RouteContext<z.infer<B>, z.infer<Q>, z.infer<P>>) => unknown | Promise<unknown>;
}

export interface RegisteredRoute {
  method: Method;
  /** Full Express path, e.g. '/api/users/:id'. */
  path: string;
  access: Access;
  tag: string;
  spec: RouteSpec<ZodType, ZodType, ZodType>;
}

/** Every API route, in registration order: the OpenAPI document and the permission test read it. */
const registry: RegisteredRoute[] = [];
export function registeredRoutes(): readonly RegisteredRoute[] {
  return registry;
}

function validate(schema: ZodType | undefined, value: unknown, where: string) {
  if (!schema) return value;
  const parsed = schema.safeParse(value ?? {});
  if (!parsed.success) {
    throw new HttpError(422, `The request ${where} is not valid`, zodIssues(parsed.error).map((i) => ({ ...i, path: i.path === '(body)' ? where : i.path })));
  }
  return parsed.data;
}

/**
 * A feature's API router. Each route declares its access, schemas and handler once;
 * the same declaration drives enforcement, validation, the OpenAPI document and the permission test.
 */
export function apiRouter(base: string, tag: string) {
  const own: RegisteredRoute[] = [];
  return {
    base,
    tag,
    route<B extends ZodType, Q extends ZodType, P extends ZodType>(spec: RouteSpec<B, Q, P>) {
      const fullPath = `/api${base}${spec.path === '/' ? '' : spec.path}`;
      if (own.some((r) => r.method === spec.method && r.path === fullPath)) throw new Error(`${spec.method} ${fullPath} declared twice`);
      const route = { method: spec.method, path: fullPath, access: spec.access, tag, spec: spec as unknown as RouteSpec<ZodType, ZodType, ZodType> };
      own.push(route);
      // A second app in the same process (tests) declares the same routes again: keep one entry each.
      const previous = registry.findIndex((r) => r.method === route.method && r.path === route.path);
      if (previous >= 0) registry.splice(previous, 1, route);
      else registry.push(route);
    },
    /** Attaches the declared routes (call once per app). */
    mount(): express.Router {
      const router = express.Router();
      for (const route of own) {
        const local = route.path.slice(`/api${base}`.length) || '/';
        const { spec } = route;
        const handler = async (req: Request, res: Response, next: NextFunction) => {
          try {
            const ctx = {
              body: validate(spec.body, req.body, 'body'),
              query: validate(spec.query, req.query, 'query'),
              params: validate(spec.params, req.params, 'path'),
              user: req.user as AuthenticatedUser,
              req,
              res,
            };
            const result = await spec.handler(ctx as never);
            if (result !== undefined && !res.headersSent) res.status(spec.status ?? 200).json(result);
            else if (!res.headersSent) res.status(spec.status ?? 204).end();
          } catch (error) {
            next(error);
          }
        };
        router[route.method](local, requireAccess(route.access), ...(spec.before ?? []), handler);
      }
      return router;
    },
  };
}
