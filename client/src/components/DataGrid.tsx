import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { AgGridReact } from 'ag-grid-react';
import {
  ModuleRegistry,
  ClientSideRowModelModule,
  TextFilterModule,
  NumberFilterModule,
  DateFilterModule,
  QuickFilterModule,
  CsvExportModule,
  CellStyleModule,
  RowStyleModule,
  RowSelectionModule,
  RowApiModule,
  ValidationModule,
  type RowSelectionOptions,
  themeQuartz,
  type ColDef,
  type ColTypeDef,
  type GetRowIdFunc,
  type GridApi,
  type RowClickedEvent,
  type RowClassParams,
} from 'ag-grid-community';
import { Button } from './Button';

// Only the modules the console uses (AllCommunityModule would add about 1.5 MB); validation only while developing.
ModuleRegistry.registerModules([
  ClientSideRowModelModule,
  TextFilterModule,
  NumberFilterModule,
  DateFilterModule,
  QuickFilterModule,
  CsvExportModule,
  CellStyleModule,
  RowStyleModule,
  RowSelectionModule,
  RowApiModule, // getRowNode, to keep the selection in step
  ...(import.meta.env.DEV ? [ValidationModule] : []),
]);

/** AG Grid in Loadline's palette (values mirror the @theme tokens in styles/app.css). */
export const loadlineGridTheme = themeQuartz.withParams({
  accentColor: '#0e5c61',
  backgroundColor: '#ffffff',
  foregroundColor: '#1d2630',
  borderColor: '#dad5cb',
  headerBackgroundColor: '#f7f5f1',
  headerTextColor: '#4a5663',
  headerFontWeight: 600,
  headerFontSize: 12,
  oddRowBackgroundColor: '#fcfbf9',
  rowHoverColor: '#eef5f4',
  selectedRowBackgroundColor: '#dcecea',
  fontFamily: ['Inter', 'ui-sans-serif', 'system-ui', 'sans-serif'],
  fontSize: 13,
  spacing: 6,
  // 9 px either side of a cell (the theme's default from spacing 6 is 11): with wrapped headers, 13 figure
  // columns fit a 1400 px window beside the rail.
  cellHorizontalPadding: 9,
  rowHeight: 32,
  headerHeight: 34,
  wrapperBorderRadius: 8,
  borderRadius: 4,
  browserColorScheme: 'light',
});

/** Column types every grid can use: `type: 'figure'` for numbers (mono, tabular, right-aligned, number filter). */
export const COLUMN_TYPES: Record<string, ColTypeDef> = {
  figure: {
    cellClass: ['ag-right-aligned-cell', 'll-figure'],
    headerClass: 'ag-right-aligned-header',
    filter: 'agNumberColumnFilter',
  },
  /** ISO date-times shown as `yyyy-MM-dd HH:mm`: a fixed width that fits them. */
  timestamp: {
    cellClass: 'll-figure',
    filter: 'agTextColumnFilter',
    flex: 0,
    width: 150,
    minWidth: 150,
  },
  /** ISO dates (`yyyy-MM-dd`). */
  date: {
    cellClass: 'll-figure',
    filter: 'agTextColumnFilter',
    flex: 0,
    width: 112,
    minWidth: 112,
  },
};

/**
 * Columns share the grid's width (flex) down to their minWidth, below which the grid scrolls sideways; long headers
 * wrap onto a second line instead of being cut short.
 */
export const DEFAULT_COLUMN: ColDef = { flex: 1, minWidth: 90, sortable: true, filter: true, resizable: true, wrapHeaderText: true, autoHeaderHeight: true };

export type DataGridProps<Row> = {
  rows: Row[] | undefined;
  columns: ColDef<Row>[];
  getRowId?: GetRowIdFunc<Row>;
  /** File name for the CSV export button; without it the button is hidden. */
  csvFileName?: string;
  /** Shows a search box that filters across all columns. */
  quickSearch?: boolean;
  /** The grid's height; a number is a maximum: short tables shrink to their rows (at least three rows tall). */
  height?: number | string;
  loading?: boolean;
  emptyMessage?: string;
  toolbar?: ReactNode;
  onRowClicked?: (row: Row) => void;
  rowClass?: (row: Row) => string | undefined;
  onGridReady?: (api: GridApi<Row>) => void;
  ariaLabel?: string;
  /** With getRowId: the row shown as selected (a click selects too; null clears). Leave out for no selection. */
  selectedRowId?: string | null;
};

