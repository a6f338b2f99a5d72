CREATE TABLE "morning_reports" (
	"id" text PRIMARY KEY NOT NULL,
	"user_id" text,
	"kind" text NOT NULL,
	"since_ms" bigint NOT NULL,
	"until_ms" bigint NOT NULL,
	"time_zone" text NOT NULL,
	"report" jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"email_status" text,
	"email_error" text
);
--> statement-breakpoint
CREATE TABLE "report_settings" (
	"user_id" text PRIMARY KEY NOT NULL,
	"enabled" boolean DEFAULT true NOT NULL,
	"report_time" text DEFAULT '08:00' NOT NULL,
	"time_zone" text,
	"follow_setups" jsonb,
	"armed_at" timestamp with time zone DEFAULT now() NOT NULL,
	"last_report_until_ms" bigint
);
--> statement-breakpoint
ALTER TABLE "morning_reports" ADD CONSTRAINT "morning_reports_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "report_settings" ADD CONSTRAINT "report_settings_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "morning_reports_user_idx" ON "morning_reports" USING btree ("user_id","until_ms");