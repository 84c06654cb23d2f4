import type { Role } from '../../shared/schemas/common';

/**
 * The invented demo firm, Quillfield Asset Management: one sign-in per role.
 * These exist only in the seeded demo database; the README lists them.
 */
export const DEMO_FIRM = 'Quillfield Asset Management';

export const DEMO_USERS: { email: string; name: string; role: Role; password: string }[] = [
  { email: 'admin@quillfield.example', name: 'Avery Lindqvist', role: 'admin', password: 'demo-admin-pass' },
  { email: 'analyst@quillfield.example', name: 'Noor Castellanos', role: 'analyst', password: 'demo-analyst-pass' },
  { email: 'analyst2@quillfield.example', name: 'Tomas Okafor', role: 'analyst', password: 'demo-analyst-pass' },
  { email: 'pm@quillfield.example', name: 'Mira Halvorsen', role: 'pm', password: 'demo-pm-pass' },
  { email: 'pm2@quillfield.example', name: 'Jules Ferreira', role: 'pm', password: 'demo-pm-pass' },
  { email: 'compliance@quillfield.example', name: 'Idris Wenner', role: 'compliance', password: 'demo-compliance-pass' },
];
