CREATE TYPE "public"."recipe_status" AS ENUM('draft', 'released', 'retired');--> statement-breakpoint
CREATE TYPE "public"."unit_status" AS ENUM('new', 'calibrated', 'failed', 'on_hold');--> statement-breakpoint
CREATE TYPE "public"."calibration_verdict" AS ENUM('pass', 'fail', 'unusable');--> statement-breakpoint
CREATE TYPE "public"."measurement_source" AS ENUM('timings', 'capture');--> statement-breakpoint
CREATE TYPE "public"."page_size" AS ENUM('A4', 'LETTER');--> statement-breakpoint
CREATE TABLE "models" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"code" text NOT NULL,
	"name" text NOT NULL,
	"pole_pairs" integer NOT NULL,
	"active_recipe_id" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "recipes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"model_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"status" "recipe_status" DEFAULT 'draft' NOT NULL,
	"body" jsonb NOT NULL,
	"notes" text,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"released_by" uuid,
	"released_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "units" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"serial" text NOT NULL,
	"model_id" uuid NOT NULL,
	"work_order" text,
	"hall_board_lot" text,
	"magnet_ring_lot" text,
	"stator_lot" text,
	"status" "unit_status" DEFAULT 'new' NOT NULL,
	"hold_reason" text,
	"attempts" integer DEFAULT 0 NOT NULL,
	"current_calibration_id" uuid,
	"current_offset_deg" double precision,
	"current_offset_counts" integer,
	"programming_mismatch" boolean DEFAULT false NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "station_keys" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"station_id" uuid NOT NULL,
	"label" text NOT NULL,
	"prefix" text NOT NULL,
	"key_hash" text NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_used_at" timestamp with time zone,
	"revoked_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "stations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"line" text NOT NULL,
	"allowed_model_ids" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"attended_by" uuid,
	"attended_since" timestamp with time zone,
	"last_seen_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "calibrations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"measurement_pk" uuid NOT NULL,
	"recipe_id" uuid NOT NULL,
	"unit_id" uuid NOT NULL,
	"station_id" uuid NOT NULL,
	"engine_version" text NOT NULL,
	"verdict" "calibration_verdict" NOT NULL,
	"offset_deg" double precision,
	"offset_counts" integer,
	"attempt" integer,
	"result" jsonb NOT NULL,
	"compute_ms" double precision,
	"computed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "measurements" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"measurement_id" text NOT NULL,
	"station_id" uuid NOT NULL,
	"unit_id" uuid NOT NULL,
	"serial" text NOT NULL,
	"source" "measurement_source" NOT NULL,
	"payload" jsonb NOT NULL,
	"payload_raw" text NOT NULL,
	"payload_sha256" text NOT NULL,
	"operator_id" uuid,
	"received_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "programming_confirmations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"calibration_id" uuid NOT NULL,
	"unit_id" uuid NOT NULL,
	"station_id" uuid NOT NULL,
	"expected_counts" integer NOT NULL,
	"written_counts" integer NOT NULL,
	"read_back_counts" integer NOT NULL,
	"checksum" text,
	"matches" boolean NOT NULL,
	"confirmed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "travelers" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"unit_id" uuid NOT NULL,
	"calibration_id" uuid NOT NULL,
	"print_number" integer NOT NULL,
	"page_size" "page_size" NOT NULL,
	"pdf" "bytea" NOT NULL,
	"sha256" text NOT NULL,
	"bytes" integer NOT NULL,
	"render_ms" integer,
	"requested_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "models" ADD CONSTRAINT "models_active_recipe_id_recipes_id_fk" FOREIGN KEY ("active_recipe_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_released_by_users_id_fk" FOREIGN KEY ("released_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "units" ADD CONSTRAINT "units_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "station_keys" ADD CONSTRAINT "station_keys_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "station_keys" ADD CONSTRAINT "station_keys_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "stations" ADD CONSTRAINT "stations_attended_by_users_id_fk" FOREIGN KEY ("attended_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_measurement_pk_measurements_id_fk" FOREIGN KEY ("measurement_pk") REFERENCES "public"."measurements"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_recipe_id_recipes_id_fk" FOREIGN KEY ("recipe_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "calibrations" ADD CONSTRAINT "calibrations_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "measurements" ADD CONSTRAINT "measurements_operator_id_users_id_fk" FOREIGN KEY ("operator_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "programming_confirmations" ADD CONSTRAINT "programming_confirmations_calibration_id_calibrations_id_fk" FOREIGN KEY ("calibration_id") REFERENCES "public"."calibrations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "programming_confirmations" ADD CONSTRAINT "programming_confirmations_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "programming_confirmations" ADD CONSTRAINT "programming_confirmations_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "travelers" ADD CONSTRAINT "travelers_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "travelers" ADD CONSTRAINT "travelers_calibration_id_calibrations_id_fk" FOREIGN KEY ("calibration_id") REFERENCES "public"."calibrations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "travelers" ADD CONSTRAINT "travelers_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "models_code_key" ON "models" USING btree (upper("code"));--> statement-breakpoint
CREATE UNIQUE INDEX "recipes_model_version_key" ON "recipes" USING btree ("model_id","version");--> statement-breakpoint
CREATE UNIQUE INDEX "units_serial_key" ON "units" USING btree (upper("serial"));--> statement-breakpoint
CREATE INDEX "units_model_idx" ON "units" USING btree ("model_id");--> statement-breakpoint
CREATE INDEX "units_hall_lot_idx" ON "units" USING btree ("hall_board_lot");--> statement-breakpoint
CREATE INDEX "units_magnet_lot_idx" ON "units" USING btree ("magnet_ring_lot");--> statement-breakpoint
CREATE INDEX "units_stator_lot_idx" ON "units" USING btree ("stator_lot");--> statement-breakpoint
CREATE UNIQUE INDEX "station_keys_hash_key" ON "station_keys" USING btree ("key_hash");--> statement-breakpoint
CREATE INDEX "station_keys_station_idx" ON "station_keys" USING btree ("station_id");--> statement-breakpoint
CREATE UNIQUE INDEX "stations_name_key" ON "stations" USING btree (upper("name"));--> statement-breakpoint
CREATE UNIQUE INDEX "calibrations_measurement_recipe_key" ON "calibrations" USING btree ("measurement_pk","recipe_id");--> statement-breakpoint
CREATE INDEX "calibrations_unit_idx" ON "calibrations" USING btree ("unit_id","computed_at");--> statement-breakpoint
CREATE INDEX "calibrations_station_idx" ON "calibrations" USING btree ("station_id","computed_at");--> statement-breakpoint
CREATE UNIQUE INDEX "measurements_measurement_id_key" ON "measurements" USING btree ("measurement_id");--> statement-breakpoint
CREATE INDEX "measurements_unit_idx" ON "measurements" USING btree ("unit_id");--> statement-breakpoint
CREATE INDEX "measurements_station_received_idx" ON "measurements" USING btree ("station_id","received_at");--> statement-breakpoint
CREATE INDEX "programming_calibration_idx" ON "programming_confirmations" USING btree ("calibration_id");--> statement-breakpoint
CREATE INDEX "travelers_unit_idx" ON "travelers" USING btree ("unit_id","created_at");--> statement-breakpoint
CREATE INDEX "travelers_calibration_idx" ON "travelers" USING btree ("calibration_id");