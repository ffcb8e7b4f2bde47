import { AppError } from '#server/lib/errors';

export const analysisErrors = {
  unknownModel: () =>
    new AppError(404, 'analysis.unknown_model', 'There is no such model. Choose one from the list.'),
  tooFewForChart: (n: number, needed: number) =>
    new AppError(
      422,
      'analysis.too_few_points',
      `The filter selects ${n} calibration${n === 1 ? '' : 's'}; this chart needs at least ${needed}. Widen the filter.`,
    ),
  tooFewPeriods: (n: number, by: 'hour' | 'shift') =>
    new AppError(
      422,
      'analysis.too_few_periods',
      `The filter selects ${n} ${by === 'hour' ? 'hour' : 'shift'}${n === 1 ? '' : 's'} with two or more units; subgroups by ${by} need at least 2. Widen the time range.`,
    ),
  emptyBaseline: () =>
    new AppError(
      422,
      'analysis.empty_baseline',
      'The baseline window holds too few calibrations to compute limits. Choose a longer window.',
    ),
};

export const limitErrors = {
  oneStation: () =>
    new AppError(
      422,
      'analysis.limits_one_station',
      'Frozen limits belong to one station or to the whole model: choose one station in the filter, or none.',
    ),
  unknownStation: () => new AppError(404, 'analysis.unknown_station', 'There is no such station.'),
  nothingToClear: () => new AppError(409, 'analysis.no_limits', 'There are no frozen limits here to clear.'),
};
