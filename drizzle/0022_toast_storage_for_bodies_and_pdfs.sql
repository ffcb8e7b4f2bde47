-- How PostgreSQL stores the big values of a unit (affects rows written from now on; old rows stay as they are).
--
-- A traveler's PDF is already deflated inside: the default storage tried to compress each one again,
-- failed, and threw the work away (about 2 ms of database CPU per PDF, the same bytes in the end).
-- EXTERNAL stores it out of line without trying.
ALTER TABLE "travelers" ALTER COLUMN "pdf" SET STORAGE EXTERNAL;
--> statement-breakpoint
-- The posted bodies and the engine's result compress with lz4 rather than the built-in pglz: about half
-- the database CPU to write them and to read them back (for the computation, the traveler, exports), for
-- about 4 % more bytes. A server built without lz4 keeps pglz (the migration must not fail there).
DO $$
BEGIN
  IF EXISTS (SELECT 1 FROM pg_settings WHERE name = 'default_toast_compression' AND 'lz4' = ANY (enumvals)) THEN
    ALTER TABLE "measurements" ALTER COLUMN "payload" SET COMPRESSION lz4;
    ALTER TABLE "measurements" ALTER COLUMN "payload_raw" SET COMPRESSION lz4;
    ALTER TABLE "calibrations" ALTER COLUMN "result" SET COMPRESSION lz4;
  END IF;
END
$$;
