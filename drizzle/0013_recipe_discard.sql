ALTER TYPE "public"."recipe_status" ADD VALUE 'discarded';--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "discarded_by" uuid;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "discarded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "recipes" ADD COLUMN "discard_reason" text;--> statement-breakpoint
ALTER TABLE "recipes" ADD CONSTRAINT "recipes_discarded_by_users_id_fk" FOREIGN KEY ("discarded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;