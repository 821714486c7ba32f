-- The hand-written limiter and the sign-in attempt log give way to rate-limiter-flexible's
-- PostgreSQL store (lib/auth/rate-limit.ts).
CREATE TABLE "rate_limits" (
	"key" text PRIMARY KEY NOT NULL,
	"points" integer DEFAULT 0 NOT NULL,
	"expire" bigint
);
--> statement-breakpoint
CREATE INDEX "rate_limits_expire_idx" ON "rate_limits" USING btree ("expire");
--> statement-breakpoint
DROP TABLE "rate_limit_events" CASCADE;--> statement-breakpoint
DROP TABLE "sign_in_attempts" CASCADE;
