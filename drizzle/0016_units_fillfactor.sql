-- A unit row changes with every calibration, hold and release (status, hold reason, attempts, the
-- current offset, updated_at: none of them indexed). Room left on each page lets PostgreSQL update
-- the row in place (a HOT update) instead of writing a new version elsewhere and a new entry in each
-- of the table's six indexes: a bulk hold of 10,000 units wrote 60,000 index entries before.
-- Applies to pages written from now on; existing rows move as they are next updated or when the
-- table is rewritten (VACUUM FULL, pg_repack).
ALTER TABLE "units" SET (fillfactor = 85);
