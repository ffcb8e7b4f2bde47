import { AppError } from '#server/lib/errors';

export const stationErrors = {
  notFound: () => new AppError(404, 'stations.not_found', 'No such station.'),
  keyNotFound: () => new AppError(404, 'stations.key_not_found', 'No such key for this station.'),
  nameTaken: (n: string) =>
    new AppError(409, 'stations.name_taken', `A station named "${n}" already exists.`),
  keyInvalid: () =>
    new AppError(
      401,
      'station.key_invalid',
      'The station key is not valid or was revoked. Ask an administrator for a new key.',
    ),
  unknownModels: () =>
    new AppError(400, 'stations.unknown_model', 'One of the allowed models does not exist.'),
};
