import type { Role } from '@shared/schemas/common';

/**
 * The left rail. Each item names the roles that see it; the server enforces access on every route regardless,
 * the rail only hides what a role cannot use. Contributors add lines to NAV_ITEMS (keep `section` one of SECTIONS).
 */
export const SECTIONS = ['Workspace', 'Data', 'Models', 'Portfolios', 'Oversight', 'Administration', 'Account'] as const;
export type NavSection = (typeof SECTIONS)[number];

export type NavItem = { to: string; label: string; section: NavSection; roles: readonly Role[] };

const ALL: readonly Role[] = ['admin', 'analyst', 'pm', 'compliance'];

export const NAV_ITEMS: NavItem[] = [
  { to: '/home', label: 'Home', section: 'Workspace', roles: ALL },
  { to: '/models', label: 'Models', section: 'Models', roles: ALL },
  { to: '/portfolios', label: 'Portfolios', section: 'Portfolios', roles: ALL },
  { to: '/audit', label: 'Audit log', section: 'Oversight', roles: ['admin', 'compliance'] },
  { to: '/users', label: 'Users', section: 'Administration', roles: ['admin'] },
  { to: '/outbox', label: 'Outbox', section: 'Administration', roles: ['admin'] },
  { to: '/tokens', label: 'API tokens', section: 'Account', roles: ALL },
  { to: '/account/password', label: 'Password', section: 'Account', roles: ALL },
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
