CREATE TYPE "public"."hold_disposition" AS ENUM('use_as_is', 'rework', 'recalibrate', 'scrap');--> statement-breakpoint
CREATE TYPE "public"."hold_source" AS ENUM('person', 'retest_policy', 'programming_mismatch');--> statement-breakpoint
CREATE TYPE "public"."investigation_status" AS ENUM('open', 'contained', 'closed');--> statement-breakpoint
ALTER TYPE "public"."unit_status" ADD VALUE 'scrapped';--> statement-breakpoint
CREATE TABLE "investigation_comments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"investigation_id" uuid NOT NULL,
	"author_id" uuid,
	"author_name" text NOT NULL,
	"body" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "investigation_units" (
	"investigation_id" uuid NOT NULL,
	"unit_id" uuid NOT NULL,
	"added_by" uuid,
	"added_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "investigation_units_investigation_id_unit_id_pk" PRIMARY KEY("investigation_id","unit_id")
);
--> statement-breakpoint
CREATE TABLE "investigations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"number" integer GENERATED ALWAYS AS IDENTITY (sequence name "investigations_number_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"title" text NOT NULL,
	"customer_ref" text,
	"symptom" text,
	"received_on" date,
	"status" "investigation_status" DEFAULT 'open' NOT NULL,
	"findings" text,
	"containment_action" text,
	"root_cause" text,
	"corrective_action" text,
	"verification" text,
	"opened_by" uuid,
	"opened_by_name" text,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"closed_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "unit_holds" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"unit_id" uuid NOT NULL,
	"reason" text NOT NULL,
	"source" "hold_source" NOT NULL,
	"held_by" uuid,
	"held_by_name" text,
	"held_at" timestamp with time zone NOT NULL,
	"investigation_id" uuid,
	"released_at" timestamp with time zone,
	"released_by" uuid,
	"released_by_name" text,
	"disposition" "hold_disposition",
	"release_reason" text,
	"attempt_budget" integer
);
--> statement-breakpoint
ALTER TABLE "investigation_comments" ADD CONSTRAINT "investigation_comments_investigation_id_investigations_id_fk" FOREIGN KEY ("investigation_id") REFERENCES "public"."investigations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_comments" ADD CONSTRAINT "investigation_comments_author_id_users_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_units" ADD CONSTRAINT "investigation_units_investigation_id_investigations_id_fk" FOREIGN KEY ("investigation_id") REFERENCES "public"."investigations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_units" ADD CONSTRAINT "investigation_units_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_units" ADD CONSTRAINT "investigation_units_added_by_users_id_fk" FOREIGN KEY ("added_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigations" ADD CONSTRAINT "investigations_opened_by_users_id_fk" FOREIGN KEY ("opened_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "unit_holds" ADD CONSTRAINT "unit_holds_unit_id_units_id_fk" FOREIGN KEY ("unit_id") REFERENCES "public"."units"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "unit_holds" ADD CONSTRAINT "unit_holds_held_by_users_id_fk" FOREIGN KEY ("held_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "unit_holds" ADD CONSTRAINT "unit_holds_investigation_id_investigations_id_fk" FOREIGN KEY ("investigation_id") REFERENCES "public"."investigations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "unit_holds" ADD CONSTRAINT "unit_holds_released_by_users_id_fk" FOREIGN KEY ("released_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "investigation_comments_case_idx" ON "investigation_comments" USING btree ("investigation_id","created_at");--> statement-breakpoint
CREATE INDEX "investigation_units_unit_idx" ON "investigation_units" USING btree ("unit_id");--> statement-breakpoint
CREATE UNIQUE INDEX "investigations_number_key" ON "investigations" USING btree ("number");--> statement-breakpoint
CREATE INDEX "investigations_status_idx" ON "investigations" USING btree ("status");--> statement-breakpoint
CREATE UNIQUE INDEX "unit_holds_one_open_key" ON "unit_holds" USING btree ("unit_id") WHERE "unit_holds"."released_at" is null;--> statement-breakpoint
CREATE INDEX "unit_holds_unit_idx" ON "unit_holds" USING btree ("unit_id","held_at");--> statement-breakpoint
CREATE INDEX "unit_holds_open_idx" ON "unit_holds" USING btree ("held_at") WHERE "unit_holds"."released_at" is null;--> statement-breakpoint
CREATE INDEX "unit_holds_investigation_idx" ON "unit_holds" USING btree ("investigation_id");