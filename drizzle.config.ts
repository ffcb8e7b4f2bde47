import { defineConfig } from 'drizzle-kit';

// Migrations are generated (npm run db:generate) and applied by the migrator at start and in tests;
// never pushed. DRIZZLE_OUT lets the schema-drift check generate into a scratch folder.
export default defineConfig({
  dialect: 'postgresql',
  schema: './server/db/schema.ts',
  out: process.env.DRIZZLE_OUT ?? './drizzle',
  casing: 'snake_case',
  dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://localhost/unused' },
});
