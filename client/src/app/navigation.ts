import type { Role } from '@shared/schemas/common';

/**
 * The left rail. Each item names the roles that see it; the server enforces access on every route regardless,
 * the rail only hides what a role cannot use. Contributors add lines to NAV_ITEMS (keep `section` one of SECTIONS).
 */
export const SECTIONS = ['Workspace', 'Data', 'Models', 'Portfolios', 'Oversight', 'Administration', 'Account'] as const;
export type NavSection = (typeof SECTIONS)[number];

/** `description`: one line for the home page saying what the page is for (optional). */
export type NavItem = { to: string; label: string; section: NavSection; roles: readonly Role[]; description?: string };

const ALL: readonly Role[] = ['admin', 'analyst', 'pm', 'compliance'];

export const NAV_ITEMS: NavItem[] = [
  { to: '/home', label: 'Home', section: 'Workspace', roles: ALL },
  { to: '/imports', label: 'Import returns', section: 'Data', roles: ['analyst', 'admin'], description: 'Upload returns or prices as CSV, preview every problem, commit in one step.' },
  { to: '/data-quality', label: 'Data quality', section: 'Data', roles: ALL, description: 'History, gaps, volatility and outliers per asset; coverage over time; import history.' },
  { to: '/models', label: 'Models', section: 'Models', roles: ALL, description: 'Factor model fits and their versions: loadings, specific risk, diagnostics, approval and comparison.' },
  { to: '/asset-lists', label: 'Asset lists', section: 'Models', roles: ALL, description: 'Saved lists of assets a fit can use as its universe: browse them, save new ones, delete your own.' },
  { to: '/portfolios', label: 'Portfolios', section: 'Portfolios', roles: ALL, description: 'Holdings of the funds and benchmarks, and their risk under the approved models, with what-if weights.' },
  { to: '/audit', label: 'Audit log', section: 'Oversight', roles: ['admin', 'compliance'], description: 'Who did what, when and from where; filter and export as CSV.' },
  { to: '/users', label: 'Users', section: 'Administration', roles: ['admin'], description: 'Invite colleagues, set roles, deactivate accounts.' },
  { to: '/outbox', label: 'Outbox', section: 'Administration', roles: ['admin'], description: 'Invitations and reset mails as the mail service received them.' },
  { to: '/tokens', label: 'API tokens', section: 'Account', roles: ALL, description: 'Named tokens for scripts that call the Loadline API as you.' },
  { to: '/account/password', label: 'Password', section: 'Account', roles: ALL, description: 'Change the password you sign in with.' },
];

/** The rail for one role: sections in SECTIONS order, empty sections left out. */
export function navigationFor(role: Role): { section: NavSection; items: NavItem[] }[] {
  return SECTIONS.map((section) => ({ section, items: NAV_ITEMS.filter((item) => item.section === section && item.roles.includes(role)) })).filter(
    (group) => group.items.length > 0,
  );
}

/** Where each role lands after signing in. */
export const ROLE_HOME: Record<Role, string> = {
  admin: '/users',
  analyst: '/home',
  pm: '/home',
  compliance: '/audit',
};
