CREATE TABLE "evaluations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"model_hash" text NOT NULL,
	"engine_version" text NOT NULL,
	"result" jsonb NOT NULL,
	"timings" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"hit_count" integer DEFAULT 0 NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "evaluations_model_hash_unique" UNIQUE("model_hash")
);
--> statement-breakpoint
CREATE INDEX "evaluations_updated_idx" ON "evaluations" USING btree ("updated_at");