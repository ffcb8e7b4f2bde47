import { AppError } from '#server/lib/errors';

/** Refusals about a measurement's calibration (codes are stable: stations key on them). */
export const calibrationErrors = {
  notComputed: (measurementId: string) =>
    new AppError(
      409,
      'measurements.not_computed',
      `Measurement "${measurementId}" has no result yet; confirm programming after the result.`,
    ),
  unusableResult: (measurementId: string) =>
    new AppError(
      409,
      'measurements.unusable_result',
      `Measurement "${measurementId}" could not be used, so there is nothing to program.`,
    ),
};
