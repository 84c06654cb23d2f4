import type { ComponentType } from 'react';
import type { RouteObject } from 'react-router-dom';

/** Loads a page module on demand (its default export), so each feature ships in its own chunk. */
const page = (load: () => Promise<{ default: ComponentType }>) => async () => ({ Component: (await load()).default });

/** Pages anyone can open, outside the signed-in shell. */
export const publicRoutes: RouteObject[] = [
  { path: '/sign-in', lazy: page(() => import('../features/auth/SignInPage')) },
  { path: '/forgot-password', lazy: page(() => import('../features/auth/ForgotPasswordPage')) },
  { path: '/set-password', lazy: page(() => import('../features/auth/SetPasswordPage')) },
];

/**
 * Pages inside the shell (signed-in only). Contributors add one line per page here and one nav entry in
 * navigation.ts; the server enforces roles, the nav only hides what a role cannot use.
 */
export const shellRoutes: RouteObject[] = [
  { path: '/home', lazy: page(() => import('../features/home/HomePage')) },
  { path: '/imports', lazy: page(() => import('../features/imports/ImportsPage')) },
  { path: '/data-quality', lazy: page(() => import('../features/data-quality/DataQualityPage')) },
  { path: '/users', lazy: page(() => import('../features/users/UsersPage')) },
  { path: '/tokens', lazy: page(() => import('../features/tokens/TokensPage')) },
  { path: '/account/password', lazy: page(() => import('../features/account/PasswordPage')) },
  { path: '/audit', lazy: page(() => import('../features/audit/AuditPage')) },
  { path: '/outbox', lazy: page(() => import('../features/outbox/OutboxPage')) },
  { path: '/models', lazy: page(() => import('../features/models/ModelRunsPage')) },
  { path: '/models/compare', lazy: page(() => import('../features/models/ComparePage')) },
  { path: '/models/:id', lazy: page(() => import('../features/models/ModelPage')) },
  { path: '/asset-lists', lazy: page(() => import('../features/asset-lists/AssetListsPage')) },
  { path: '/portfolios', lazy: page(() => import('../features/portfolios/PortfoliosPage')) },
  { path: '/portfolios/:id', lazy: page(() => import('../features/portfolios/PortfolioEditorPage')) },
  { path: '/portfolios/:id/risk', lazy: page(() => import('../features/portfolios/PortfolioRiskPage')) },
];
