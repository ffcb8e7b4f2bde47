// `npm run db:migrate`: applies the migrations as the owner role (DATABASE_OWNER_URL, else
// DATABASE_URL), installs pg-boss's schema and queues, and grants the app role (DATABASE_URL's user)
// its privileges.
import { appRoleOf, migrateDatabase } from './migrate';
import { toolSettings } from '../env';

const { DATABASE_URL: url, DATABASE_OWNER_URL: ownerUrl } = toolSettings();
if (!url) {
  console.error('DATABASE_URL is not set. `npm start` sets it for the private database.');
  process.exit(2);
}
await migrateDatabase(ownerUrl ?? url, { appRole: appRoleOf(url, ownerUrl) });
console.log('Migrations applied.');
