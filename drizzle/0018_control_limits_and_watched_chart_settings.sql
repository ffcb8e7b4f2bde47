ALTER TYPE "public"."watched_chart_kind" ADD VALUE 'xbar-r';--> statement-breakpoint
CREATE TABLE "control_limit_sets" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"model_id" uuid NOT NULL,
	"station_id" uuid,
	"scope" text NOT NULL,
	"figure" text NOT NULL,
	"version" integer NOT NULL,
	"cleared" boolean DEFAULT false NOT NULL,
	"center" double precision,
	"sigma" double precision,
	"basis" text,
	"subgroup_size" integer,
	"baseline_from" timestamp with time zone,
	"baseline_to" timestamp with time zone,
	"points" integer,
	"filter" jsonb,
	"reason" text NOT NULL,
	"set_by" uuid NOT NULL,
	"set_by_name" text NOT NULL,
	"set_at" timestamp with time zone NOT NULL
);
--> statement-breakpoint
ALTER TABLE "watched_charts" ADD COLUMN "subgroup_size" integer;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD COLUMN "watched" boolean DEFAULT true NOT NULL;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD COLUMN "changed_by" uuid;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD COLUMN "changed_by_name" text;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD COLUMN "changed_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "control_limit_sets" ADD CONSTRAINT "control_limit_sets_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "control_limit_sets" ADD CONSTRAINT "control_limit_sets_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "control_limit_sets" ADD CONSTRAINT "control_limit_sets_set_by_users_id_fk" FOREIGN KEY ("set_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "control_limit_sets_version_key" ON "control_limit_sets" USING btree ("model_id","scope","figure","version");--> statement-breakpoint
CREATE INDEX "control_limit_sets_station_idx" ON "control_limit_sets" USING btree ("station_id");--> statement-breakpoint
ALTER TABLE "watched_charts" ADD CONSTRAINT "watched_charts_changed_by_users_id_fk" FOREIGN KEY ("changed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;