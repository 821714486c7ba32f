ALTER TYPE "public"."job_kind" ADD VALUE 'evaluation';--> statement-breakpoint
ALTER TYPE "public"."job_kind" ADD VALUE 'report';