import { useMemo, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import type { ColDef } from 'ag-grid-community';
import type { AssetListSummary } from '@shared/schemas/assetLists';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { Button } from '../../components/Button';
import { Alert, ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { formatDateTime } from '../../lib/format';
import { useCurrentUser } from '../../app/currentUser';
import { useAssetLists } from './api';
import { AssetListPanel } from './AssetListPanel';
import { NewAssetListForm } from './NewAssetListForm';

/** Saved asset lists: browse them, open one to see its assets, create (analysts, admins) and delete (owner, admin). */
export default function AssetListsPage() {
  const user = useCurrentUser();
  const canCreate = user.role === 'analyst' || user.role === 'admin';
  const lists = useAssetLists();
  const [params, setParams] = useSearchParams();
  const [formOpen, setFormOpen] = useState(false);
  const [notice, setNotice] = useState<string | null>(null);
  // The open list lives in the address (?list=ID), so it can be linked to and survives a reload.
  const selectedId = Number(params.get('list')) || null;
  const selected = lists.data?.find((l) => l.id === selectedId) ?? null;
  const select = (id: number | null) => setParams(id === null ? {} : { list: String(id) }, { replace: true });

  const columns = useMemo<ColDef<AssetListSummary>[]>(
    () => [
      { field: 'name', headerName: 'List', flex: 2, minWidth: 200, cellClass: 'font-medium' },
      { headerName: 'Owner', colId: 'owner', valueGetter: (p) => p.data?.owner.name, minWidth: 140 },
      { field: 'size', headerName: 'Assets', type: 'figure', maxWidth: 110 },
      { field: 'description', headerName: 'Description', flex: 2, minWidth: 160, valueFormatter: (p) => p.value || '—' },
      { field: 'createdAt', headerName: 'Created', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value) },
    ],
    [],
  );

  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Asset lists"
        description={
          canCreate
            ? 'Named lists of assets a fit can use as its universe. Select a list to see its assets in order; save a new list from pasted symbols. Lists are never edited, so a fit over one uses exactly the assets shown.'
            : 'Named lists of assets the analysts fit models over. Select a list to see its assets in order and the fits that used it.'
        }
        actions={
          canCreate ? (
            <Button
              variant="primary"
              onClick={() => {
                setFormOpen((open) => !open);
                setNotice(null);
              }}
            >
              {formOpen ? 'Close the form' : 'New list'}
            </Button>
          ) : null
        }
      />
      {formOpen && canCreate ? (
        <Card title="New list">
          <NewAssetListForm
            onSaved={(saved) => {
              setFormOpen(false);
              setNotice(`Saved “${saved.name}” with ${saved.size} assets.`);
              select(saved.id);
            }}
            onCancel={() => setFormOpen(false)}
          />
        </Card>
      ) : null}
      {notice ? <Alert tone="ok">{notice}</Alert> : null}
      <ErrorAlert error={lists.error} title="The asset lists could not be loaded" />
      <DataGrid<AssetListSummary>
        ariaLabel="Asset lists"
        rows={lists.data}
        columns={columns}
        loading={lists.isPending}
        getRowId={(p) => String(p.data.id)}
        onRowClicked={(list) => {
          select(list.id);
          setNotice(null);
        }}
        selectedRowId={selectedId === null ? null : String(selectedId)}
        quickSearch
        csvFileName="asset-lists.csv"
        height={360}
        emptyMessage="No saved lists yet"
        toolbar={<span className="text-xs text-ink-faint">Select a row to see the list’s assets.</span>}
      />
      {selected ? (
        <AssetListPanel
          key={selected.id}
          summary={selected}
          onClose={() => select(null)}
          onDeleted={(name) => {
            select(null);
            setNotice(`Deleted “${name}”.`);
          }}
        />
      ) : selectedId !== null && lists.data ? (
        <Alert tone="warn" title={`No asset list ${selectedId}`}>
          It may have been deleted. Choose another list above.
        </Alert>
      ) : null}
    </div>
  );
}
