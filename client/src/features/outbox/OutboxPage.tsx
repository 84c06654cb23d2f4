import { useMemo, useState, type ReactNode } from 'react';
import type { ColDef } from 'ag-grid-community';
import type { OutboxMessageView } from '@shared/schemas/outbox';
import { PageHeader } from '../../components/PageHeader';
import { Card } from '../../components/Card';
import { ErrorAlert } from '../../components/Alert';
import { DataGrid } from '../../components/DataGrid';
import { Pager } from '../../components/Pager';
import { formatCount, formatDateTime, formatDateTimeSeconds } from '../../lib/format';
import { useOutbox, useOutboxMessage } from './api';

const PAGE_SIZE = 50;

export default function OutboxPage() {
  const [to, setTo] = useState('');
  const [page, setPage] = useState(1);
  const [selectedId, setSelectedId] = useState<number | null>(null);
  const outbox = useOutbox({ to: to.trim() || undefined, page, pageSize: PAGE_SIZE });
  const total = outbox.data?.total ?? 0;

  const columns = useMemo<ColDef<OutboxMessageView>[]>(
    () => [
      { field: 'receivedAt', headerName: 'Received', type: 'timestamp', valueFormatter: (p) => formatDateTime(p.value) },
      { field: 'to', headerName: 'To', minWidth: 180 },
      { field: 'subject', headerName: 'Subject', flex: 1.6, minWidth: 200 },
    ],
    [],
  );

  return (
    <div>
      <PageHeader
        title="Outbox"
        description="Mail that Loadline sent (invitations, password resets), as the mail service received it. Use it to follow an invitation end to end or to check what a colleague was sent."
      />
      {outbox.isError ? <ErrorAlert error={outbox.error} title="The outbox could not be loaded" /> : null}
      <div className="flex flex-col gap-4 xl:flex-row xl:items-start">
        <div className="min-w-0 xl:w-[46%]">
          <DataGrid<OutboxMessageView>
            ariaLabel="Messages"
            rows={outbox.data?.items}
            columns={columns}
            loading={outbox.isPending}
            getRowId={(p) => String(p.data.id)}
            onRowClicked={(message) => setSelectedId(message.id)}
            selectedRowId={selectedId === null ? null : String(selectedId)}
            emptyMessage="No mail received yet"
            height={600}
            toolbar={
              <div className="flex w-full flex-wrap items-center justify-between gap-2">
                <input
                  type="search"
                  aria-label="Recipient contains"
                  placeholder="Recipient contains…"
                  className="field-input max-w-60"
                  value={to}
                  onChange={(event) => {
                    setTo(event.target.value);
                    setPage(1);
                  }}
                />
                <span className="flex items-center gap-3 text-xs text-ink-soft">
                  <span>
                    <span className="font-mono tabular-nums">{formatCount(total)}</span> {total === 1 ? 'message' : 'messages'}
                  </span>
                  <Pager page={page} total={total} pageSize={PAGE_SIZE} onPage={setPage} />
                </span>
              </div>
            }
          />
        </div>
        <div className="min-w-0 flex-1">
          <Reader id={selectedId} />
        </div>
      </div>
    </div>
  );
}

function Reader({ id }: { id: number | null }) {
  const message = useOutboxMessage(id);
  if (id === null)
    return (
      <Card>
        <p className="py-10 text-center text-sm text-ink-faint">Select a message to read it.</p>
      </Card>
    );
  if (message.isError) return <ErrorAlert error={message.error} title="The message could not be loaded" />;
  if (!message.data)
    return (
      <Card>
        <p className="text-sm text-ink-faint">Loading…</p>
      </Card>
    );
  const mail = message.data;
  return (
    <Card title={mail.subject} padded={false}>
      <article aria-label="Message">
        <dl className="grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 border-b border-line px-4 py-3 text-sm">
          <dt className="text-ink-soft">From</dt>
          <dd>{mail.from}</dd>
          <dt className="text-ink-soft">To</dt>
          <dd>{mail.to}</dd>
          <dt className="text-ink-soft">Received</dt>
          <dd className="font-mono text-xs leading-5 tabular-nums">{formatDateTimeSeconds(mail.receivedAt)}</dd>
        </dl>
        {/* The plain-text part only: mail HTML is untrusted and never rendered into the console. */}
        <div className="px-4 py-3 text-sm leading-relaxed break-words whitespace-pre-wrap">{linkify(mail.text)}</div>
      </article>
    </Card>
  );
}

/** Turns http(s) addresses in plain text into links, so an invitation can be followed from here. */
function linkify(text: string): ReactNode[] {
  return text.split(/(https?:\/\/[^\s<>"]+)/g).map((part, index) =>
    index % 2 === 1 ? (
      <a key={index} href={part} className="text-accent underline break-all" rel="noreferrer noopener">
        {part}
      </a>
    ) : (
      part
    ),
  );
}
