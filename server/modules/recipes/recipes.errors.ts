import { AppError } from '#server/lib/errors';

export const recipeErrors = {
  modelNotFound: () => new AppError(404, 'recipes.model_not_found', 'No such model.'),
  notFound: () => new AppError(404, 'recipes.not_found', 'No such recipe version.'),
  runNotFound: () => new AppError(404, 'recipes.what_if_not_found', 'No such what-if run.'),
  codeTaken: (code: string) =>
    new AppError(409, 'recipes.model_code_taken', `A model with code "${code}" already exists.`),
  polePairsLocked: (code: string, built: number) =>
    new AppError(
      409,
      'recipes.pole_pairs_locked',
      `Model ${code} already has ${built} units built: its pole pairs cannot change. Create a new model instead.`,
    ),
  otherModel: () =>
    new AppError(
      400,
      'recipes.other_model',
      'That version belongs to another model: copy a version of this model.',
    ),
  notADraft: (version: number, status: string) =>
    new AppError(
      409,
      'recipes.not_a_draft',
      `Version ${version} is ${status}: only a draft can be changed. Copy it into a new draft instead.`,
    ),
  notInReview: (version: number, status: string) =>
    new AppError(409, 'recipes.not_in_review', `Version ${version} is ${status}, not waiting for review.`),
  changedMeanwhile: (version: number, by: string, at: Date, revision: number) =>
    new AppError(
      409,
      'recipes.changed_meanwhile',
      `Version ${version} was changed by ${by} at ${at.toISOString().slice(0, 16).replace('T', ' ')} UTC while you were editing. Reload it, apply your changes again and save.`,
      { changedBy: by, changedAt: at.toISOString(), revision },
    ),
  polePairsMismatch: (model: number) =>
    new AppError(400, 'request.invalid', `The recipe's pole pairs must be ${model}, as the model's.`, {
      issues: [{ path: 'body.polePairs', message: `Must be ${model}, the model's pole pairs.` }],
    }),
  ownDraft: () =>
    new AppError(
      403,
      'recipes.own_draft',
      'You wrote or submitted this draft: a second engineer must approve it (two-person release).',
    ),
  noRunnableVersion: () =>
    new AppError(409, 'recipes.no_version_in_force', 'The model has no version in force to compare against.'),
  runFinished: (status: string) =>
    new AppError(409, 'recipes.what_if_finished', `This what-if run is already ${status}.`),
};
