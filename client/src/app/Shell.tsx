import { Navigate, NavLink, Outlet, useLocation, useNavigate, useNavigation } from 'react-router-dom';
import { ROLE_LABELS } from '@shared/schemas/common';
import type { PublicUser } from '@shared/schemas/auth';
import { useSession, useSignOut } from '../features/auth/api';
import { Alert } from '../components/Alert';
import { Button } from '../components/Button';
import { errorMessage } from '../lib/api';
import { CurrentUserContext } from './currentUser';
import { NAV_ITEMS, navigationFor } from './navigation';
import { Wordmark } from './Wordmark';

/** The signed-in frame: left rail with the role's sections, top bar with the user and sign-out, page in the middle. */
export function Shell() {
  const session = useSession();
  const location = useLocation();

  if (session.isPending) return <FullPageMessage>Loading…</FullPageMessage>;
  if (session.isError)
    return (
      <FullPageMessage>
        <Alert tone="breach" title="Loadline cannot reach its server">
          {errorMessage(session.error)}{' '}
          <button className="underline" onClick={() => session.refetch()}>
            Try again
          </button>
        </Alert>
      </FullPageMessage>
    );
  if (!session.data) {
    const next = location.pathname === '/' ? '' : `?next=${encodeURIComponent(location.pathname + location.search)}`;
    return <Navigate to={`/sign-in${next}`} replace />;
  }
  const user = session.data;

  return (
    <CurrentUserContext.Provider value={user}>
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:top-2 focus:left-2 focus:z-50 focus:rounded focus:bg-surface focus:px-3 focus:py-1.5 focus:shadow">
        Skip to the page
      </a>
      <NavigationProgress />
      <div className="flex min-h-screen">
        <Rail user={user} />
        <div className="flex min-w-0 flex-1 flex-col">
          <TopBar user={user} />
          <main id="main" className="min-w-0 flex-1 px-6 py-5">
            <Outlet />
          </main>
        </div>
      </div>
    </CurrentUserContext.Provider>
  );
}

function Rail({ user }: { user: PublicUser }) {
  const groups = navigationFor(user.role);
  return (
    <nav aria-label="Main" className="sticky top-0 flex h-screen w-56 shrink-0 flex-col border-r border-line bg-rail">
      <div className="flex h-12 items-center border-b border-line px-4">
        <Wordmark />
      </div>
      <div className="flex-1 overflow-y-auto px-2 py-3">
        {groups.map((group) => (
          <div key={group.section} className="mb-4">
            <p className="px-2 pb-1 text-[11px] font-semibold tracking-wider text-ink-faint uppercase">{group.section}</p>
            <ul className="flex flex-col gap-px">
              {group.items.map((item) => (
                <li key={item.to}>
                  <NavLink
                    to={item.to}
                    className={({ isActive }) =>
                      `block rounded-md border-l-[3px] px-2 py-1.5 text-sm ${
                        isActive ? 'border-accent bg-surface font-medium text-accent-strong shadow-xs' : 'border-transparent text-ink-soft hover:bg-surface/60 hover:text-ink'
                      }`
                    }
                  >
                    {item.label}
                  </NavLink>
                </li>
              ))}
            </ul>
          </div>
        ))}
      </div>
      <p className="border-t border-line px-4 py-2 text-[11px] text-ink-faint">Figures are model estimates.</p>
    </nav>
  );
}

function TopBar({ user }: { user: PublicUser }) {
  const signOut = useSignOut();
  const navigate = useNavigate();
  return (
    <header className="sticky top-0 z-10 flex h-12 items-center gap-4 border-b border-line bg-page/95 px-6 backdrop-blur">
      <Breadcrumb />
      <div className="flex-1" />
      <div className="flex items-center gap-2.5 text-sm" aria-label="Signed in as">
        <span className="inline-flex h-7 w-7 items-center justify-center rounded-full bg-accent-soft text-xs font-semibold text-accent-strong" aria-hidden>
          {initials(user.name)}
        </span>
        <span className="flex flex-col leading-tight">
          <span className="font-medium text-ink" data-testid="user-name">
            {user.name}
          </span>
          <span className="text-xs text-ink-soft" data-testid="user-role">
            {ROLE_LABELS[user.role]}
          </span>
        </span>
      </div>
      <Button size="sm" onClick={() => signOut.mutate(undefined, { onSettled: () => navigate('/sign-in', { replace: true }) })} disabled={signOut.isPending}>
        Sign out
      </Button>
    </header>
  );
}

/** A thin bar across the top while the next page's code loads. */
function NavigationProgress() {
  const navigation = useNavigation();
  if (navigation.state === 'idle') return null;
  return <div role="progressbar" aria-label="Loading the page" className="fixed inset-x-0 top-0 z-50 h-0.5 animate-pulse bg-accent" />;
}

/** Where you are: the rail section and page of the current address. */
function Breadcrumb() {
  const location = useLocation();
  const item = NAV_ITEMS.filter((entry) => location.pathname === entry.to || location.pathname.startsWith(`${entry.to}/`)).sort((a, b) => b.to.length - a.to.length)[0];
  if (!item) return null;
  return (
    <p className="text-sm text-ink-faint">
      {item.section !== item.label ? (
        <>
          {item.section} <span aria-hidden>/</span>{' '}
        </>
      ) : null}
      <span className="text-ink-soft">{item.label}</span>
    </p>
  );
}

function initials(name: string): string {
  return name
    .split(/\s+/)
    .filter(Boolean)
    .slice(0, 2)
    .map((part) => part[0]!.toUpperCase())
    .join('');
}

export function FullPageMessage({ children }: { children: React.ReactNode }) {
  return <div className="flex min-h-screen items-center justify-center p-6 text-sm text-ink-soft">{children}</div>;
}
