CREATE TABLE "derivation_updates" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"derivation_id" uuid NOT NULL,
	"update" "bytea" NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "derivation_updates" ADD CONSTRAINT "derivation_updates_derivation_id_derivations_id_fk" FOREIGN KEY ("derivation_id") REFERENCES "public"."derivations"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "derivation_updates_derivation_id_idx" ON "derivation_updates" USING btree ("derivation_id","id");--> statement-breakpoint
-- Stored updates are never rewritten: compaction inserts a folded row and deletes the rows it folded.
CREATE OR REPLACE FUNCTION derivation_updates_refuse_update() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'derivation_updates is append-only: UPDATE refused' USING ERRCODE = 'insufficient_privilege';
END;
$$;--> statement-breakpoint
CREATE TRIGGER derivation_updates_no_update BEFORE UPDATE ON "derivation_updates" FOR EACH ROW EXECUTE FUNCTION derivation_updates_refuse_update();
