import { AppError } from '#server/lib/errors';

export const qualificationErrors = {
  /** 423 Locked: the station must be qualified before it calibrates production units. */
  locked: (kind: 'overdue' | 'failed', sentence: string) =>
    new AppError(423, kind === 'failed' ? 'qualification.failed' : 'qualification.overdue', sentence),
  referenceAtProduction: (serial: string) =>
    new AppError(
      409,
      'qualification.reference_unit',
      `Unit ${serial} is a reference unit: measure it as a qualification reading, not as production.`,
    ),
  notReference: (serial: string) =>
    new AppError(404, 'qualification.not_reference', `Unit ${serial} is not a reference unit of any model.`),
  referenceNotForStation: (serial: string, station: string) =>
    new AppError(
      422,
      'qualification.reference_not_for_station',
      `Reference unit ${serial} is of a model that station ${station} is not set up for.`,
    ),
  alreadyReference: (serial: string) =>
    new AppError(409, 'qualification.already_reference', `Unit ${serial} is already a reference unit.`),
  referenceNotFound: () =>
    new AppError(404, 'qualification.reference_not_found', 'There is no such reference unit.'),
  unitNotFound: (serial: string) =>
    new AppError(404, 'units.not_found', `Unit ${serial} is not registered: register it first.`),
  stationNotFound: () => new AppError(404, 'stations.not_found', 'There is no such station.'),
  notEnoughReadings: (have: number, want: number) =>
    new AppError(
      409,
      'qualification.not_enough_readings',
      `Only ${have} reading${have === 1 ? '' : 's'} of this unit at that station; ${want} were asked for. Measure it again first.`,
    ),
  readingNotOfUnit: () =>
    new AppError(
      422,
      'qualification.reading_not_of_unit',
      'Every chosen or left-out reading must be a reading of this reference unit at the chosen station.',
    ),
  referenceOfOtherStation: () =>
    new AppError(
      422,
      'qualification.reference_not_usable',
      'Every reference unit of a policy must be of a model the station is set up for, and not retired.',
    ),
  idConflict: (id: string) =>
    new AppError(
      409,
      'measurements.id_conflict',
      `Measurement id "${id}" cannot be used for this upload. Give every new measurement a new id (a random UUID).`,
    ),
  runNotFound: () =>
    new AppError(404, 'qualification.run_not_found', 'There is no such qualification reading.'),
};

/** The refusals of gauge studies (their codes are `gauge_studies.*`). */
export const studyErrors = {
  notFound: () => new AppError(404, 'gauge_studies.not_found', 'There is no such gauge study.'),
  finished: () =>
    new AppError(409, 'gauge_studies.finished', 'This gauge study is finished: it takes no more readings.'),
  notAppraiser: (station: string) =>
    new AppError(
      409,
      'gauge_studies.not_appraiser',
      `Station ${station} (or the operator signed in at it) is not an appraiser of this study.`,
    ),
  notPart: (serial: string) =>
    new AppError(422, 'gauge_studies.not_part', `Unit ${serial} is not one of this study's parts.`),
  trialDone: (serial: string, trial: number) =>
    new AppError(
      409,
      'gauge_studies.trial_done',
      `Trial ${trial} of part ${serial} is already measured. To measure it again (a spoiled trial), give the trial and a reason.`,
    ),
  allTrialsDone: (serial: string) =>
    new AppError(
      409,
      'gauge_studies.all_trials_done',
      `Every trial of part ${serial} is measured. To repeat a spoiled one, give the trial and a reason.`,
    ),
  badDesign: (message: string) => new AppError(422, 'gauge_studies.bad_design', message),
};
