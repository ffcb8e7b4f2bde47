CREATE TABLE "investigation_attachments" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"investigation_id" uuid NOT NULL,
	"file_name" text NOT NULL,
	"content_type" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"sha256" text NOT NULL,
	"object_key" text NOT NULL,
	"uploaded_by" uuid,
	"uploaded_by_name" text NOT NULL,
	"uploaded_at" timestamp with time zone NOT NULL,
	"removed_at" timestamp with time zone,
	"removed_by" uuid,
	"removed_by_name" text,
	"removed_reason" text
);
--> statement-breakpoint
ALTER TABLE "investigation_attachments" ADD CONSTRAINT "investigation_attachments_investigation_id_investigations_id_fk" FOREIGN KEY ("investigation_id") REFERENCES "public"."investigations"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_attachments" ADD CONSTRAINT "investigation_attachments_uploaded_by_users_id_fk" FOREIGN KEY ("uploaded_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "investigation_attachments" ADD CONSTRAINT "investigation_attachments_removed_by_users_id_fk" FOREIGN KEY ("removed_by") REFERENCES "public"."users"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "investigation_attachments_case_idx" ON "investigation_attachments" USING btree ("investigation_id","uploaded_at");--> statement-breakpoint
CREATE UNIQUE INDEX "investigation_attachments_object_key" ON "investigation_attachments" USING btree ("object_key");