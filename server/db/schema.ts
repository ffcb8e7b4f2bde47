// Every table, re-exported for Drizzle (client and drizzle-kit). Tables live in their modules.
export * from '../modules/users/users.table';
export * from '../modules/auth/auth.table';
export * from '../modules/audit/audit.table';
export * from '../modules/recipes/recipes.table';
export * from '../modules/units/units.table';
export * from '../modules/stations/stations.table';
export * from '../modules/measurements/measurements.table';
export * from '../modules/calibrations/calibrations.table';
export * from '../modules/travelers/travelers.table';
export * from '../modules/alerts/alerts.table';
export * from '../modules/quality/quality.table';
export * from '../modules/quality/attachments.table';
export * from '../modules/qualification/qualification.table';
export * from '../modules/analysis/analysis.table';
export * from '../modules/calibrations/calibration-stats.table';
