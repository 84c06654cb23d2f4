import { Link } from 'react-router-dom';
import { ROLE_LABELS, type Role } from '@shared/schemas/common';
import { useCurrentUser } from '../../app/currentUser';
import { navigationFor } from '../../app/navigation';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Caution } from '../../components/Caution';

/** What each role comes to Loadline for, in a sentence or two. */
const ROLE_INTRO: Record<Role, string> = {
  admin: 'You manage who can sign in and what they may do: invite colleagues, set their roles, deactivate accounts, and follow mail and the audit trail.',
  analyst: 'You bring return series into Loadline, fit factor models on them, compare them with the sample covariance and shrinkage estimates, and approve models for the firm’s use.',
  pm: 'You keep your portfolios’ holdings up to date and see what the approved models say about their risk: volatility, the factor and specific split, contributors, tracking error and VaR.',
  compliance: 'You follow the audit log of who changed what, when and from where, and read the models, the portfolios and what the approved models say about their risk. Data, models and portfolios are read-only for you.',
};

export default function HomePage() {
  const user = useCurrentUser();
  const groups = navigationFor(user.role).filter((group) => group.section !== 'Workspace');
  return (
    <div className="max-w-5xl">
      <PageHeader title={`Welcome, ${user.name.split(' ')[0]}`} description={ROLE_INTRO[user.role]} />
      <div className="grid gap-4 md:grid-cols-2">
        {groups.map((group) => (
          <Card key={group.section} title={group.section}>
            <ul className="flex flex-col gap-2 text-sm">
              {group.items.map((item) => (
                <li key={item.to} className="flex flex-col">
                  <Link to={item.to} className="font-medium text-accent hover:underline">
                    {item.label}
                  </Link>
                  {item.description ? <span className="text-xs text-ink-soft">{item.description}</span> : null}
                </li>
              ))}
            </ul>
          </Card>
        ))}
      </div>
      <p className="mt-5 text-xs text-ink-faint">Signed in as {ROLE_LABELS[user.role].toLowerCase()}. The rail on the left holds everything your role can open.</p>
      {user.role === 'pm' || user.role === 'analyst' ? (
        <div className="mt-4">
          <Caution />
        </div>
      ) : null}
    </div>
  );
}
