CREATE TABLE "run_annotations" (
	"id" serial PRIMARY KEY NOT NULL,
	"run_id" text NOT NULL,
	"at_ms" bigint NOT NULL,
	"until_ms" bigint,
	"text" text NOT NULL,
	"author_id" text,
	"author_name" text NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "run_annotations" ADD CONSTRAINT "run_annotations_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_annotations" ADD CONSTRAINT "run_annotations_author_id_user_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."user"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "run_annotations_run_idx" ON "run_annotations" USING btree ("run_id","at_ms");