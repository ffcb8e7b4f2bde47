-- Each row says which transaction wrote its current version (the insert, or a later lot correction): readers
-- that keep the statistics rows in memory read only the rows changed since their last snapshot.
ALTER TABLE "calibration_stats" ADD COLUMN "changed_xid" "xid8" DEFAULT pg_current_xact_id() NOT NULL;--> statement-breakpoint
CREATE INDEX "calibration_stats_changed_idx" ON "calibration_stats" USING btree ("changed_xid");
--> statement-breakpoint
-- A corrected lot (or serial, or model) rewrites the unit's rows: they carry the correcting transaction's id,
-- so a reader that keeps the rows in memory fetches them again (0021 wrote the function; only changed_xid is new).
CREATE OR REPLACE FUNCTION calibration_stats_of_unit() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER
  SET search_path = public, pg_temp AS $$
BEGIN
  UPDATE calibration_stats SET serial = NEW.serial, model_id = NEW.model_id, hall_board_lot = NEW.hall_board_lot,
         magnet_ring_lot = NEW.magnet_ring_lot, stator_lot = NEW.stator_lot, changed_xid = pg_current_xact_id()
   WHERE unit_id = NEW.id;
  RETURN NULL;
END;
$$;
