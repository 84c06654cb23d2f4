import { describe, expect, it } from 'vitest';
import { apiUrl, ApiError } from '../../client/src/lib/api';
import { NAV_ITEMS, ROLE_HOME, navigationFor, SECTIONS } from '../../client/src/app/navigation';
import { formatNumber } from '../../client/src/components/Figure';
import { ROLES } from '../../shared/schemas/common';

describe('apiUrl', () => {
  it('prefixes /api, leaves out empty values and repeats array keys', () => {
    expect(apiUrl('/audit')).toBe('/api/audit');
    expect(apiUrl('users')).toBe('/api/users');
    expect(apiUrl('/audit', { actor: 'a b&c', action: '', objectId: undefined, page: 2, ids: [1, 2] })).toBe('/api/audit?actor=a+b%26c&page=2&ids=1&ids=2');
  });
});

describe('ApiError', () => {
  it('tells client errors from the rest', () => {
    expect(new ApiError(422, 'bad', [{ path: 'email', message: 'is required' }]).isClientError).toBe(true);
    expect(new ApiError(502, 'mail down').isClientError).toBe(false);
    expect(new ApiError(0, 'offline').isClientError).toBe(false);
  });
});

describe('navigation', () => {
  it('every item sits in a known section and names only known roles', () => {
    for (const item of NAV_ITEMS) {
      expect(SECTIONS).toContain(item.section);
      for (const role of item.roles) expect(ROLES).toContain(role);
    }
  });

  it("every role's home page is in that role's navigation", () => {
    for (const role of ROLES) {
      const links = navigationFor(role).flatMap((group) => group.items.map((item) => item.to));
      expect(links).toContain(ROLE_HOME[role]);
    }
  });

  it('hides administration from everyone but admins and keeps sections in order', () => {
    expect(navigationFor('analyst').map((group) => group.section)).not.toContain('Administration');
    const adminSections = navigationFor('admin').map((group) => group.section);
    expect(adminSections).toEqual([...adminSections].sort((a, b) => SECTIONS.indexOf(a) - SECTIONS.indexOf(b)));
  });
});

describe('formatNumber', () => {
  it('groups thousands, fixes the digits and uses a true minus sign', () => {
    expect(formatNumber(12345.678, 2)).toBe('12,345.68');
    expect(formatNumber(-0.5, 1)).toBe('−0.5');
    expect(formatNumber(0.25, 2, true)).toBe('+0.25');
  });
});
