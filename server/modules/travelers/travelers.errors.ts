import { AppError } from '#server/lib/errors';

export const travelerErrors = {
  none: (serial: string) =>
    new AppError(
      404,
      'travelers.none',
      `Unit ${serial} has no traveler yet: it appears once a calibration has a verdict.`,
    ),
  notFound: () => new AppError(404, 'travelers.not_found', 'No such traveler document for this unit.'),
  notPrintable: () =>
    new AppError(
      409,
      'travelers.not_printable',
      'This calibration could not use its data, so it has no traveler.',
    ),
};
