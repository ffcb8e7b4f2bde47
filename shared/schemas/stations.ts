import { z } from 'zod';

/** Stations: the calibration rigs, the models each may measure, their keys and their health. */

export const stationViewSchema = z.object({
  id: z.string(),
  name: z.string(),
  line: z.string(),
  allowedModels: z.array(z.object({ id: z.string(), code: z.string() })),
  lastSeenAt: z.string().nullable(),
  attendedBy: z.object({ id: z.string(), displayName: z.string() }).nullable(),
  keys: z.array(
    z.object({
      id: z.string(),
      label: z.string(),
      prefix: z.string(),
      createdAt: z.string(),
      lastUsedAt: z.string().nullable(),
      revokedAt: z.string().nullable(),
    }),
  ),
});
export type StationView = z.infer<typeof stationViewSchema>;

export const createStationSchema = z.object({
  name: z.string().trim().min(2).max(40),
  line: z.string().trim().min(1).max(40),
  allowedModelIds: z.array(z.string().uuid()).min(1, 'Allow at least one model'),
});
export type CreateStation = z.infer<typeof createStationSchema>;
export const updateStationSchema = createStationSchema.partial();
export const createStationKeySchema = z.object({
  label: z.string().trim().min(2, 'Give the key a label (2 to 60 characters), e.g. the station PC.').max(60),
});
export type CreateStationKey = z.infer<typeof createStationKeySchema>;
export const stationKeyCreatedSchema = z.object({
  id: z.string(),
  label: z.string(),
  prefix: z.string(),
  /** The key itself, shown this once; only its hash is kept. */
  key: z.string(),
});
export type StationKeyCreated = z.infer<typeof stationKeyCreatedSchema>;

/** Station health for the operator screen. */
export const stationHealthSchema = z.object({
  stationId: z.string(),
  lastSeenAt: z.string().nullable(),
  secondsSinceSeen: z.number().nullable(),
  online: z.boolean(),
  queue: z.object({ waiting: z.number().int(), active: z.number().int(), failed: z.number().int() }),
});
export type StationHealth = z.infer<typeof stationHealthSchema>;
