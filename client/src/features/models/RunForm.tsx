import { useEffect, useMemo, useState } from 'react';
import { useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import {
  ESTIMATORS,
  ESTIMATOR_LABELS,
  MAX_FACTORS,
  MIN_OBSERVATIONS_PER_ASSET,
  type ModelRun,
  type ModelRunParametersInput,
} from '@shared/schemas/modelRuns';
import type { Asset } from '@shared/schemas/assets';
import type { AssetListSummary } from '@shared/schemas/assetLists';
import { Field } from '../../components/Field';
import { Button } from '../../components/Button';
import { ErrorAlert } from '../../components/Alert';
import { useAssetsForUniverse, useCreateRun } from './api';
import { useAssetLists, useCreateAssetList } from '../asset-lists/api';
import { ApiError, errorMessage } from '../../lib/api';

/** Typed symbols, upper-cased as the server stores them (imports upper-case every symbol; the holdings editor does too). */
const splitSymbols = (text: string) => [...new Set(text.split(/[\s,;]+/).map((s) => s.trim().toUpperCase()).filter(Boolean))];

type UniverseChoice = { universeKind: 'all' | 'sectors' | 'assets' | 'list'; sectors?: string[]; symbols?: string; listId?: string };

/** How many assets the chosen universe holds, as far as the client knows (0 when not yet known). */
function universeSizeOf(v: UniverseChoice, assets: Asset[], lists: AssetListSummary[]): number {
  if (v.universeKind === 'sectors') return assets.filter((a) => a.sector && (v.sectors ?? []).includes(a.sector)).length;
  if (v.universeKind === 'assets') return splitSymbols(v.symbols ?? '').length;
  if (v.universeKind === 'list') return lists.find((l) => String(l.id) === v.listId)?.size ?? 0;
  return assets.length;
}

/** Largest number of factors allowed: below the number of assets (L < N) and at most MAX_FACTORS, as the server checks. */
const maxFactorsFor = (universeSize: number) => (universeSize > 1 ? Math.min(MAX_FACTORS, universeSize - 1) : MAX_FACTORS);
const factorsLimitMessage = (universeSize: number) =>
  maxFactorsFor(universeSize) < MAX_FACTORS
    ? `at most ${maxFactorsFor(universeSize)} factors: factors must be below the number of assets (${universeSize})`
    : `at most ${MAX_FACTORS} factors`;

/** The form's own flat shape; it becomes ModelRunParameters on submit. Rules that need the asset list sit in the factory. */
function formSchema(assets: Asset[], lists: AssetListSummary[]) {
  return z
    .object({
      label: z.string().max(60, 'at most 60 characters'),
      universeKind: z.enum(['all', 'sectors', 'assets', 'list']),
      listId: z.string(),
      sectors: z.array(z.string()),
      symbols: z.string(),
      windowKind: z.enum(['last', 'dates']),
      lastN: z.number({ error: 'enter a whole number' }).int('enter a whole number'),
      from: z.string(),
      to: z.string(),
      weighting: z.enum(['equal', 'exponential']),
      halfLife: z.number({ error: 'enter a number of periods' }),
      mean: z.enum(['sample', 'zero']),
      estimator: z.enum(ESTIMATORS),
      factorsMode: z.enum(['number', 'recommend']),
      factors: z.number({ error: 'enter a whole number' }).int('enter a whole number'),
      missing: z.enum(['em', 'complete-rows', 'drop-assets']),
    })
    .superRefine((v, ctx) => {
      const issue = (path: string, message: string) => ctx.addIssue({ code: 'custom', path: [path], message });
      const universeSize = universeSizeOf(v, assets, lists);
      if (v.universeKind === 'sectors' && !v.sectors.length) issue('sectors', 'choose at least one sector');
      if (v.universeKind === 'assets') {
        const symbols = splitSymbols(v.symbols);
        const known = new Set(assets.map((a) => a.symbol));
        const unknown = symbols.filter((s) => !known.has(s));
        if (symbols.length < 2) issue('symbols', 'list at least two symbols');
        else if (unknown.length) issue('symbols', `unknown symbol${unknown.length > 1 ? 's' : ''}: ${unknown.slice(0, 5).join(', ')}`);
      }
      if (v.universeKind === 'list' && !lists.some((l) => String(l.id) === v.listId)) issue('listId', 'choose a saved list');
      if (v.windowKind === 'last' && v.lastN < MIN_OBSERVATIONS_PER_ASSET) issue('lastN', `the window needs at least ${MIN_OBSERVATIONS_PER_ASSET} observations per asset`);
      if (v.windowKind === 'dates') {
        if (!/^\d{4}-\d{2}-\d{2}$/.test(v.from)) issue('from', 'choose a start date');
        if (!/^\d{4}-\d{2}-\d{2}$/.test(v.to)) issue('to', 'choose an end date');
        else if (v.from > v.to) issue('to', 'the end date must not be before the start date');
      }
      if (v.weighting === 'exponential' && !(v.halfLife > 0)) issue('halfLife', 'the half-life must be a positive number of periods');
      if ((v.estimator === 'fa' || v.estimator === 'ppca') && v.factorsMode === 'number') {
        if (v.factors < 1) issue('factors', 'at least one factor');
        else if (v.factors > maxFactorsFor(universeSize)) issue('factors', factorsLimitMessage(universeSize));
      }
    });
}
type FormValues = z.infer<ReturnType<typeof formSchema>>;

const DEFAULTS: FormValues = {
  label: '',
  universeKind: 'all',
  listId: '',
  sectors: [],
  symbols: '',
  windowKind: 'last',
  lastN: 500,
  from: '',
  to: '',
  weighting: 'equal',
  halfLife: 120,
  mean: 'sample',
  estimator: 'fa',
  factorsMode: 'number',
  factors: 5,
  missing: 'em',
};

function toParameters(v: FormValues): ModelRunParametersInput {
  const isFactor = v.estimator === 'fa' || v.estimator === 'ppca';
  return {
    ...(v.label.trim() ? { label: v.label.trim() } : {}),
    universe:
      v.universeKind === 'all'
        ? { kind: 'all' }
        : v.universeKind === 'sectors'
          ? { kind: 'sectors', sectors: v.sectors }
          : v.universeKind === 'list'
            ? { kind: 'list', listId: Number(v.listId) }
            : { kind: 'assets', symbols: splitSymbols(v.symbols) },
    window: v.windowKind === 'last' ? { kind: 'last', observations: v.lastN } : { kind: 'dates', from: v.from, to: v.to },
    weighting: v.weighting === 'equal' ? { kind: 'equal' } : { kind: 'exponential', halfLife: v.halfLife },
    mean: v.mean,
    estimator: v.estimator,
    ...(isFactor ? { factors: v.factorsMode === 'recommend' ? ('recommend' as const) : v.factors } : {}),
    missing: v.missing,
  };
}

/** Server issue paths (e.g. 'universe.symbols', 'window') → the form's fields. */
const ISSUE_FIELD: Record<string, keyof FormValues> = {
  'universe.symbols': 'symbols',
  'universe.sectors': 'sectors',
  'universe.listId': 'listId',
  universe: 'universeKind',
  window: 'windowKind',
  'window.observations': 'lastN',
  'window.to': 'to',
  factors: 'factors',
  missing: 'missing',
  'weighting.halfLife': 'halfLife',
};

export function RunForm({ onQueued }: { onQueued: (run: ModelRun) => void }) {
  const assets = useAssetsForUniverse();
  const create = useCreateRun();
  const savedLists = useAssetLists();
  const saveList = useCreateAssetList();
  const [listName, setListName] = useState('');
  const assetList = useMemo(() => assets.data ?? [], [assets.data]);
  const lists = useMemo(() => savedLists.data ?? [], [savedLists.data]);
  const schema = useMemo(() => formSchema(assetList, lists), [assetList, lists]);
  const form = useForm<FormValues>({ resolver: zodResolver(schema), defaultValues: DEFAULTS });
  const { errors } = form.formState;
  const values = useWatch({ control: form.control }) as FormValues;
  const sectors = useMemo(() => [...new Set(assetList.map((a) => a.sector).filter((s): s is string => !!s))].sort(), [assetList]);
  const isFactor = values.estimator === 'fa' || values.estimator === 'ppca';
  const universeSize = universeSizeOf(values, assetList, lists);
  const maxFactors = maxFactorsFor(universeSize);
  const symbolsField = form.register('symbols');
  // The factors' limit follows the universe: a shown factors error is checked again when the universe changes.
  const factorsError = !!errors.factors;
  useEffect(() => {
    if (factorsError) void form.trigger('factors');
  }, [universeSize, factorsError, form]);
  const lambda = values.weighting === 'exponential' && values.halfLife > 0 ? Math.pow(0.5, 1 / values.halfLife) : null;

  const submit = form.handleSubmit((v) =>
    create.mutate(toParameters(v), {
      onSuccess: (run) => onQueued(run),
      onError: (error) => {
        for (const issue of (error as { issues?: { path: string; message: string }[] }).issues ?? []) {
          const field = ISSUE_FIELD[issue.path];
          if (field) form.setError(field, { message: issue.message });
        }
      },
    }),
  );

  return (
    <form onSubmit={submit} noValidate aria-label="New model fit" className="flex flex-col gap-4">
      {create.isError ? <ErrorAlert error={create.error} title="The fit was not queued" /> : null}
      <div className="grid gap-4 md:grid-cols-3">
        <fieldset className="flex flex-col gap-2">
          <legend className="mb-1 text-xs font-semibold tracking-wide text-ink-soft uppercase">Universe</legend>
          <Field label="Assets" error={errors.universeKind?.message}>
            <select className="field-input" {...form.register('universeKind')}>
              <option value="all">All assets with returns ({assetList.length})</option>
              <option value="sectors">By sector</option>
              <option value="assets">A list of symbols</option>
              <option value="list">Saved list</option>
            </select>
          </Field>
          {values.universeKind === 'list' ? (
            <Field label="Saved list" error={errors.listId?.message} hint={savedLists.isError ? errorMessage(savedLists.error) : lists.length ? undefined : 'No saved lists yet: type symbols and save them as a list.'}>
              <select className="field-input" {...form.register('listId')}>
                <option value="">Choose a list…</option>
                {lists.map((l) => (
                  <option key={l.id} value={String(l.id)}>
                    {l.name} ({l.size} assets, {l.owner.name})
                  </option>
                ))}
              </select>
            </Field>
          ) : null}
          {values.universeKind === 'sectors' ? (
            <Field label="Sectors" error={errors.sectors?.message} hint="Hold Ctrl or ⌘ to choose several.">
              <select multiple className="field-input h-28" {...form.register('sectors')}>
                {sectors.map((s) => (
                  <option key={s} value={s}>
                    {s}
                  </option>
                ))}
              </select>
            </Field>
          ) : null}
          {values.universeKind === 'assets' ? (
            <Field label="Symbols" error={errors.symbols?.message} hint="Separated by commas, spaces or new lines.">
              <textarea
                rows={3}
                className="field-input font-mono"
                {...symbolsField}
                onChange={(e) => {
                  // Upper-cased as typed, keeping the caret where it was.
                  const { selectionStart, selectionEnd } = e.target;
                  e.target.value = e.target.value.toUpperCase();
                  e.target.setSelectionRange(selectionStart, selectionEnd);
                  return symbolsField.onChange(e);
                }}
              />
            </Field>
          ) : null}
          {values.universeKind === 'assets' ? (
            <div className="flex flex-col gap-1">
              <div className="flex items-end gap-2">
                <Field label="Name for a saved list" className="flex-1">
                  <input className="field-input" placeholder="List name" value={listName} onChange={(e) => setListName(e.target.value)} onKeyDown={(e) => e.key === 'Enter' && e.preventDefault()} />
                </Field>
                <Button
                  size="sm"
                  disabled={saveList.isPending || !listName.trim() || splitSymbols(values.symbols ?? '').length < 2}
                  onClick={() =>
                    saveList.mutate(
                      { name: listName.trim(), symbols: splitSymbols(values.symbols ?? '') },
                      {
                        onSuccess: (saved) => {
                          setListName('');
                          form.setValue('listId', String(saved.id));
                        },
                      },
                    )
                  }
                >
                  {saveList.isPending ? 'Saving…' : 'Save list'}
                </Button>
              </div>
              {saveList.isError ? (
                <p role="alert" className="text-xs font-medium text-breach">
                  {saveList.error instanceof ApiError && saveList.error.issues?.length ? saveList.error.issues.map((i) => i.message).join('; ') : errorMessage(saveList.error)}
                </p>
              ) : null}
              {saveList.isSuccess && !saveList.isPending ? (
                <p role="status" className="text-xs text-ink-soft">
                  Saved as “{saveList.data.name}” ({saveList.data.size} assets); choose “Saved list” to use it.
                </p>
              ) : null}
            </div>
          ) : null}
          <Field label="Version label (optional)" error={errors.label?.message}>
            <input className="field-input" {...form.register('label')} />
          </Field>
        </fieldset>

        <fieldset className="flex flex-col gap-2">
          <legend className="mb-1 text-xs font-semibold tracking-wide text-ink-soft uppercase">Window and weighting</legend>
          <Field label="Estimation window" error={errors.windowKind?.message}>
            <select className="field-input" {...form.register('windowKind')}>
              <option value="last">The last N observations</option>
              <option value="dates">Between two dates</option>
            </select>
          </Field>
          {values.windowKind === 'last' ? (
            <Field
              label="Observations (dates)"
              error={errors.lastN?.message}
              hint={`The last this many dates. Each asset needs at least ${MIN_OBSERVATIONS_PER_ASSET} observed dates in the window.`}
            >
              <input type="number" min={MIN_OBSERVATIONS_PER_ASSET} className="field-input font-mono" {...form.register('lastN', { valueAsNumber: true })} />
            </Field>
          ) : (
            <div className="grid grid-cols-2 gap-2">
              <Field label="From" error={errors.from?.message}>
                <input type="date" className="field-input" {...form.register('from')} />
              </Field>
              <Field label="To" error={errors.to?.message}>
                <input type="date" className="field-input" {...form.register('to')} />
              </Field>
            </div>
          )}
          <Field label="Weighting">
            <select className="field-input" {...form.register('weighting')}>
              <option value="equal">Equal weights</option>
              <option value="exponential">Exponential (half-life)</option>
            </select>
          </Field>
          {values.weighting === 'exponential' ? (
            <Field label="Half-life (periods)" error={errors.halfLife?.message} hint={lambda !== null ? <span className="font-mono tabular-nums">λ = 0.5^(1/h) = {lambda.toFixed(6)}</span> : 'λ = 0.5^(1/h)'}>
              <input type="number" step="any" min={0} className="field-input font-mono" {...form.register('halfLife', { valueAsNumber: true })} />
            </Field>
          ) : null}
          <Field label="Mean" hint="Zero mean is common practice for daily risk.">
            <select className="field-input" {...form.register('mean')}>
              <option value="sample">Sample mean</option>
              <option value="zero">Zero mean</option>
            </select>
          </Field>
        </fieldset>

        <fieldset className="flex flex-col gap-2">
          <legend className="mb-1 text-xs font-semibold tracking-wide text-ink-soft uppercase">Estimator</legend>
          <Field label="Estimator">
            <select className="field-input" {...form.register('estimator')}>
              {ESTIMATORS.map((e) => (
                <option key={e} value={e}>
                  {ESTIMATOR_LABELS[e]}
                </option>
              ))}
            </select>
          </Field>
          {isFactor ? (
            <>
              <Field label="Number of factors">
                <select className="field-input" {...form.register('factorsMode')}>
                  <option value="number">Set the number</option>
                  <option value="recommend">Recommend (criteria table decides)</option>
                </select>
              </Field>
              {values.factorsMode === 'number' ? (
                <Field
                  label="Factors (L)"
                  error={errors.factors?.message}
                  hint={maxFactors < MAX_FACTORS ? `1 to ${maxFactors}: below the number of assets (${universeSize}).` : universeSize > 1 ? `1 to ${MAX_FACTORS}.` : `1 to ${MAX_FACTORS}, and below the number of assets.`}
                >
                  <input type="number" min={1} max={maxFactors} className="field-input font-mono" {...form.register('factors', { valueAsNumber: true })} />
                </Field>
              ) : (
                <p className="text-xs text-ink-faint">Fits L = 1 … 10 and chooses by the held-out log-likelihood (small panels) or BIC; the reason is shown with the model.</p>
              )}
            </>
          ) : null}
          <Field label="Missing data" error={errors.missing?.message}>
            <select className="field-input" {...form.register('missing')}>
              <option value="em">Use every observed value (EM / pairwise)</option>
              <option value="complete-rows">Only dates where every asset is observed</option>
              <option value="drop-assets">Leave out assets with gaps in the window</option>
            </select>
          </Field>
        </fieldset>
      </div>
      <div className="flex items-center gap-3">
        <Button type="submit" variant="primary" disabled={create.isPending || assets.isLoading}>
          {create.isPending ? 'Queueing…' : 'Start fit'}
        </Button>
        <p className="text-xs text-ink-faint">The fit runs in the background; you can leave this page and come back.</p>
      </div>
    </form>
  );
}
