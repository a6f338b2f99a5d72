CREATE TABLE "escalation_policies" (
	"setup_id" text PRIMARY KEY NOT NULL,
	"critical_ack_min" integer DEFAULT 10 NOT NULL,
	"warning_ack_min" integer DEFAULT 30 NOT NULL,
	"warning_last_step" integer DEFAULT 1 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "escalations" (
	"incident_id" text PRIMARY KEY NOT NULL,
	"next_step" integer NOT NULL,
	"due_at" timestamp with time zone NOT NULL,
	"severity" text NOT NULL
);
--> statement-breakpoint
CREATE TABLE "rota_overrides" (
	"id" text PRIMARY KEY NOT NULL,
	"setup_id" text NOT NULL,
	"user_id" text NOT NULL,
	"from_at" timestamp with time zone NOT NULL,
	"until_at" timestamp with time zone NOT NULL,
	"note" text DEFAULT '' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"created_by" text
);
--> statement-breakpoint
CREATE TABLE "rotas" (
	"setup_id" text PRIMARY KEY NOT NULL,
	"members" jsonb NOT NULL,
	"handover_weekday" integer NOT NULL,
	"handover_time" text NOT NULL,
	"starts_on" text NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_by" text
);
--> statement-breakpoint
ALTER TABLE "incidents" ADD COLUMN "cause_incident_id" text;--> statement-breakpoint
ALTER TABLE "escalation_policies" ADD CONSTRAINT "escalation_policies_setup_id_setups_id_fk" FOREIGN KEY ("setup_id") REFERENCES "public"."setups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "escalations" ADD CONSTRAINT "escalations_incident_id_incidents_id_fk" FOREIGN KEY ("incident_id") REFERENCES "public"."incidents"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rota_overrides" ADD CONSTRAINT "rota_overrides_setup_id_setups_id_fk" FOREIGN KEY ("setup_id") REFERENCES "public"."setups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rota_overrides" ADD CONSTRAINT "rota_overrides_user_id_user_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."user"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rota_overrides" ADD CONSTRAINT "rota_overrides_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rotas" ADD CONSTRAINT "rotas_setup_id_setups_id_fk" FOREIGN KEY ("setup_id") REFERENCES "public"."setups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rotas" ADD CONSTRAINT "rotas_updated_by_user_id_fk" FOREIGN KEY ("updated_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "escalations_due_idx" ON "escalations" USING btree ("due_at");--> statement-breakpoint
CREATE INDEX "rota_overrides_setup_idx" ON "rota_overrides" USING btree ("setup_id","until_at");--> statement-breakpoint
CREATE INDEX "incidents_cause_idx" ON "incidents" USING btree ("cause_incident_id");