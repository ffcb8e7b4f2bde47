// Every table, re-exported for Drizzle (client and drizzle-kit). Tables live in their modules.
export * from '../modules/users/users.table';
export * from '../modules/auth/auth.table';
export * from '../modules/audit/audit.table';
