import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { AgGridReact } from 'ag-grid-react';
import { ModuleRegistry, ScrollApiModule, TextEditorModule, type CellValueChangedEvent, type ColDef, type GridApi } from 'ag-grid-community';
import { COLUMN_TYPES, loadlineGridTheme } from '../../components/DataGrid';
import { formatNumber } from '../../components/Figure';

// Editing needs the text editor, and scrolling an added row into view the scroll API, on top of the modules the shared
// grid registers. Values are typed as text too, so an entry that is not a number stays visible (and marked) instead of
// being blanked by a number input.
ModuleRegistry.registerModules([TextEditorModule, ScrollApiModule]);

/** `valueText`: what was typed when it is not a number (then `value` is null), kept so the row can show and name it. */
export type EditableHolding = { key: number; symbol: string; value: number | null; assetName: string | null; valueText?: string };

/** A typed weight or market value: `12.5`, `-3`, `1e3`, with an optional trailing `%` and a typographic minus. */
export function parseTypedNumber(input: unknown): { value: number | null; invalidText?: string } {
  if (typeof input === 'number') return Number.isFinite(input) ? { value: input } : { value: null, invalidText: String(input) };
  const text = String(input ?? '').trim();
  if (!text) return { value: null };
  const plain = text.replace(/\s*%$/, '').replace(/^[−–]/, '-');
  const value = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(plain) ? Number(plain) : NaN;
  return Number.isFinite(value) ? { value } : { value: null, invalidText: text };
}

let nextKey = 1;
export function newHoldingKey(): number {
  return nextKey++;
}

/**
 * Holdings in AG Grid with editable symbols and values (weights in % or market values), row removal and the
 * problems found for each row shown beside it. The parent owns the rows.
 */
