CREATE TABLE "calibration_stats" (
	"calibration_id" uuid PRIMARY KEY NOT NULL,
	"computed_at" timestamp with time zone NOT NULL,
	"offset_deg" double precision,
	"lag_deg" double precision,
	"speed_rpm" double precision,
	"fit_residual_deg" double precision,
	"ke_v_per_krpm" double precision,
	"placement_a_deg" double precision,
	"placement_b_deg" double precision,
	"placement_c_deg" double precision,
	"model_id" uuid NOT NULL,
	"station_id" uuid NOT NULL,
	"unit_id" uuid NOT NULL,
	"operator_id" uuid,
	"purpose" "calibration_purpose" NOT NULL,
	"verdict" "calibration_verdict" NOT NULL,
	"attempt" integer,
	"recipe_version" integer NOT NULL,
	"serial" text NOT NULL,
	"hall_board_lot" text,
	"magnet_ring_lot" text,
	"stator_lot" text
);
--> statement-breakpoint
CREATE INDEX "calibration_stats_model_time_idx" ON "calibration_stats" USING btree ("model_id","purpose","computed_at","calibration_id");--> statement-breakpoint
CREATE INDEX "calibration_stats_station_time_idx" ON "calibration_stats" USING btree ("station_id","model_id","purpose","computed_at","calibration_id");--> statement-breakpoint
CREATE INDEX "calibration_stats_unit_idx" ON "calibration_stats" USING btree ("unit_id");