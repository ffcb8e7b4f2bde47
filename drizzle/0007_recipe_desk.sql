CREATE TYPE "public"."what_if_status" AS ENUM('queued', 'running', 'done', 'cancelled', 'failed');--> statement-breakpoint
ALTER TYPE "public"."recipe_status" ADD VALUE 'in_review' BEFORE 'released';--> statement-breakpoint
CREATE TABLE "what_if_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"recipe_id" uuid NOT NULL,
	"baseline_recipe_id" uuid NOT NULL,
	"model_id" uuid NOT NULL,
	"filters" jsonb NOT NULL,
	"status" "what_if_status" DEFAULT 'queued' NOT NULL,
	"cancel_requested" boolean DEFAULT false NOT NULL,
	"total" integer DEFAULT 0 NOT NULL,
	"processed" integer DEFAULT 0 NOT NULL,
	"summary" jsonb,
	"error" text,
	"requested_by" uuid NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "based_on_id" uuid;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "revision" integer DEFAULT 1 NOT NULL;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "updated_by" uuid;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "updated_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "change_reason" text;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "submitted_by" uuid;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "submitted_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "review_comment" text;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "release_diff" jsonb;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "replaces_id" uuid;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "retired_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "what_if_runs" ADD CONSTRAINT "what_if_runs_recipe_id_recipes_id_fk" FOREIGN KEY ("recipe_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "what_if_runs" ADD CONSTRAINT "what_if_runs_baseline_recipe_id_recipes_id_fk" FOREIGN KEY ("baseline_recipe_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "what_if_runs" ADD CONSTRAINT "what_if_runs_model_id_models_id_fk" FOREIGN KEY ("model_id") REFERENCES "public"."models"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "what_if_runs" ADD CONSTRAINT "what_if_runs_requested_by_users_id_fk" FOREIGN KEY ("requested_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "what_if_runs_recipe_idx" ON "what_if_runs" USING btree ("recipe_id","created_at");--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_based_on_id_recipes_id_fk" FOREIGN KEY ("based_on_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_updated_by_users_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_submitted_by_users_id_fk" FOREIGN KEY ("submitted_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_replaces_id_recipes_id_fk" FOREIGN KEY ("replaces_id") REFERENCES "public"."recipes"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "recipes_one_released_per_model" ON "recipes" USING btree ("model_id") WHERE status = 'released';