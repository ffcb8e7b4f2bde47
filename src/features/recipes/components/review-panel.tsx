import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import {
  approveSchema,
  discardDraftSchema,
  sendBackSchema,
  submitDraftSchema,
  type RecipeVersionView,
} from '#shared/schemas/recipes';
import { Alert } from '#src/components/ui/alert';
import { Button } from '#src/components/ui/button';
import { TextAreaField } from '#src/components/ui/field';
import { Panel } from '#src/components/ui/panel';
import { showServerErrorOn } from '#src/lib/form-errors';
import { useApprove, useDiscardDraft, useRecipeSettings, useSendBack, useSubmitDraft } from '../api/recipes';

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

const submitFields = submitDraftSchema.pick({ reason: true });
const discardFields = discardDraftSchema.pick({ reason: true });
/** Approving or sending back: the comment is checked by the schema of the chosen decision. */
const decisionSchema = z.discriminatedUnion('decision', [
  approveSchema.extend({ decision: z.literal('approve') }),
  sendBackSchema.extend({ decision: z.literal('send-back') }),
]);

function SubmitForm({ version, unsaved }: { version: RecipeVersionView; unsaved: boolean }) {
  const submit = useSubmitDraft(version.id);
  const form = useForm<{ reason: string }>({
    resolver: zodResolver(submitFields),
    defaultValues: { reason: '' },
  });
  const go = form.handleSubmit(async ({ reason }) => {
    try {
      await submit.mutateAsync({ reason, revision: version.revision });
    } catch (e) {
      showServerErrorOn(e, form.setError, 'reason');
    }
  });
  return (
    <Panel title="Submit for review" titleId="submit-title">
      <form className="flex max-w-2xl flex-col gap-4" onSubmit={go} noValidate>
        <TextAreaField
          label="Reason for the change"
          required
          hint="The reviewer and the audit log see this. Say what changes and why."
          error={form.formState.errors.reason?.message}
          {...form.register('reason')}
        />
        <div className="flex flex-wrap items-center gap-3">
          <Button type="submit" variant="primary" busy={submit.isPending} disabled={unsaved}>
            Submit for review
          </Button>
          {unsaved ? <span className="text-warn-bright">Save your changes first.</span> : null}
        </div>
      </form>
    </Panel>
  );
}

function DecideForm({ version, meId }: { version: RecipeVersionView; meId: string }) {
  const settings = useRecipeSettings();
  const approve = useApprove(version.id);
  const sendBack = useSendBack(version.id);
  const form = useForm<z.input<typeof decisionSchema>, unknown, z.output<typeof decisionSchema>>({
    resolver: zodResolver(decisionSchema),
    defaultValues: { decision: 'approve', comment: '' },
  });
  const isAuthor = version.createdBy?.id === meId || version.submittedBy?.id === meId;
  const mayDecide = !isAuthor || settings.data?.singlePersonRelease === true;
  const decide = form.handleSubmit(async (d) => {
    try {
      if (d.decision === 'approve') await approve.mutateAsync({ comment: d.comment || undefined });
      else await sendBack.mutateAsync({ comment: d.comment });
    } catch (e) {
      showServerErrorOn(e, form.setError, 'comment');
    }
  });
  const run = (decision: 'approve' | 'send-back') => {
    form.setValue('decision', decision);
    void decide();
  };
  return (
    <Panel title="Your decision" titleId="decide-title">
      {!mayDecide ? (
        <Alert tone="info" title="Waiting for a second engineer">
          You wrote or submitted this version. Another process engineer must approve it or send it back.
        </Alert>
      ) : (
        <form className="flex max-w-2xl flex-col gap-4" onSubmit={(e) => e.preventDefault()} noValidate>
          <p className="text-graphite-200">
            Approving releases version {version.version} at once: every measurement that arrives afterwards is
            judged by it, and the version in force now is retired for new measurements.
          </p>
          <TextAreaField
            label="Comment"
            hint="Required when sending back; optional when approving."
            error={form.formState.errors.comment?.message}
            {...form.register('comment')}
          />
          <div className="flex flex-wrap gap-3">
            <Button variant="primary" busy={approve.isPending} onClick={() => run('approve')}>
              Approve and release
            </Button>
            <Button busy={sendBack.isPending} onClick={() => run('send-back')}>
              Send back to draft
            </Button>
          </div>
        </form>
      )}
    </Panel>
  );
}

/**
 * Any engineer (the author or another) may discard a draft that is not going anywhere. The record stays,
 * with who, when and why; it leaves the model's list of versions.
 */
export function DiscardPanel({
  version,
  onDiscarded,
}: {
  version: RecipeVersionView;
  onDiscarded: () => void;
}) {
  const discard = useDiscardDraft(version.id);
  const form = useForm<{ reason: string }>({
    resolver: zodResolver(discardFields),
    defaultValues: { reason: '' },
  });
  const go = form.handleSubmit(async ({ reason }) => {
    try {
      await discard.mutateAsync({ reason, revision: version.revision });
      onDiscarded();
    } catch (e) {
      showServerErrorOn(e, form.setError, 'reason');
    }
  });
  return (
    <Panel title="Discard this draft" titleId="discard-title">
      <form className="flex max-w-2xl flex-col gap-4" onSubmit={go} noValidate>
        <p className="text-graphite-200">
          Discarding keeps the draft on record (who, when and why, in the audit log) but takes it off the list
          of versions. It can no longer be edited or submitted; copy it into a new draft to start again.
        </p>
        <TextAreaField
          label="Reason for discarding"
          required
          error={form.formState.errors.reason?.message}
          {...form.register('reason')}
        />
        <div>
          <Button type="submit" busy={discard.isPending}>
            Discard draft {version.version}
          </Button>
        </div>
      </form>
    </Panel>
  );
}
