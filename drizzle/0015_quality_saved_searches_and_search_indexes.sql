CREATE TABLE "saved_searches" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"filter" jsonb NOT NULL,
	"saved_by" uuid,
	"saved_by_name" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
DROP INDEX "units_hall_lot_idx";--> statement-breakpoint
DROP INDEX "units_magnet_lot_idx";--> statement-breakpoint
DROP INDEX "units_stator_lot_idx";--> statement-breakpoint
ALTER TABLE "saved_searches" ADD CONSTRAINT "saved_searches_saved_by_users_id_fk" FOREIGN KEY ("saved_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "saved_searches_name_key" ON "saved_searches" USING btree (lower("name"));--> statement-breakpoint
CREATE INDEX "calibrations_station_search_idx" ON "calibrations" USING btree ("station_id","computed_at","unit_id") WHERE "calibrations"."purpose" = 'station';--> statement-breakpoint
CREATE INDEX "calibrations_time_search_idx" ON "calibrations" USING btree ("computed_at","unit_id") WHERE "calibrations"."purpose" = 'station';--> statement-breakpoint
CREATE INDEX "units_hall_lot_idx" ON "units" USING btree ("hall_board_lot","id");--> statement-breakpoint
CREATE INDEX "units_magnet_lot_idx" ON "units" USING btree ("magnet_ring_lot","id");--> statement-breakpoint
CREATE INDEX "units_stator_lot_idx" ON "units" USING btree ("stator_lot","id");