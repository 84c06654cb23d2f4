import type { Config } from '../config';
import { authRoutes } from './auth';
import { openApiRoutes } from './openapi';
import { importRoutes } from './imports';
import { assetRoutes } from './assets';
import { dataQualityRoutes } from './dataQuality';
import { usersRoutes } from './users';
import { tokensRoutes } from './tokens';
import { auditRoutes } from './audit';
import { outboxRoutes } from './outbox';
import { portfoliosRoutes } from './portfolios';
import { modelRunRoutes } from './modelRuns';
import { assetListsRoutes } from './assetLists';

/** Every feature's API router, in one list: add a line here when a feature adds routes. */
export function apiRouters(config: Config) {
  return [
    authRoutes(config),
    usersRoutes(config),
    tokensRoutes(),
    auditRoutes(),
    outboxRoutes(),
    portfoliosRoutes(),
    modelRunRoutes(config),
    assetListsRoutes(),
    importRoutes(config),
    assetRoutes(config),
    dataQualityRoutes(),
    openApiRoutes(),
  ];
}
