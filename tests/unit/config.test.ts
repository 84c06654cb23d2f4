import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../server/config';

const base = { DATABASE_URL: 'postgres://x@127.0.0.1:1/x', JWT_SECRET: 'unit-test-secret' };

describe('foundation settings from the environment', () => {
  it('defaults: 72 h invitations, 60 min resets, 15 min rate-limit window', () => {
    const config = loadConfig(base);
    expect(config.invitationTtlHours).toBe(72);
    expect(config.passwordResetTtlMinutes).toBe(60);
    expect(config.rateLimits).toEqual({ windowSeconds: 900, signInFailuresPerIp: 20, signInFailuresPerAccount: 5, passwordResetsPerIp: 10, passwordResetsPerAccount: 3 });
    expect(config.smtpUrl).toBe('smtp://127.0.0.1:2525');
  });

  it('reads overrides and refuses nonsense with the variable named', () => {
    const config = loadConfig({ ...base, SIGN_IN_MAX_FAILURES_PER_ACCOUNT: '8', SMTP_SINK_PORT: '2600' });
    expect(config.rateLimits.signInFailuresPerAccount).toBe(8);
    expect(config.smtpUrl).toBe('smtp://127.0.0.1:2600');
    expect(() => loadConfig({ ...base, INVITATION_TTL_HOURS: 'soon' })).toThrow(/INVITATION_TTL_HOURS must be a whole number above 0/);
    expect(() => loadConfig({ ...base, PASSWORD_RESET_MAX_PER_IP: '0' })).toThrow(/PASSWORD_RESET_MAX_PER_IP/);
  });
});
