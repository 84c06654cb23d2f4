import { isRouteErrorResponse, Link, useRouteError } from 'react-router-dom';
import { Alert } from '../components/Alert';
import { NotFoundPage } from './NotFoundPage';

/** The router's error boundary: a page that crashed shows what happened instead of a blank screen. */
export function RouteError() {
  const error = useRouteError();
  if (isRouteErrorResponse(error) && error.status === 404) return <NotFoundPage />;
  const message = isRouteErrorResponse(error) ? `${error.status} ${error.statusText}` : error instanceof Error ? error.message : 'Unknown error';
  // A new deployment renamed the chunks under an open tab: reloading fetches the current ones.
  const staleChunk = /dynamically imported module|Importing a module script failed/i.test(message);
  return (
    <div className="mx-auto max-w-2xl p-6">
      <h1 className="mb-3 text-lg font-semibold">This page could not be shown</h1>
      <Alert tone="breach" title={staleChunk ? 'Loadline was updated while this tab was open' : 'Something went wrong'}>
        {staleChunk ? 'Reload the page to get the current version.' : message}
      </Alert>
      <p className="mt-4 text-sm">
        <button className="text-accent underline" onClick={() => window.location.reload()}>
          Reload
        </button>{' '}
        or go{' '}
        <Link className="text-accent underline" to="/">
          to your home page
        </Link>
        .
      </p>
    </div>
  );
}
