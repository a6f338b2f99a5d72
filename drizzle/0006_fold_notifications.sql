-- The old notifications table kept one row per send attempt (never retried). Each becomes a
-- finished outbox row with its one attempt, so the delivery history stays in one place.
INSERT INTO "outbox" ("id", "incident_id", "kind", "channel", "recipient", "payload", "status", "attempts", "next_attempt_at", "expires_at", "last_error", "provider_ref", "sent_at", "created_at", "dedupe_key")
SELECT 'legacy-' || n."id", n."incident_id", 'alert', n."channel",
	COALESCE((SELECT u."id" FROM "user" u WHERE u."email" = n."recipient"), n."recipient"),
	jsonb_build_object('legacy', true, 'reason', n."reason", 'address', n."recipient"),
	n."status", 1, n."created_at", n."created_at", n."error", n."message_id",
	CASE WHEN n."status" = 'sent' THEN n."created_at" END, n."created_at", 'legacy-notification:' || n."id"
FROM "notifications" n;--> statement-breakpoint
INSERT INTO "outbox_attempts" ("outbox_id", "started_at", "duration_ms", "outcome", "error")
SELECT 'legacy-' || n."id", n."created_at", 0, CASE WHEN n."status" = 'sent' THEN 'sent' ELSE 'failed' END, n."error"
FROM "notifications" n;--> statement-breakpoint
DROP TABLE "notifications" CASCADE;
