DROP INDEX "units_hall_lot_idx";--> statement-breakpoint
DROP INDEX "units_magnet_lot_idx";--> statement-breakpoint
DROP INDEX "units_stator_lot_idx";--> statement-breakpoint
CREATE INDEX "calibrations_station_search_idx" ON "calibrations" USING btree ("station_id","computed_at","unit_id") WHERE "calibrations"."purpose" = 'station';--> statement-breakpoint
CREATE INDEX "calibrations_time_search_idx" ON "calibrations" USING btree ("computed_at","unit_id") WHERE "calibrations"."purpose" = 'station';--> statement-breakpoint
CREATE INDEX "units_hall_lot_idx" ON "units" USING btree ("hall_board_lot","id");--> statement-breakpoint
CREATE INDEX "units_magnet_lot_idx" ON "units" USING btree ("magnet_ring_lot","id");--> statement-breakpoint
CREATE INDEX "units_stator_lot_idx" ON "units" USING btree ("stator_lot","id");