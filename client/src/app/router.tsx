import { createBrowserRouter } from 'react-router-dom';
import { Shell } from './Shell';
import { RouteError } from './RouteError';
import { NotFoundPage } from './NotFoundPage';
import { RoleHomeRedirect } from './RoleHomeRedirect';
import { publicRoutes, shellRoutes } from './routes';
import { FullPageMessage } from './Shell';

/**
 * The data router. Public pages (sign-in, password links) sit outside the shell; everything else renders inside it,
 * behind the session check, with an error boundary that keeps the rail and top bar on screen.
 */
export const router = createBrowserRouter([
  {
    errorElement: <RouteError />,
    // Shown while the first page's code loads (every page is its own lazily loaded chunk).
    hydrateFallbackElement: <FullPageMessage>Loading…</FullPageMessage>,
    children: [
      ...publicRoutes,
      {
        element: <Shell />,
        children: [
          {
            errorElement: <RouteError />,
            children: [{ index: true, element: <RoleHomeRedirect /> }, ...shellRoutes, { path: '*', element: <NotFoundPage /> }],
          },
        ],
      },
    ],
  },
]);