const SINGLE_ROW: RowSelectionOptions = { mode: 'singleRow', checkboxes: false, enableClickSelection: true };

/** AG Grid with Loadline's theme, flex columns, an optional quick search and a CSV export button. */
export function DataGrid<Row>({
  rows,
  columns,
  getRowId,
  csvFileName,
  quickSearch = false,
  height = 480,
  loading = false,
  emptyMessage = 'Nothing to show yet',
  toolbar,
  onRowClicked,
  rowClass,
  onGridReady,
  ariaLabel,
  selectedRowId,
}: DataGridProps<Row>) {
  const gridRef = useRef<AgGridReact<Row>>(null);
  const selectable = selectedRowId !== undefined;
  // Keep the grid's selection in step with the page's (rows reload, or the page selects a row itself).
  const syncSelection = useCallback(() => {
    const api = gridRef.current?.api;
    if (!api || !selectable || api.isDestroyed()) return;
    const node = selectedRowId ? api.getRowNode(selectedRowId) : undefined;
    if (node) {
      if (!node.isSelected()) node.setSelected(true, true);
    } else api.deselectAll();
  }, [selectable, selectedRowId]);
  useEffect(syncSelection, [syncSelection, rows]);
  const [search, setSearch] = useState('');
  // Hidden columns (`hide: true`, detail kept off screen for room) still go into the CSV.
  const exportCsv = useCallback(() => gridRef.current?.api.exportDataAsCsv({ fileName: csvFileName, allColumns: true }), [csvFileName]);
  const getRowClass = useMemo(() => (rowClass ? (params: RowClassParams<Row>) => (params.data ? rowClass(params.data) : undefined) : undefined), [rowClass]);
  const overlay = useMemo(() => `<span class="ll-grid-empty">${emptyMessage.replace(/[<>&]/g, '')}</span>`, [emptyMessage]);
  const showToolbar = quickSearch || csvFileName || toolbar;
  // Header 34 px (50 when a header wraps onto a second line) + rows of 32 px + borders and room for a horizontal
  // scrollbar (theme headerHeight, rowHeight).
  const boxHeight = typeof height === 'number' && rows ? Math.min(height, 52 + Math.max(rows.length, 3) * 32 + 16) : height;

  return (
    <div className="flex flex-col gap-2" aria-label={ariaLabel} role={ariaLabel ? 'region' : undefined}>
      {showToolbar ? (
        <div className="flex flex-wrap items-center gap-2">
          {quickSearch ? (
            <input
              type="search"
              aria-label="Search the table"
              placeholder="Search…"
              value={search}
              onChange={(event) => setSearch(event.target.value)}
              className="field-input max-w-64"
            />
          ) : null}
          <div className="flex flex-1 flex-wrap items-center gap-2">{toolbar}</div>
          {csvFileName ? (
            <Button size="sm" onClick={exportCsv} disabled={!rows?.length}>
              Export CSV
            </Button>
          ) : null}
        </div>
      ) : null}
      <div style={{ height: boxHeight }}>
        <AgGridReact<Row>
          ref={gridRef}
          theme={loadlineGridTheme}
          rowData={rows}
          columnDefs={columns}
          defaultColDef={DEFAULT_COLUMN}
          columnTypes={COLUMN_TYPES}
          getRowId={getRowId}
          quickFilterText={quickSearch ? search : undefined}
          loading={loading}
          overlayNoRowsTemplate={overlay}
          onRowClicked={onRowClicked ? (event: RowClickedEvent<Row>) => event.data && onRowClicked(event.data) : undefined}
          getRowClass={getRowClass}
          onGridReady={(event) => {
            syncSelection();
            onGridReady?.(event.api);
          }}
          onRowDataUpdated={syncSelection}
          rowSelection={selectable ? SINGLE_ROW : undefined}
          animateRows={false}
          enableCellTextSelection
          ensureDomOrder
        />
      </div>
    </div>
  );
}
