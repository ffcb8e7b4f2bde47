import { createDatabase } from './client';
import { runMigrations } from './migrate';

const url = process.env.DATABASE_URL;
if (!url) {
  console.error('DATABASE_URL is not set. `npm start` sets it for the private database.');
  process.exit(2);
}
const database = createDatabase(url, { max: 1 });
try {
  await runMigrations(database.db);
  console.log('Migrations applied.');
} finally {
  await database.close();
}
