import { Link, useLocation } from 'react-router-dom';

export function NotFoundPage() {
  const location = useLocation();
  return (
    <div className="mx-auto max-w-xl py-16 text-center">
      <p className="font-mono text-sm text-ink-faint">404</p>
      <h1 className="mt-1 text-xl font-semibold">No page at this address</h1>
      <p className="mt-2 text-sm text-ink-soft">
        <span className="font-mono">{location.pathname}</span> is not part of Loadline.
      </p>
      <Link to="/" className="mt-5 inline-block text-sm font-medium text-accent underline">
        Go to your home page
      </Link>
    </div>
  );
}
