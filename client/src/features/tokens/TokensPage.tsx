import { useMemo, useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { ColDef } from 'ag-grid-community';
import { CreateApiTokenBodySchema, type ApiTokenView, type CreatedApiToken } from '@shared/schemas/tokens';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { Alert, ErrorAlert } from '../../components/Alert';
import { StatusBadge } from '../../components/StatusBadge';
import { DataGrid } from '../../components/DataGrid';
import { formatDateTime } from '../../lib/format';
import { useCreateToken, useMyTokens, useRevokeToken } from './api';

// The form holds the expiry as a select value ('' = never); the shared schema checks the rest.
const TokenFormSchema = z.object({ name: CreateApiTokenBodySchema.shape.name, expiry: z.enum(['', '30', '90', '365']) });
type TokenForm = z.infer<typeof TokenFormSchema>;

const STATUS_TONE = { active: 'ok', expired: 'neutral', revoked: 'neutral' } as const;
const STATUS_LABEL = { active: 'Active', expired: 'Expired', revoked: 'Revoked' } as const;

export default function TokensPage() {
  const tokens = useMyTokens();
  const create = useCreateToken();
  const revoke = useRevokeToken();
  const [created, setCreated] = useState<CreatedApiToken | null>(null);
  const form = useForm<TokenForm>({ resolver: zodResolver(TokenFormSchema), defaultValues: { name: '', expiry: '90' } });

  const submit = form.handleSubmit((values) =>
    create.mutate(
      { name: values.name, expiresInDays: values.expiry ? Number(values.expiry) : null },
      {
        onSuccess: (answer) => {
          setCreated(answer);
          form.reset({ name: '', expiry: values.expiry });
        },
      },
    ),
  );

  const columns = useMemo<ColDef<ApiTokenView>[]>(
    () => [
      { field: 'name', headerName: 'Name', minWidth: 160, flex: 1.4 },
      { field: 'prefix', headerName: 'Starts with', cellClass: 'll-figure', maxWidth: 170 },
      {
        field: 'status',
        headerName: 'Status',
        cellRenderer: (p: { value: ApiTokenView['status'] }) => <StatusBadge tone={STATUS_TONE[p.value]}>{STATUS_LABEL[p.value]}</StatusBadge>,
        maxWidth: 120,
      },
      { field: 'createdAt', headerName: 'Created', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value) },
      { field: 'lastUsedAt', headerName: 'Last used', type: 'timestamp', valueFormatter: (p) => (p.value ? formatDateTime(p.value) : 'never') },
      {
        field: 'expiresAt',
        headerName: 'Expires',
        type: 'timestamp',
        valueFormatter: (p) => (p.value ? formatDateTime(p.value) : 'no expiry'),
      },
      {
        colId: 'revoke',
        headerName: '',
        sortable: false,
        filter: false,
        maxWidth: 110,
        cellRenderer: (p: { data?: ApiTokenView }) =>
          p.data?.status === 'active' ? (
            <Button
              size="sm"
              variant="danger"
              aria-label={`Revoke ${p.data.name}`}
              onClick={() => {
                const token = p.data!;
                if (window.confirm(`Revoke “${token.name}”? Scripts using it stop working at once.`)) revoke.mutate(token.id);
              }}
            >
              Revoke
            </Button>
          ) : null,
      },
    ],
    [revoke],
  );

  return (
    <div className="max-w-6xl">
      <PageHeader
        title="API tokens"
        description="Named tokens let your scripts call the Loadline API with your role, without your password. Each secret is shown once; Loadline keeps only its hash. Revoke a token as soon as a script no longer needs it."
      />
      <div className="mb-4 grid gap-4 lg:grid-cols-[minmax(0,26rem)_1fr]">
        <Card title="Create a token">
          <form onSubmit={submit} noValidate aria-label="Create a token" className="flex flex-col gap-3">
            {create.isError ? <ErrorAlert error={create.error} /> : null}
            <Field label="Token name" hint="Say what uses it, e.g. “nightly risk export”." error={form.formState.errors.name?.message}>
              <input type="text" className="field-input" autoComplete="off" {...form.register('name')} />
            </Field>
            <Field label="Expires">
              <select className="field-input" {...form.register('expiry')}>
                <option value="30">in 30 days</option>
                <option value="90">in 90 days</option>
                <option value="365">in a year</option>
                <option value="">never</option>
              </select>
            </Field>
            <div>
              <Button type="submit" variant="primary" disabled={create.isPending}>
                Create token
              </Button>
            </div>
          </form>
        </Card>
        {created ? <NewSecret created={created} onDone={() => setCreated(null)} /> : <UsageNote />}
      </div>
      {tokens.isError ? <ErrorAlert error={tokens.error} title="Your tokens could not be loaded" /> : null}
      {revoke.isError ? <ErrorAlert error={revoke.error} /> : null}
      <DataGrid<ApiTokenView>
        ariaLabel="Your API tokens"
        rows={tokens.data}
        columns={columns}
        loading={tokens.isPending}
        getRowId={(p) => String(p.data.id)}
        rowClass={(token) => (token.status !== 'active' ? 'll-row-muted' : undefined)}
        emptyMessage="You have no API tokens yet"
        height={360}
      />
    </div>
  );
}

function NewSecret({ created, onDone }: { created: CreatedApiToken; onDone: () => void }) {
  const [copied, setCopied] = useState(false);
  const copy = async () => {
    await navigator.clipboard.writeText(created.secret);
    setCopied(true);
  };
  return (
    <Card title={`New token: ${created.token.name}`} className="border-accent/50">
      <div className="flex flex-col gap-3">
        <Alert tone="warn" title="Copy the secret now">
          It is shown only this once. If you lose it, revoke the token and create another.
        </Alert>
        <div className="flex items-center gap-2">
          <code data-testid="token-secret" className="min-w-0 flex-1 rounded-md border border-line bg-sunken px-2.5 py-1.5 font-mono text-xs break-all select-all">
            {created.secret}
          </code>
          <Button size="sm" onClick={copy}>
            {copied ? 'Copied' : 'Copy'}
          </Button>
        </div>
        <p className="text-xs text-ink-soft">
          Send it as a header: <code className="font-mono">Authorization: Bearer {created.token.prefix}…</code>
        </p>
        <div>
          <Button size="sm" variant="quiet" onClick={onDone}>
            I have stored it
          </Button>
        </div>
      </div>
    </Card>
  );
}

function UsageNote() {
  const origin = typeof window === 'undefined' ? '' : window.location.origin;
  return (
    <Card title="Using a token">
      <p className="mb-2 text-sm text-ink-soft">A token acts as you, with your role, until it expires or is revoked. From a script:</p>
      <pre className="overflow-x-auto rounded-md border border-line bg-sunken px-3 py-2 font-mono text-xs leading-relaxed">{`curl -H "Authorization: Bearer $LOADLINE_TOKEN" \\
  ${origin}/api/auth/me`}</pre>
      <p className="mt-2 text-xs text-ink-faint">
        The API is described at <a className="text-accent underline" href="/api/openapi.json">/api/openapi.json</a>. Tokens cannot create other tokens.
      </p>
    </Card>
  );
}
