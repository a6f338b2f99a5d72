CREATE TABLE "rota_shares" (
	"setup_id" text PRIMARY KEY NOT NULL,
	"rota_setup_id" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"created_by" text
);
--> statement-breakpoint
ALTER TABLE "rota_shares" ADD CONSTRAINT "rota_shares_setup_id_setups_id_fk" FOREIGN KEY ("setup_id") REFERENCES "public"."setups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rota_shares" ADD CONSTRAINT "rota_shares_rota_setup_id_setups_id_fk" FOREIGN KEY ("rota_setup_id") REFERENCES "public"."setups"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "rota_shares" ADD CONSTRAINT "rota_shares_created_by_user_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "rota_shares_rota_setup_idx" ON "rota_shares" USING btree ("rota_setup_id");