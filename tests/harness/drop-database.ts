import type pg from 'pg';

const codeOf = (e: unknown) => (e as { code?: string }).code;

/**
 * DROP DATABASE … WITH (FORCE) as the owner role, which ends the database's other sessions. FORCE refuses
 * (42501) when one of them is a session the owner may not end; an autovacuum worker is one (it has no role
 * the owner could be a member of), and it starts on a test file's database after the file's writes, now and
 * then just as the file ends. Then a plain DROP DATABASE is tried, which stops the database's autovacuum
 * workers itself and refuses (55006) while any other session is left; both are tried again for a few seconds.
 */
export async function dropDatabaseForce(admin: pg.Client, name: string): Promise<void> {
  for (let attempt = 1; ; attempt++) {
    try {
      await admin.query(`drop database if exists "${name}" with (force)`);
      return;
    } catch (e) {
      if (codeOf(e) !== '42501' || attempt >= 25) throw e;
    }
    try {
      await admin.query(`drop database if exists "${name}"`);
      return;
    } catch (e) {
      if (codeOf(e) !== '55006') throw e;
    }
    await new Promise((r) => setTimeout(r, 200));
  }
}
