import { RECIPE_STATUS_LABELS, type RecipeStatus } from '#shared/schemas/recipes';
import { StatusChip, type Tone } from '#src/components/ui/status-chip';

const TONES: Record<RecipeStatus, Tone> = {
  draft: 'neutral',
  in_review: 'warn',
  released: 'ok',
  retired: 'neutral',
  discarded: 'neutral',
};

/** A version's state in words and shape: in force (circle), in review (triangle), draft, retired and discarded (dash). */
export function RecipeStatusChip({ status }: { status: RecipeStatus }) {
  return <StatusChip tone={TONES[status]}>{RECIPE_STATUS_LABELS[status]}</StatusChip>;
}
