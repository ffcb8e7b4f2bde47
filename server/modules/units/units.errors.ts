import { AppError } from '#server/lib/errors';

export const unitErrors = {
  notFound: (serial: string) =>
    new AppError(
      404,
      'units.not_found',
      `No unit with serial "${serial}". Register it against a model first.`,
    ),
  exists: (serial: string) =>
    new AppError(409, 'units.exists', `A unit with serial "${serial}" already exists.`),
  unknownModel: () => new AppError(400, 'units.unknown_model', 'No such model.'),
  importColumns: (missing: string[], expected: readonly string[]) =>
    new AppError(
      400,
      'units.import_columns',
      `The CSV lacks the column${missing.length > 1 ? 's' : ''} ${missing.join(', ')}. Expected: ${expected.join(', ')}.`,
    ),
  importNoFile: () => new AppError(400, 'units.import_no_file', 'Attach the CSV as the form field "file".'),
};
