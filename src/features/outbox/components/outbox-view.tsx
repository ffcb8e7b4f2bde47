import { useState } from 'react';
import { Alert, Loading } from '#src/components/ui/alert';
import { formatDateTime, formatRelative } from '#src/lib/format';
import { useOutbox } from '../api/outbox';
import { LinkifiedText } from './linkified-text';

/** The local mail server's inbox: newest first on the left, the chosen message on the right. */
export function OutboxView() {
  const outbox = useOutbox();
  const [selectedId, setSelectedId] = useState<string | null>(null);

  if (outbox.isPending) return <Loading label="Fetching sent mail…" />;
  if (outbox.isError)
    return (
      <Alert tone="fault" title="The outbox could not be read">
        {outbox.error.message}
      </Alert>
    );

  const messages = [...outbox.data].sort((a, b) => b.receivedAt.localeCompare(a.receivedAt));
  if (messages.length === 0) {
    return (
      <Alert tone="info" title="No mail yet">
        Invitations and password links appear here as soon as Phasewright sends them.
      </Alert>
    );
  }
  const selected = messages.find((m) => m.id === selectedId) ?? messages[0];

  return (
    <div className="grid gap-6 lg:grid-cols-[minmax(18rem,2fr)_3fr]">
      <nav aria-label="Sent messages" className="flex flex-col">
        <p className="mb-2 text-sm tracking-wider text-graphite-400 uppercase" aria-live="polite">
          {messages.length} {messages.length === 1 ? 'message' : 'messages'}
        </p>
        <ul className="flex flex-col gap-2" data-testid="outbox-list">
          {messages.map((message) => {
            const active = message.id === selected.id;
            return (
              <li key={message.id}>
                <button
                  type="button"
                  aria-current={active ? 'true' : undefined}
                  onClick={() => setSelectedId(message.id)}
                  className={`flex w-full flex-col gap-1 border-l-4 px-4 py-3 text-left ${
                    active
                      ? 'border-copper-400 bg-graphite-800'
                      : 'border-graphite-700 bg-graphite-900 hover:border-graphite-500 hover:bg-graphite-850'
                  }`}
                >
                  <span className="font-semibold text-graphite-50">{message.subject || '(no subject)'}</span>
                  <span className="text-sm text-graphite-300">To {message.to.join(', ')}</span>
                  <span className="text-sm text-graphite-400">{formatRelative(message.receivedAt)}</span>
                </button>
              </li>
            );
          })}
        </ul>
      </nav>
      <article className="chamfer chamfer-lg p-6" aria-labelledby="outbox-subject">
        <h2 id="outbox-subject" className="mb-4 text-2xl font-semibold text-graphite-50">
          {selected.subject || '(no subject)'}
        </h2>
        <dl className="mb-5 grid grid-cols-[auto_1fr] gap-x-5 gap-y-1 border-b border-graphite-700 pb-4">
          <dt className="text-graphite-400">From</dt>
          <dd>{selected.from}</dd>
          <dt className="text-graphite-400">To</dt>
          <dd>{selected.to.join(', ')}</dd>
          <dt className="text-graphite-400">Received</dt>
          <dd>{formatDateTime(selected.receivedAt)}</dd>
        </dl>
        <div
          className="text-lg leading-relaxed whitespace-pre-wrap text-graphite-100"
          data-testid="outbox-body"
        >
          <LinkifiedText text={selected.text} />
        </div>
      </article>
    </div>
  );
}
