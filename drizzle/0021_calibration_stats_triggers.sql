-- calibration_stats (0020) is written by PostgreSQL alone, so every path that inserts calibrations (the
-- station's commit, recomputations, the demo seed, the benches) fills it with no code of its own, in the
-- same transaction. The figures are read from the engine result exactly as the statistics read them before.
CREATE FUNCTION calibration_stats_of_inserted() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  INSERT INTO calibration_stats (calibration_id, computed_at, offset_deg, lag_deg, speed_rpm, fit_residual_deg,
      ke_v_per_krpm, placement_a_deg, placement_b_deg, placement_c_deg, model_id, station_id, unit_id,
      operator_id, purpose, verdict, attempt, recipe_version, serial, hall_board_lot, magnet_ring_lot, stator_lot)
  SELECT c.id, c.computed_at, c.offset_deg,
         (c.result->>'lagDeg')::float8,
         (c.result->>'speedRpm')::float8,
         (c.result->>'fitResidualDeg')::float8,
         (c.result->'capture'->>'keVPerKrpmPeak')::float8,
         (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "A").placementDeg') #>> '{}')::float8,
         (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "B").placementDeg') #>> '{}')::float8,
         (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "C").placementDeg') #>> '{}')::float8,
         u.model_id, c.station_id, c.unit_id, m.operator_id, c.purpose, c.verdict, c.attempt, r.version,
         u.serial, u.hall_board_lot, u.magnet_ring_lot, u.stator_lot
    FROM inserted_calibrations c
    JOIN units u ON u.id = c.unit_id
    JOIN recipes r ON r.id = c.recipe_id
    JOIN measurements m ON m.id = c.measurement_pk
   -- In production order, so the table's pages follow time as its time indexes do (a bulk insert too).
   ORDER BY c.computed_at, c.id;
  RETURN NULL;
END;
$$;
--> statement-breakpoint
-- One trigger call per statement, joining the statement's new rows at once: a bulk insert of a million
-- calibrations is one set-based insert here, a station's commit one small one.
CREATE TRIGGER calibrations_stats AFTER INSERT ON calibrations
  REFERENCING NEW TABLE AS inserted_calibrations
  FOR EACH STATEMENT EXECUTE FUNCTION calibration_stats_of_inserted();
--> statement-breakpoint
-- The product sets a unit's serial, model and lots only when registering it (before any calibration), but
-- a corrected lot must not leave the statistics behind. The app role may not update calibration_stats
-- itself, so this function runs as its owner.
CREATE FUNCTION calibration_stats_of_unit() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER
  SET search_path = public, pg_temp AS $$
BEGIN
  UPDATE calibration_stats SET serial = NEW.serial, model_id = NEW.model_id, hall_board_lot = NEW.hall_board_lot,
         magnet_ring_lot = NEW.magnet_ring_lot, stator_lot = NEW.stator_lot
   WHERE unit_id = NEW.id;
  RETURN NULL;
END;
$$;
--> statement-breakpoint
CREATE TRIGGER units_calibration_stats AFTER UPDATE OF serial, model_id, hall_board_lot, magnet_ring_lot, stator_lot
  ON units FOR EACH ROW
  WHEN (OLD.serial IS DISTINCT FROM NEW.serial OR OLD.model_id IS DISTINCT FROM NEW.model_id
        OR OLD.hall_board_lot IS DISTINCT FROM NEW.hall_board_lot
        OR OLD.magnet_ring_lot IS DISTINCT FROM NEW.magnet_ring_lot OR OLD.stator_lot IS DISTINCT FROM NEW.stator_lot)
  EXECUTE FUNCTION calibration_stats_of_unit();
--> statement-breakpoint
REVOKE ALL ON FUNCTION calibration_stats_of_unit() FROM PUBLIC;
--> statement-breakpoint
-- Existing calibrations.
INSERT INTO calibration_stats (calibration_id, computed_at, offset_deg, lag_deg, speed_rpm, fit_residual_deg,
    ke_v_per_krpm, placement_a_deg, placement_b_deg, placement_c_deg, model_id, station_id, unit_id,
    operator_id, purpose, verdict, attempt, recipe_version, serial, hall_board_lot, magnet_ring_lot, stator_lot)
SELECT c.id, c.computed_at, c.offset_deg,
       (c.result->>'lagDeg')::float8,
       (c.result->>'speedRpm')::float8,
       (c.result->>'fitResidualDeg')::float8,
       (c.result->'capture'->>'keVPerKrpmPeak')::float8,
       (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "A").placementDeg') #>> '{}')::float8,
       (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "B").placementDeg') #>> '{}')::float8,
       (jsonb_path_query_first(c.result, '$.sensors[*] ? (@.sensor == "C").placementDeg') #>> '{}')::float8,
       u.model_id, c.station_id, c.unit_id, m.operator_id, c.purpose, c.verdict, c.attempt, r.version,
       u.serial, u.hall_board_lot, u.magnet_ring_lot, u.stator_lot
  FROM calibrations c
  JOIN units u ON u.id = c.unit_id
  JOIN recipes r ON r.id = c.recipe_id
  JOIN measurements m ON m.id = c.measurement_pk
 ORDER BY c.computed_at, c.id;
