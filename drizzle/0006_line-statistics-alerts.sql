CREATE TYPE "public"."chart_alert_status" AS ENUM('open', 'acknowledged');--> statement-breakpoint
CREATE TYPE "public"."watched_chart_kind" AS ENUM('imr', 'ewma');--> statement-breakpoint
CREATE TABLE "alert_subscriptions" (
	"user_id" uuid PRIMARY KEY NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "chart_alerts" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"chart_id" uuid NOT NULL,
	"rule" integer NOT NULL,
	"rule_text" text NOT NULL,
	"status" chart_alert_status DEFAULT 'open' NOT NULL,
	"points" jsonb NOT NULL,
	"hits" integer DEFAULT 1 NOT NULL,
	"raised_at" timestamp with time zone NOT NULL,
	"last_hit_at" timestamp with time zone NOT NULL,
	"acknowledged_by" uuid,
	"acknowledged_at" timestamp with time zone,
	"comment" text
);
--> statement-breakpoint
CREATE TABLE "watched_charts" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"model_id" uuid NOT NULL,
	"station_id" uuid NOT NULL,
	"kind" "watched_chart_kind" NOT NULL,
	"rule_set" text DEFAULT 'western-electric' NOT NULL,
	"rules" jsonb NOT NULL,
	"lambda" double precision,
	"limit_width" double precision,
	"state" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "alert_subscriptions" ADD CONSTRAINT "alert_subscriptions_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "chart_alerts" ADD CONSTRAINT "chart_alerts_chart_id_watched_charts_id_fk" FOREIGN KEY ("chart_id") REFERENCES "public"."watched_charts"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "chart_alerts" ADD CONSTRAINT "chart_alerts_acknowledged_by_users_id_fk" FOREIGN KEY ("acknowledged_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD CONSTRAINT "watched_charts_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "watched_charts" ADD CONSTRAINT "watched_charts_station_id_stations_id_fk" FOREIGN KEY ("station_id") REFERENCES "public"."stations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "chart_alerts_open_key" ON "chart_alerts" USING btree ("chart_id","rule") WHERE status = 'open';--> statement-breakpoint
CREATE INDEX "chart_alerts_status_idx" ON "chart_alerts" USING btree ("status","raised_at");--> statement-breakpoint
CREATE UNIQUE INDEX "watched_charts_station_model_kind_key" ON "watched_charts" USING btree ("station_id","model_id","kind");