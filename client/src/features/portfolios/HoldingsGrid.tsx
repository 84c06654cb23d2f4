import { useCallback, useMemo } from 'react';
import { AgGridReact } from 'ag-grid-react';
import { ModuleRegistry, NumberEditorModule, TextEditorModule, type CellValueChangedEvent, type ColDef } from 'ag-grid-community';
import { COLUMN_TYPES, loadlineGridTheme } from '../../components/DataGrid';
import { formatNumber } from '../../components/Figure';

// Editing needs the text and number editors on top of the modules the shared grid registers.
ModuleRegistry.registerModules([TextEditorModule, NumberEditorModule]);

export type EditableHolding = { key: number; symbol: string; value: number | null; assetName: string | null };

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
}) {
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
        cellEditor: 'agNumberCellEditor',
        cellEditorParams: { precision: 6 },
        minWidth: 130,
        valueFormatter: (p) => (p.value === null || p.value === undefined || Number.isNaN(p.value) ? '' : formatNumber(p.value, valueDigits)),
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
                value: updated.value === null || updated.value === undefined || Number.isNaN(Number(updated.value)) ? null : Number(updated.value),
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
        getRowClass={(p) => (p.data && problems?.get(p.data.key)?.length ? 'll-row-problem' : undefined)}
        singleClickEdit
        stopEditingWhenCellsLoseFocus
        animateRows={false}
        ensureDomOrder
      />
    </div>
  );
}

/** Local checks before saving (the server checks again and names the rows): empty or repeated symbols, missing values. */
export function localProblems(rows: EditableHolding[], valueName: string): Map<number, string[]> {
  const problems = new Map<number, string[]>();
  const seen = new Map<string, number>();
  rows.forEach((r, i) => {
    const list: string[] = [];
    if (!r.symbol) list.push('symbol is empty');
    else if (seen.has(r.symbol)) list.push(`duplicates row ${seen.get(r.symbol)! + 1}`);
    else seen.set(r.symbol, i);
    if (r.value === null || !Number.isFinite(r.value)) list.push(`${valueName} is missing`);
    if (list.length) problems.set(r.key, list);
  });
  return problems;
}
