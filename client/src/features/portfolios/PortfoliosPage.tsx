import { useMemo } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { ColDef } from 'ag-grid-community';
import type { PortfolioSummary } from '@shared/schemas/portfolios';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { StatusBadge } from '../../components/StatusBadge';
import { formatDateTime } from '../../lib/format';
import { useCurrentUser } from '../../app/currentUser';
import { useCreatePortfolio, usePortfolios } from './api';

const NewPortfolioSchema = z.object({
  name: z.string().trim().min(1, 'a name is required').max(120, 'at most 120 characters'),
  kind: z.enum(['fund', 'benchmark']),
  baseCurrency: z.string().trim().regex(/^[A-Za-z]{3}$/, 'a three-letter code, e.g. USD'),
  benchmark: z.string(),
});
type NewPortfolio = z.infer<typeof NewPortfolioSchema>;

export default function PortfoliosPage() {
  const user = useCurrentUser();
  const portfolios = usePortfolios();
  const create = useCreatePortfolio();
  const navigate = useNavigate();
  const canCreate = user.role === 'pm' || user.role === 'admin';
  const form = useForm<NewPortfolio>({ resolver: zodResolver(NewPortfolioSchema), defaultValues: { name: '', kind: 'fund', baseCurrency: 'USD', benchmark: '' } });
  const benchmarks = (portfolios.data ?? []).filter((p) => p.holdingsCount > 0);

  const submit = form.handleSubmit((values) =>
    create.mutate(
      { name: values.name, kind: values.kind, baseCurrency: values.baseCurrency, benchmarkPortfolioId: values.benchmark ? Number(values.benchmark) : null },
      { onSuccess: (created) => navigate(`/portfolios/${created.id}`) },
    ),
  );

  const columns = useMemo<ColDef<PortfolioSummary>[]>(
    () => [
      {
        field: 'name',
        headerName: 'Portfolio',
        flex: 2,
        minWidth: 220,
        cellRenderer: (p: { data: PortfolioSummary }) => (
          <Link className="font-medium text-accent hover:underline" to={`/portfolios/${p.data.id}`}>
            {p.data.name}
          </Link>
        ),
      },
      {
        field: 'kind',
        headerName: 'Kind',
        maxWidth: 120,
        cellRenderer: (p: { value: string }) => <StatusBadge tone={p.value === 'benchmark' ? 'info' : 'neutral'}>{p.value === 'benchmark' ? 'Benchmark' : 'Fund'}</StatusBadge>,
      },
      { headerName: 'Owner', valueGetter: (p) => p.data?.owner.name, minWidth: 140 },
      { field: 'holdingsCount', headerName: 'Holdings', type: 'figure', maxWidth: 110 },
      { headerName: 'Benchmark', valueGetter: (p) => p.data?.benchmark?.name ?? '—', minWidth: 180 },
      { field: 'baseCurrency', headerName: 'Currency', maxWidth: 100 },
      { field: 'updatedAt', headerName: 'Updated', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value), maxWidth: 160 },
      {
        headerName: '',
        colId: 'actions',
        sortable: false,
        filter: false,
        maxWidth: 110,
        cellRenderer: (p: { data: PortfolioSummary }) =>
          p.data.holdingsCount > 0 ? (
            <Link className="text-sm font-medium text-accent hover:underline" to={`/portfolios/${p.data.id}/risk`} aria-label={`Risk of ${p.data.name}`}>
              Risk →
            </Link>
          ) : (
            <span className="text-xs text-ink-faint">no holdings</span>
          ),
      },
    ],
    [],
  );

  return (
    <div className="flex flex-col gap-5">
      <PageHeader
        title="Portfolios"
        description={
          user.role === 'pm'
            ? 'Your funds and the shared benchmark portfolios. Open one to edit its holdings, or its risk page to see what the approved models say.'
            : 'Every fund and benchmark portfolio. Open one to see its holdings and its risk under the approved models.'
        }
      />
      <ErrorAlert error={portfolios.error} title="The portfolios could not be loaded" />
      <DataGrid<PortfolioSummary>
        rows={portfolios.data}
        columns={columns}
        getRowId={(p) => String(p.data.id)}
        loading={portfolios.isLoading}
        quickSearch
        csvFileName="portfolios.csv"
        height={420}
        ariaLabel="Portfolios"
        emptyMessage="No portfolios yet"
      />
      {canCreate ? (
        <Card title="New portfolio">
          <form onSubmit={submit} className="grid grid-cols-1 gap-3 md:grid-cols-5 md:items-end" noValidate>
            <Field label="Name" error={form.formState.errors.name?.message} className="md:col-span-2">
              <input className="field-input" {...form.register('name')} />
            </Field>
            <Field label="Kind">
              <select className="field-input" {...form.register('kind')}>
                <option value="fund">Fund</option>
                <option value="benchmark">Benchmark (shared, readable by all)</option>
              </select>
            </Field>
            <Field label="Base currency" error={form.formState.errors.baseCurrency?.message}>
              <input className="field-input uppercase" maxLength={3} {...form.register('baseCurrency')} />
            </Field>
            <Field label="Benchmark (optional)">
              <select className="field-input" {...form.register('benchmark')}>
                <option value="">None</option>
                {benchmarks.map((b) => (
                  <option key={b.id} value={b.id}>
                    {b.name}
                  </option>
                ))}
              </select>
            </Field>
            <div className="md:col-span-5 flex items-center gap-3">
              <Button type="submit" variant="primary" disabled={create.isPending}>
                {create.isPending ? 'Creating…' : 'Create and add holdings'}
              </Button>
              <ErrorAlert error={create.error} />
            </div>
          </form>
        </Card>
      ) : null}
    </div>
  );
}
