import { useMemo, useState } from 'react';
import type { ColDef } from 'ag-grid-community';
import { ROLE_LABELS } from '@shared/schemas/common';
import type { UserSummary } from '@shared/schemas/users';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { useCurrentUser } from '../../app/currentUser';
import { formatDate, formatDateTime } from '../../lib/format';
import { useUsers } from './api';
import { InviteUserForm } from './InviteUserForm';
import { UserPanel } from './UserPanel';
import { UserStatusBadge, USER_STATUS_LABEL } from './UserStatusBadge';

export default function UsersPage() {
  const me = useCurrentUser();
  const users = useUsers();
  const [inviting, setInviting] = useState(false);
  const [invited, setInvited] = useState<UserSummary | null>(null);
  const [selectedId, setSelectedId] = useState<number | null>(null);
  const selected = users.data?.find((user) => user.id === selectedId) ?? null;

  const columns = useMemo<ColDef<UserSummary>[]>(
    () => [
      { field: 'name', headerName: 'Name', minWidth: 140 },
      { field: 'email', headerName: 'E-mail', minWidth: 200, flex: 1.4 },
      { field: 'role', headerName: 'Role', valueFormatter: (p) => (p.value ? ROLE_LABELS[p.value as UserSummary['role']] : ''), getQuickFilterText: (p) => ROLE_LABELS[p.value as UserSummary['role']], minWidth: 130, maxWidth: 180 },
      {
        field: 'status',
        headerName: 'Status',
        cellRenderer: (p: { value: UserSummary['status'] }) => <UserStatusBadge status={p.value} />,
        filterValueGetter: (p) => (p.data ? USER_STATUS_LABEL(p.data.status) : ''),
        getQuickFilterText: (p) => USER_STATUS_LABEL(p.value),
        minWidth: 118,
        maxWidth: 150,
      },
      { field: 'lastSignInAt', headerName: 'Last sign-in', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value) },
      { field: 'createdAt', headerName: 'Created', type: 'date', valueFormatter: (p) => formatDate(p.value) },
    ],
    [],
  );

  return (
    <div>
      <PageHeader
        title="Users"
        description="Everyone who can sign in to Loadline, with their role. Invite colleagues by e-mail, change roles, and deactivate accounts; every change lands in the audit log."
        actions={
          !inviting ? (
            <Button variant="primary" onClick={() => { setInviting(true); setInvited(null); }}>
              Invite a user
            </Button>
          ) : null
        }
      />
      {inviting ? (
        <Card title="Invite a user" className="mb-4">
          <InviteUserForm
            onInvited={(user) => {
              setInvited(user);
              setInviting(false);
              setSelectedId(user.id);
            }}
            onCancel={() => setInviting(false)}
          />
        </Card>
      ) : null}
      {invited ? (
        <div className="mb-4">
          <Alert tone="ok" title={`Invitation sent to ${invited.email}`}>
            {invited.name} can set a password from the link in the mail. Admins can read the message on the Outbox page.
          </Alert>
        </div>
      ) : null}
      {users.isError ? <ErrorAlert error={users.error} title="The users could not be loaded" /> : null}
      <div className="flex flex-col gap-4 lg:flex-row lg:items-start">
        <div className="min-w-0 flex-1">
          <DataGrid<UserSummary>
            ariaLabel="Users"
            rows={users.data}
            columns={columns}
            loading={users.isPending}
            getRowId={(p) => String(p.data.id)}
            quickSearch
            csvFileName="loadline-users.csv"
            onRowClicked={(user) => setSelectedId(user.id)}
            selectedRowId={selectedId === null ? null : String(selectedId)}
            rowClass={(user) => (!user.active ? 'll-row-muted' : undefined)}
            height={560}
            toolbar={<span className="text-xs text-ink-faint">Select a row to change the role or deactivate.</span>}
          />
        </div>
        {selected ? <UserPanel user={selected} isSelf={selected.id === me.id} onClose={() => setSelectedId(null)} /> : null}
      </div>
    </div>
  );
}
