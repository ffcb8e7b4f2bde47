import { AppError } from '../../lib/errors';

export const analysisErrors = {
  unknownModel: () =>
    new AppError(404, 'analysis.unknown_model', 'There is no such model. Choose one from the list.'),
  tooFewForChart: (n: number, needed: number) =>
    new AppError(
      422,
      'analysis.too_few_points',
      `The filter selects ${n} calibration${n === 1 ? '' : 's'}; this chart needs at least ${needed}. Widen the filter.`,
    ),
  emptyBaseline: () =>
    new AppError(
      422,
      'analysis.empty_baseline',
      'The baseline window holds too few calibrations to compute limits. Choose a longer window.',
    ),
};