export function HoldingsGrid({
  rows,
  onChange,
  valueLabel,
  valueDigits = 2,
  problems,
  readOnly = false,
  symbolsEditable = true,
  height = 420,
  ariaLabel,
  focusRowKey,
}: {
  rows: EditableHolding[];
  onChange: (rows: EditableHolding[]) => void;
  valueLabel: string;
  valueDigits?: number;
  problems?: Map<number, string[]>;
  readOnly?: boolean;
  symbolsEditable?: boolean;
  height?: number;
  ariaLabel: string;
  /** A row to scroll into view with its symbol cell focused (e.g. one just added); each new key does it once. */
  focusRowKey?: number;
}) {
  const [gridApi, setGridApi] = useState<GridApi<EditableHolding> | null>(null);
  const pendingFocus = useRef<number | undefined>(undefined);
  useEffect(() => {
    pendingFocus.current = focusRowKey;
  }, [focusRowKey]);
  // The grid takes new rowData after React renders, so try on each data update until the row exists.
  const focusPendingRow = useCallback(() => {
    const key = pendingFocus.current;
    if (!gridApi || key === undefined) return;
    const node = gridApi.getRowNode(String(key));
    if (!node || node.rowIndex === null) return;
    pendingFocus.current = undefined;
    gridApi.ensureIndexVisible(node.rowIndex);
    gridApi.setFocusedCell(node.rowIndex, 'symbol');
  }, [gridApi]);
  useEffect(() => focusPendingRow(), [focusPendingRow, focusRowKey, rows]);
  const remove = useCallback((key: number) => onChange(rows.filter((r) => r.key !== key)), [rows, onChange]);
  const columns = useMemo<ColDef<EditableHolding>[]>(
    () => [
      { headerName: '#', valueGetter: (p) => (p.node?.rowIndex ?? 0) + 1, maxWidth: 64, sortable: false, filter: false, cellClass: 'll-figure text-ink-faint' },
      {
        field: 'symbol',
        headerName: 'Symbol',
        editable: !readOnly && symbolsEditable,
        minWidth: 120,
        cellClass: 'll-figure',
        valueParser: (p) => String(p.newValue ?? '').trim().toUpperCase(),
      },
      { field: 'assetName', headerName: 'Asset', minWidth: 160, flex: 1.6, valueFormatter: (p) => p.value ?? '' },
      {
        field: 'value',
        headerName: valueLabel,
        colId: 'value',
        type: 'figure',
        editable: !readOnly,
        cellEditor: 'agTextCellEditor',
        minWidth: 130,
        // The editor opens on the typed text when it was not a number, else on the number itself.
        valueGetter: (p) => (p.data?.valueText !== undefined ? p.data.valueText : p.data?.value),
        valueSetter: (p) => {
          const parsed = parseTypedNumber(p.newValue);
          p.data.value = parsed.value;
          p.data.valueText = parsed.invalidText;
          return true;
        },
        valueFormatter: (p) => (typeof p.value === 'string' ? p.value : p.value === null || p.value === undefined || Number.isNaN(p.value) ? '' : formatNumber(p.value, valueDigits)),
        cellClassRules: { 'll-cell-invalid': (p) => p.data?.valueText !== undefined },
      },
      {
        headerName: 'Problems',
        colId: 'problems',
        minWidth: 200,
        flex: 2,
        sortable: false,
        filter: false,
        valueGetter: (p) => (p.data ? (problems?.get(p.data.key) ?? []).join('; ') : ''),
        cellClass: 'text-breach text-xs',
      },
      ...(readOnly
        ? []
        : [
            {
              headerName: '',
              colId: 'remove',
              maxWidth: 96,
              sortable: false,
              filter: false,
              cellRenderer: (p: { data: EditableHolding }) => (
                <button type="button" className="text-xs font-medium text-ink-soft hover:text-breach" onClick={() => remove(p.data.key)} aria-label={`Remove ${p.data.symbol || 'row'}`}>
                  Remove
                </button>
              ),
            } satisfies ColDef<EditableHolding>,
          ]),
    ],
    [valueLabel, valueDigits, readOnly, symbolsEditable, problems, remove],
  );

  const changed = useCallback(
    (event: CellValueChangedEvent<EditableHolding>) => {
      const updated = event.data;
      onChange(
        rows.map((r) =>
          r.key === updated.key
            ? {
                ...updated,
                // A new symbol's asset name is known only after saving (AG Grid edits the row object in place,
                // so the change is read from the event).
                assetName: event.column.getColId() === 'symbol' && event.oldValue !== event.newValue ? null : updated.assetName,
                value: typeof updated.value === 'number' && Number.isFinite(updated.value) ? updated.value : null,
                valueText: updated.valueText,
              }
            : r,
        ),
      );
    },
    [rows, onChange],
  );

  return (
    <div style={{ height }} role="region" aria-label={ariaLabel}>
      <AgGridReact<EditableHolding>
        theme={loadlineGridTheme}
        rowData={rows}
        columnDefs={columns}
        defaultColDef={{ flex: 1, minWidth: 80, sortable: true, resizable: true }}
        columnTypes={COLUMN_TYPES}
        getRowId={(p) => String(p.data.key)}
        onCellValueChanged={changed}
        onGridReady={(e) => setGridApi(e.api)}
        onRowDataUpdated={focusPendingRow}
        getRowClass={(p) => (p.data && problems?.get(p.data.key)?.length ? 'll-row-problem' : undefined)}
        singleClickEdit
        stopEditingWhenCellsLoseFocus
        animateRows={false}
        ensureDomOrder
      />
    </div>
  );
}

/** A row with nothing typed in it (a fresh "Add row"). */
export const isBlankHolding = (r: EditableHolding) => !r.symbol && r.value === null && r.valueText === undefined;

/**
 * Local checks before saving or evaluating (the server checks again and names the rows): empty or repeated symbols,
 * missing values and values that are not numbers. `ignoreBlankRows` leaves rows with nothing typed in them unmarked.
 */
export function localProblems(rows: EditableHolding[], valueName: string, { ignoreBlankRows = false } = {}): Map<number, string[]> {
  const problems = new Map<number, string[]>();
  const seen = new Map<string, number>();
  rows.forEach((r, i) => {
    if (ignoreBlankRows && isBlankHolding(r)) return;
    const list: string[] = [];
    if (!r.symbol) list.push('symbol is empty');
    else if (seen.has(r.symbol)) list.push(`duplicates row ${seen.get(r.symbol)! + 1}`);
    else seen.set(r.symbol, i);
    if (r.valueText !== undefined) list.push(`${valueName} “${r.valueText}” is not a number`);
    else if (r.value === null || !Number.isFinite(r.value)) list.push(`${valueName} is missing`);
    if (list.length) problems.set(r.key, list);
  });
  return problems;
}

/** `row 3 (ACME): weight “abc” is not a number` for each marked row, in row order. */
export function describeProblems(rows: EditableHolding[], problems: Map<number, string[]>): string[] {
  return rows.flatMap((r, i) => {
    const list = problems.get(r.key);
    return list?.length ? [`row ${i + 1}${r.symbol ? ` (${r.symbol})` : ''}: ${list.join('; ')}`] : [];
  });
}
