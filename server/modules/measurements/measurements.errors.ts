import { AppError } from '#server/lib/errors';

export const measurementErrors = {
  // One answer for every reuse of an id that is not a repeat of this station's own upload: it says
  // neither whose the id is nor what it holds (see the decision log, "measurement ids").
  idConflict: (id: string) =>
    new AppError(
      409,
      'measurements.id_conflict',
      `Measurement id "${id}" cannot be used for this upload. Give every new measurement a new id (a random UUID).`,
    ),
  unknownSerial: (serial: string) =>
    new AppError(
      422,
      'units.unknown_serial',
      `Serial "${serial}" is not registered and this station builds more than one model: register it at the station screen first.`,
    ),
  modelNotAllowed: (serial: string, model: string, station: string) =>
    new AppError(
      422,
      'stations.model_not_allowed',
      `Unit ${serial} is a ${model}; station ${station} is not set up for that model.`,
    ),
  onHold: (serial: string, reason: string | null) =>
    new AppError(
      409,
      'units.on_hold',
      `Unit ${serial} is on hold${reason ? ` (${reason})` : ''}: it must not be measured until quality releases it.`,
    ),
  scrapped: (serial: string) =>
    new AppError(
      409,
      'units.scrapped',
      `Unit ${serial} was scrapped by quality: it must not be measured, programmed or shipped.`,
    ),
  noActiveRecipe: (model: string) =>
    new AppError(
      409,
      'recipes.none_active',
      `Model ${model} has no released recipe: an engineer must release one first.`,
    ),
  unusable: (issues: { path: string; message: string }[]) =>
    new AppError(
      400,
      'measurements.unusable',
      `The measurement cannot be used: ${issues[0]?.path}: ${issues[0]?.message}`,
      {
        issues,
      },
    ),
  notFoundAnywhere: (id: string) => new AppError(404, 'measurements.not_found', `No measurement "${id}".`),
  recipeNotUsable: (why: string) =>
    new AppError(
      422,
      'recipes.not_usable',
      `That recipe version cannot be used for this measurement: ${why}.`,
    ),
  notFound: (id: string) =>
    new AppError(404, 'measurements.not_found', `No measurement "${id}" from this station.`),
  captureNoFile: () =>
    new AppError(400, 'captures.no_file', 'Attach the CSV as the form field "capture".'),
};
