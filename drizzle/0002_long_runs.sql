CREATE TABLE "frame_rollups" (
	"run_id" text NOT NULL,
	"resolution_s" integer NOT NULL,
	"bucket_t" bigint NOT NULL,
	"frames" integer NOT NULL,
	"first_seq" integer NOT NULL,
	"last_seq" integer NOT NULL,
	"window_s" double precision NOT NULL,
	"shots" bigint NOT NULL,
	"vacuum" bigint NOT NULL,
	"counts" jsonb NOT NULL,
	"switches" bigint NOT NULL,
	"dwell_s" double precision NOT NULL,
	"escapes" bigint NOT NULL,
	"vacuum_s" double precision NOT NULL,
	"transitions" jsonb,
	"lock_min" double precision NOT NULL,
	"lock_sum" double precision NOT NULL,
	"lock_max" double precision NOT NULL,
	"aux" jsonb NOT NULL,
	"expected_switches" double precision,
	"expected_escapes" double precision,
	CONSTRAINT "frame_rollups_run_id_resolution_s_bucket_t_pk" PRIMARY KEY("run_id","resolution_s","bucket_t")
);
--> statement-breakpoint
CREATE TABLE "run_snapshots" (
	"run_id" text PRIMARY KEY NOT NULL,
	"last_seq" integer NOT NULL,
	"saved_at" timestamp with time zone DEFAULT now() NOT NULL,
	"state" jsonb NOT NULL
);
--> statement-breakpoint
ALTER TABLE "frames" ADD COLUMN "late" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "setups" ADD COLUMN "raw_retention_days" integer;--> statement-breakpoint
ALTER TABLE "frame_rollups" ADD CONSTRAINT "frame_rollups_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "run_snapshots" ADD CONSTRAINT "run_snapshots_run_id_runs_id_fk" FOREIGN KEY ("run_id") REFERENCES "public"."runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- Keep the detector state of runs that were open before this migration.
INSERT INTO "run_snapshots" ("run_id", "last_seq", "state")
	SELECT "id", COALESCE(("detector_state"->>'lastSeq')::integer, 0), "detector_state" FROM "runs" WHERE "detector_state" IS NOT NULL;--> statement-breakpoint
ALTER TABLE "runs" DROP COLUMN "detector_state";