import { useEffect, useMemo } from 'react';
import { useSearchParams } from 'react-router-dom';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { ModuleRegistry, TooltipModule, type ColDef } from 'ag-grid-community';
import type { AuditEventView, AuditFilter } from '@shared/schemas/audit';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Field } from '../../components/Field';
import { ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { Pager } from '../../components/Pager';
import { formatCount, formatDateTimeSeconds } from '../../lib/format';
import { useAuditActions, useAuditEvents, useExportAudit } from './api';
import { formatAuditDetails } from './formatDetails';

// Long details show in full on hover.
ModuleRegistry.registerModules([TooltipModule]);

const PAGE_SIZE = 100;
const FILTER_KEYS = ['actor', 'action', 'objectType', 'objectId', 'from', 'to'] as const;

const optionalDate = z.union([z.literal(''), z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'must be a date (YYYY-MM-DD)')]);
const FilterFormSchema = z
  .object({
    actor: z.string().trim().max(320),
    action: z.string().max(100),
    objectType: z.string().trim().max(100),
    objectId: z.string().trim().max(100),
    from: optionalDate,
    to: optionalDate,
  })
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: 'must not be before “From”', path: ['to'] });
type FilterForm = z.infer<typeof FilterFormSchema>;

/** The filters live in the address, so a filtered view can be bookmarked or sent to a colleague. */
function filterFrom(params: URLSearchParams): FilterForm {
  return Object.fromEntries(FILTER_KEYS.map((key) => [key, params.get(key) ?? ''])) as FilterForm;
}

function compact(filter: FilterForm): AuditFilter {
  return Object.fromEntries(Object.entries(filter).filter(([, value]) => value !== '')) as AuditFilter;
}

export default function AuditPage() {
  const [params, setParams] = useSearchParams();
  const filter = useMemo(() => filterFrom(params), [params]);
  const page = Math.max(1, Number(params.get('page')) || 1);
  const events = useAuditEvents({ ...compact(filter), page, pageSize: PAGE_SIZE });
  const actions = useAuditActions();
  const exportCsv = useExportAudit();
  const form = useForm<FilterForm>({ resolver: zodResolver(FilterFormSchema), defaultValues: filter });
  useEffect(() => form.reset(filter), [filter, form]);
  const { errors } = form.formState;

  const apply = form.handleSubmit((values) => setParams(new URLSearchParams(Object.entries(compact(values)) as [string, string][])));
  const clear = () => setParams(new URLSearchParams());
  const goTo = (next: number) => {
    const copy = new URLSearchParams(params);
    copy.set('page', String(next));
    setParams(copy);
  };

  const columns = useMemo<ColDef<AuditEventView>[]>(
    () => [
      { field: 'at', headerName: 'When', type: 'timestamp', valueFormatter: (p) => formatDateTimeSeconds(p.value), width: 180, minWidth: 180 },
      { field: 'actorEmail', headerName: 'Who', valueFormatter: (p) => p.value ?? '(anonymous)', minWidth: 200 },
      { field: 'action', headerName: 'Action', cellClass: 'll-figure', minWidth: 200 },
      {
        colId: 'object',
        headerName: 'Object',
        valueGetter: (p) => (p.data?.objectType ? `${p.data.objectType}${p.data.objectId ? ` #${p.data.objectId}` : ''}` : ''),
        minWidth: 140,
        maxWidth: 200,
      },
      { field: 'ip', headerName: 'IP', cellClass: 'll-figure', minWidth: 120, maxWidth: 150 },
      {
        colId: 'details',
        headerName: 'Details',
        // Readable pairs on screen; the server's CSV export keeps the JSON.
        valueGetter: (p) => (p.data ? formatAuditDetails(p.data.details) : ''),
        tooltipValueGetter: (p) => p.value || undefined,
        flex: 2,
        minWidth: 240,
      },
    ],
    [],
  );

  const total = events.data?.total ?? 0;
  const first = total ? (page - 1) * PAGE_SIZE + 1 : 0;
  const last = Math.min(total, page * PAGE_SIZE);

  return (
    <div>
      <PageHeader
        title="Audit log"
        description="Every sign-in, user and token change, import, model approval and sign-off, with who did it, when and from where. The trail is append-only."
        actions={
          <Button onClick={() => exportCsv.mutate(compact(filter))} disabled={exportCsv.isPending}>
            {exportCsv.isPending ? 'Exporting…' : 'Export CSV'}
          </Button>
        }
      />
      <Card className="mb-4">
        <form onSubmit={apply} noValidate aria-label="Audit filters" className="grid gap-3 sm:grid-cols-3 xl:grid-cols-[1.4fr_1.2fr_1fr_0.8fr_0.9fr_0.9fr_auto]">
          <Field label="Who (part of the e-mail)" error={errors.actor?.message}>
            <input type="search" className="field-input" {...form.register('actor')} />
          </Field>
          <Field label="Action" error={errors.action?.message}>
            <select className="field-input" {...form.register('action')}>
              <option value="">any action</option>
              {(actions.data ?? []).map((action) => (
                <option key={action} value={action}>
                  {action}
                </option>
              ))}
            </select>
          </Field>
          <Field label="Object type" error={errors.objectType?.message}>
            <input type="text" className="field-input" placeholder="e.g. user" {...form.register('objectType')} />
          </Field>
          <Field label="Object id" error={errors.objectId?.message}>
            <input type="text" className="field-input" {...form.register('objectId')} />
          </Field>
          <Field label="From" error={errors.from?.message}>
            <input type="date" className="field-input" {...form.register('from')} />
          </Field>
          <Field label="To (inclusive)" error={errors.to?.message}>
            <input type="date" className="field-input" {...form.register('to')} />
          </Field>
          <div className="flex items-end gap-2">
            <Button type="submit" variant="primary">
              Apply
            </Button>
            <Button variant="quiet" onClick={clear}>
              Clear
            </Button>
          </div>
        </form>
      </Card>
      {events.isError ? <ErrorAlert error={events.error} title="The audit trail could not be loaded" /> : null}
      {exportCsv.isError ? <ErrorAlert error={exportCsv.error} title="The export failed" /> : null}
      <DataGrid<AuditEventView>
        ariaLabel="Audit events"
        rows={events.data?.items}
        columns={columns}
        loading={events.isPending}
        getRowId={(p) => String(p.data.id)}
        emptyMessage="No events match these filters"
        height={600}
        toolbar={
          <div className="flex w-full items-center justify-between gap-3 text-xs text-ink-soft">
            <span>
              {total ? (
                <>
                  Events <span className="font-mono tabular-nums">{formatCount(first)}–{formatCount(last)}</span> of{' '}
                  <span className="font-mono tabular-nums" data-testid="audit-total">{formatCount(total)}</span>, newest first. Column filters act on this page; the form above filters the whole trail.
                </>
              ) : events.isFetching ? (
                'Loading…'
              ) : (
                'No events'
              )}
            </span>
            <Pager page={page} total={total} pageSize={PAGE_SIZE} onPage={goTo} />
          </div>
        }
      />
    </div>
  );
}
