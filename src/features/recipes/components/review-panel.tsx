import { useState } from 'react';
import type { RecipeVersionView } from '#shared/schemas/recipes';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextAreaField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { isApiError } from '#src/lib/api-client';
import { useApprove, useDiscardDraft, useRecipeSettings, useSendBack, useSubmitDraft } from '../api/recipes';

const messageOf = (e: unknown) => (isApiError(e) ? e.message : 'Something went wrong. Try again.');

/**
 * The controlled-change steps: the author submits a saved draft with a reason; a second engineer
 * approves (it goes in force at once) or sends it back with a comment.
 */
export function ReviewPanel({
  version,
  meId,
  canChange,
  unsaved,
}: {
  version: RecipeVersionView;
  meId: string;
  canChange: boolean;
  unsaved: boolean;
}) {
  if (!canChange) {
    return (
      <Panel title="Review">
        <p className="text-graphite-300">
          Only process engineers submit, approve or send back recipe versions.
        </p>
      </Panel>
    );
  }
  if (version.status === 'draft') return <SubmitForm version={version} unsaved={unsaved} />;
  if (version.status === 'in_review') return <DecideForm version={version} meId={meId} />;
  return null;
}

function SubmitForm({ version, unsaved }: { version: RecipeVersionView; unsaved: boolean }) {
  const submit = useSubmitDraft(version.id);
  const [reason, setReason] = useState('');
  const [error, setError] = useState<string | null>(null);
  const go = async () => {
    setError(null);
    if (reason.trim().length < 3) return setError('Give the reason for this change (at least 3 characters).');
    try {
      await submit.mutateAsync({ reason: reason.trim(), revision: version.revision });
    } catch (e) {
      setError(messageOf(e));
    }
  };
  return (
    <Panel title="Submit for review" titleId="submit-title">
      <div className="flex max-w-2xl flex-col gap-4">
        <TextAreaField
          label="Reason for the change"
          required
          hint="The reviewer and the audit log see this. Say what changes and why."
          value={reason}
          error={error ?? undefined}
          onChange={(e) => setReason(e.target.value)}
        />
        <div className="flex flex-wrap items-center gap-3">
          <Button variant="primary" busy={submit.isPending} disabled={unsaved} onClick={() => void go()}>
            Submit for review
          </Button>
          {unsaved ? <span className="text-warn-bright">Save your changes first.</span> : null}
        </div>
      </div>
    </Panel>
  );
}

function DecideForm({ version, meId }: { version: RecipeVersionView; meId: string }) {
  const settings = useRecipeSettings();
  const approve = useApprove(version.id);
  const sendBack = useSendBack(version.id);
  const [comment, setComment] = useState('');
  const [error, setError] = useState<string | null>(null);
  const isAuthor = version.createdBy?.id === meId || version.submittedBy?.id === meId;
  const mayDecide = !isAuthor || settings.data?.singlePersonRelease === true;
  const run = async (what: 'approve' | 'send-back') => {
    setError(null);
    if (what === 'send-back' && comment.trim().length < 3)
      return setError('Tell the author what to change (at least 3 characters).');
    try {
      if (what === 'approve') await approve.mutateAsync({ comment: comment.trim() || undefined });
      else await sendBack.mutateAsync({ comment: comment.trim() });
    } catch (e) {
      setError(messageOf(e));
    }
  };
  return (
    <Panel title="Your decision" titleId="decide-title">
      {!mayDecide ? (
        <Alert tone="info" title="Waiting for a second engineer">
          You wrote or submitted this version. Another process engineer must approve it or send it back.
        </Alert>
      ) : (
        <div className="flex max-w-2xl flex-col gap-4">
          <p className="text-graphite-200">
            Approving releases version {version.version} at once: every measurement that arrives afterwards is
            judged by it, and the version in force now is retired for new measurements.
          </p>
          <TextAreaField
            label="Comment"
            hint="Required when sending back; optional when approving."
            value={comment}
            error={error ?? undefined}
            onChange={(e) => setComment(e.target.value)}
          />
          <div className="flex flex-wrap gap-3">
            <Button variant="primary" busy={approve.isPending} onClick={() => void run('approve')}>
              Approve and release
            </Button>
            <Button busy={sendBack.isPending} onClick={() => void run('send-back')}>
              Send back to draft
            </Button>
          </div>
        </div>
      )}
    </Panel>
  );
}

/**
 * Any engineer (the author or another) may discard a draft that is not going anywhere. The record stays,
 * with who, when and why; it leaves the model's list of versions.
 */
export function DiscardPanel({ version, onDiscarded }: { version: RecipeVersionView; onDiscarded: () => void }) {
  const discard = useDiscardDraft(version.id);
  const [reason, setReason] = useState('');
  const [error, setError] = useState<string | null>(null);
  const go = async () => {
    setError(null);
    if (reason.trim().length < 3) return setError('Say why this draft is discarded (at least 3 characters).');
    try {
      await discard.mutateAsync({ reason: reason.trim(), revision: version.revision });
      onDiscarded();
    } catch (e) {
      setError(messageOf(e));
    }
  };
  return (
    <Panel title="Discard this draft" titleId="discard-title">
      <div className="flex max-w-2xl flex-col gap-4">
        <p className="text-graphite-200">
          Discarding keeps the draft on record (who, when and why, in the audit log) but takes it off the list
          of versions. It can no longer be edited or submitted; copy it into a new draft to start again.
        </p>
        <TextAreaField
          label="Reason for discarding"
          required
          value={reason}
          error={error ?? undefined}
          onChange={(e) => setReason(e.target.value)}
        />
        <div>
          <Button busy={discard.isPending} onClick={() => void go()}>
            Discard draft {version.version}
          </Button>
        </div>
      </div>
    </Panel>
  );
}
