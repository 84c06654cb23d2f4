import type { Config } from '../config';
import { authRoutes } from './auth';
import { openApiRoutes } from './openapi';

/** Every feature's API router, in one list: add a line here when a feature adds routes. */
export function apiRouters(config: Config) {
  return [authRoutes(config), openApiRoutes()];
}
