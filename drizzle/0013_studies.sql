CREATE TYPE "public"."study_run_status" AS ENUM('pending', 'done', 'failed');--> statement-breakpoint
CREATE TYPE "public"."study_state" AS ENUM('queued', 'running', 'completed', 'cancelled', 'failed');--> statement-breakpoint
ALTER TYPE "public"."job_kind" ADD VALUE 'study';--> statement-breakpoint
CREATE TABLE "studies" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"derivation_id" uuid NOT NULL,
	"cell_id" text NOT NULL,
	"revision_id" uuid,
	"state" "study_state" DEFAULT 'queued' NOT NULL,
	"mode" text NOT NULL,
	"settings" jsonb NOT NULL,
	"spec" jsonb NOT NULL,
	"content" jsonb NOT NULL,
	"model_hash" text NOT NULL,
	"total" integer NOT NULL,
	"done" integer DEFAULT 0 NOT NULL,
	"failed" integer DEFAULT 0 NOT NULL,
	"error" jsonb,
	"aggregate" jsonb,
	"created_by_id" uuid,
	"started_at" timestamp with time zone,
	"finished_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "study_runs" (
	"study_id" uuid NOT NULL,
	"run_index" integer NOT NULL,
	"case_index" integer NOT NULL,
	"case_name" text NOT NULL,
	"parameters" jsonb NOT NULL,
	"status" "study_run_status" DEFAULT 'pending' NOT NULL,
	"failure_reason" text,
	"failure_message" text,
	"peaks" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"energy_drift" double precision,
	"constraint_residual" double precision,
	"series" "bytea",
	"wall_time_ms" double precision,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "study_runs_study_id_run_index_pk" PRIMARY KEY("study_id","run_index")
);
--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_derivation_id_derivations_id_fk" FOREIGN KEY ("derivation_id") REFERENCES "public"."derivations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_revision_id_revisions_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."revisions"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_created_by_id_users_id_fk" FOREIGN KEY ("created_by_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_runs" ADD CONSTRAINT "study_runs_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "studies_derivation_cell_idx" ON "studies" USING btree ("derivation_id","cell_id","created_at");