CREATE TYPE "public"."calibration_purpose" AS ENUM('station', 'recompute');--> statement-breakpoint
DROP INDEX "calibrations_measurement_recipe_key";--> statement-breakpoint
ALTER TABLE "calibrations" ADD COLUMN "purpose" "calibration_purpose" DEFAULT 'station' NOT NULL;--> statement-breakpoint
ALTER TABLE "calibrations" ADD COLUMN "requested_by" uuid;--> statement-breakpoint
ALTER TABLE "calibrations" ADD COLUMN "reason" text;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "calibrations_measurement_recipe_engine_key" ON "calibrations" USING btree ("measurement_pk","recipe_id","engine_version");