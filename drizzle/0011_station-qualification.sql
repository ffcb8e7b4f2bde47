CREATE TYPE "public"."gauge_appraiser_kind" AS ENUM('station', 'operator');--> statement-breakpoint
CREATE TYPE "public"."gauge_study_status" AS ENUM('open', 'finished');--> statement-breakpoint
CREATE TYPE "public"."qualification_verdict" AS ENUM('pass', 'fail', 'recorded');--> statement-breakpoint
CREATE TABLE "gauge_studies" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"model_id" uuid NOT NULL,
	"appraiser_kind" "gauge_appraiser_kind" NOT NULL,
	"appraiser_ids" jsonb NOT NULL,
	"station_id" uuid,
	"part_unit_ids" jsonb NOT NULL,
	"trials" integer NOT NULL,
	"tolerance_deg" double precision NOT NULL,
	"run_order" jsonb NOT NULL,
	"status" "gauge_study_status" DEFAULT 'open' NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "gauge_study_measurements" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"study_id" uuid NOT NULL,
	"measurement_id" text NOT NULL,
	"station_id" uuid NOT NULL,
	"operator_id" uuid,
	"part" integer NOT NULL,
	"appraiser" integer NOT NULL,
	"trial" integer NOT NULL,
	"serial" text NOT NULL,
	"payload" jsonb NOT NULL,
	"offset_deg" double precision NOT NULL,
	"result" jsonb NOT NULL,
	"repeat_reason" text,
	"measured_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "plant_shifts" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"start_minute" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "qualification_overrides" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"station_id" uuid NOT NULL,
	"reason" text NOT NULL,
	"granted_by" uuid NOT NULL,
	"granted_at" timestamp with time zone NOT NULL,
	"expires_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "qualification_policies" (
	"station_id" uuid PRIMARY KEY NOT NULL,
	"at_shift_start" boolean DEFAULT true NOT NULL,
	"every_hours" double precision,
	"every_units" integer,
	"reference_unit_ids" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"updated_by" uuid,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "qualification_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"measurement_id" text NOT NULL,
	"station_id" uuid NOT NULL,
	"reference_unit_id" uuid NOT NULL,
	"serial" text NOT NULL,
	"recipe_id" uuid NOT NULL,
	"engine_version" text NOT NULL,
	"payload" jsonb NOT NULL,
	"verdict" "qualification_verdict" NOT NULL,
	"offset_deg" double precision NOT NULL,
	"certified_offset_deg" double precision,
	"tolerance_deg" double precision NOT NULL,
	"deviation_deg" double precision,
	"result" jsonb NOT NULL,
	"operator_id" uuid,
	"measured_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
CREATE TABLE "reference_units" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"unit_id" uuid NOT NULL,
	"serial" text NOT NULL,
	"model_id" uuid NOT NULL,
	"certified_offset_deg" double precision,
	"tolerance_deg" double precision NOT NULL,
	"certified_from" jsonb,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"retired_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "gauge_studies" ADD CONSTRAINT "gauge_studies_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gauge_studies" ADD CONSTRAINT "gauge_studies_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gauge_studies" ADD CONSTRAINT "gauge_studies_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gauge_study_measurements" ADD CONSTRAINT "gauge_study_measurements_study_id_gauge_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."gauge_studies"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gauge_study_measurements" ADD CONSTRAINT "gauge_study_measurements_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "gauge_study_measurements" ADD CONSTRAINT "gauge_study_measurements_operator_id_users_id_fk" FOREIGN KEY ("operator_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_overrides" ADD CONSTRAINT "qualification_overrides_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_overrides" ADD CONSTRAINT "qualification_overrides_granted_by_users_id_fk" FOREIGN KEY ("granted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_policies" ADD CONSTRAINT "qualification_policies_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_policies" ADD CONSTRAINT "qualification_policies_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_runs" ADD CONSTRAINT "qualification_runs_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_runs" ADD CONSTRAINT "qualification_runs_reference_unit_id_reference_units_id_fk" FOREIGN KEY ("reference_unit_id") REFERENCES "public"."reference_units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_runs" ADD CONSTRAINT "qualification_runs_recipe_id_recipes_id_fk" FOREIGN KEY ("recipe_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "qualification_runs" ADD CONSTRAINT "qualification_runs_operator_id_users_id_fk" FOREIGN KEY ("operator_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reference_units" ADD CONSTRAINT "reference_units_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reference_units" ADD CONSTRAINT "reference_units_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "reference_units" ADD CONSTRAINT "reference_units_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "gauge_study_measurements_measurement_key" ON "gauge_study_measurements" USING btree ("measurement_id");--> statement-breakpoint
CREATE INDEX "gauge_study_measurements_study_idx" ON "gauge_study_measurements" USING btree ("study_id","part","appraiser","trial");--> statement-breakpoint
CREATE INDEX "qualification_overrides_station_idx" ON "qualification_overrides" USING btree ("station_id","expires_at");--> statement-breakpoint
CREATE UNIQUE INDEX "qualification_runs_measurement_key" ON "qualification_runs" USING btree ("measurement_id");--> statement-breakpoint
CREATE INDEX "qualification_runs_station_idx" ON "qualification_runs" USING btree ("station_id","measured_at");--> statement-breakpoint
CREATE UNIQUE INDEX "reference_units_unit_key" ON "reference_units" USING btree ("unit_id");--> statement-breakpoint
CREATE UNIQUE INDEX "reference_units_serial_key" ON "reference_units" USING btree ("serial");