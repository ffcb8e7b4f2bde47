import { AppError } from '#server/lib/errors';

const listed = (serials: string[]) =>
  serials.slice(0, 5).join(', ') + (serials.length > 5 ? ` and ${serials.length - 5} more` : '');

export const qualityErrors = {
  unknownSerials: (serials: string[]) =>
    new AppError(
      422,
      'quality.unknown_serials',
      `No unit has the serial${serials.length > 1 ? 's' : ''} ${listed(serials)}. Nothing was changed.`,
      { serials },
    ),
  nothingFound: () =>
    new AppError(422, 'quality.nothing_found', 'The search finds no units, so there is nothing to hold.'),
  tooMany: (n: number, max: number) =>
    new AppError(
      422,
      'quality.too_many',
      `The search finds ${n} units; one bulk hold takes at most ${max}. Narrow the search and hold the parts one by one.`,
    ),
  notOnHold: (serials: string[]) =>
    new AppError(
      409,
      'quality.not_on_hold',
      `${listed(serials)} ${serials.length > 1 ? 'are' : 'is'} not on hold, so there is nothing to release. Nothing was changed.`,
      { serials },
    ),
  alreadyHeld: () => new AppError(409, 'units.hold_unchanged', 'The unit is already on hold.'),
  scrapped: (serials: string[]) =>
    new AppError(
      409,
      'quality.scrapped',
      `${listed(serials)} ${serials.length > 1 ? 'were' : 'was'} scrapped: a scrapped unit stays scrapped. Nothing was changed.`,
      { serials },
    ),
  noPassToUse: (serials: string[]) =>
    new AppError(
      409,
      'quality.no_pass_to_use',
      `"Use as is" needs a passing calibration to program, and ${listed(serials)} ${serials.length > 1 ? 'have' : 'has'} none. Choose rework or recalibrate. Nothing was changed.`,
      { serials },
    ),
  mayNotRelease: () =>
    new AppError(403, 'quality.may_not_release', 'Only quality staff and engineers may release a hold.'),
  measurementNotFound: (id: string) =>
    new AppError(404, 'quality.measurement_not_found', `No measurement "${id}".`),
  investigationNotFound: () => new AppError(404, 'quality.investigation_not_found', 'No such investigation.'),
  investigationClosed: (ref: string) =>
    new AppError(
      409,
      'quality.investigation_closed',
      `Investigation ${ref} is closed: it can no longer change.`,
    ),
  statusBackwards: (from: string, to: string) =>
    new AppError(
      409,
      'quality.status_order',
      `An investigation moves open → contained → closed; it cannot go from ${from} back to ${to}.`,
    ),
  attachmentTooLarge: (limitBytes: number) =>
    new AppError(
      413,
      'quality.attachment_too_large',
      `The file is larger than ${limitBytes / (1024 * 1024)} MB, the most one attachment may be. Nothing was stored.`,
    ),
  attachmentRefused: (fileName: string, found: string, allowed: string) =>
    new AppError(
      415,
      'quality.attachment_type_refused',
      `"${fileName}" cannot be attached: its contents are ${found}. Attach ${allowed}. Nothing was stored.`,
    ),
  attachmentMissingFile: () =>
    new AppError(400, 'quality.attachment_no_file', 'Choose a file to attach (the form field "file").'),
  attachmentNotFound: () =>
    new AppError(404, 'quality.attachment_not_found', 'No such attachment on this investigation.'),
  attachmentRemoved: () =>
    new AppError(410, 'quality.attachment_removed', 'This attachment was removed from the investigation.'),
  attachmentDamaged: () =>
    new AppError(
      502,
      'quality.attachment_damaged',
      'The stored file is missing or no longer matches the SHA-256 taken when it was attached, so it is not sent. Tell your administrator.',
    ),
  savedSearchNameTaken: (name: string) =>
    new AppError(
      409,
      'quality.saved_search_name_taken',
      `A saved search is already called "${name}". Choose another name, or delete that one first.`,
    ),
  savedSearchEmpty: () =>
    new AppError(
      422,
      'quality.saved_search_empty',
      'Choose at least one filter before saving: an empty search finds every unit.',
    ),
  savedSearchNotFound: () => new AppError(404, 'quality.saved_search_not_found', 'No such saved search.'),
  savedSearchNotYours: (by: string) =>
    new AppError(
      403,
      'quality.saved_search_not_yours',
      `Only ${by}, who saved this search, or an administrator may delete it.`,
    ),
};
