import { AppError } from '#server/lib/errors';

export const alertErrors = {
  notFound: () => new AppError(404, 'alerts.not_found', 'There is no such alert.'),
  notOpen: () => new AppError(409, 'alerts.not_open', 'This alert has already been acknowledged.'),
  unknownStation: () => new AppError(404, 'alerts.unknown_station', 'There is no such station.'),
  unknownModel: () => new AppError(404, 'alerts.unknown_model', 'There is no such model.'),
};
