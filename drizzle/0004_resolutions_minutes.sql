CREATE TYPE "public"."vote_status" AS ENUM('open', 'closed');--> statement-breakpoint
CREATE TABLE "ballots" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"vote_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"choices" jsonb NOT NULL,
	"idempotency_key" text NOT NULL,
	"revision" integer DEFAULT 1 NOT NULL,
	"cast_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "ballots_vote_user" UNIQUE("vote_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "minutes_records" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"room_id" uuid NOT NULL,
	"resolution_id" uuid NOT NULL,
	"sha256" text NOT NULL,
	"pdf" "bytea" NOT NULL,
	"file_name" text NOT NULL,
	"signer" text NOT NULL,
	"signed_by" uuid,
	"signed_at" timestamp with time zone DEFAULT now() NOT NULL,
	"sent_at" timestamp with time zone,
	"sent_to" integer DEFAULT 0 NOT NULL
);
--> statement-breakpoint
CREATE TABLE "resolutions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"room_id" uuid NOT NULL,
	"amends" uuid,
	"ledger_version_id" uuid NOT NULL,
	"alternative_id" text NOT NULL,
	"engine_status" text NOT NULL,
	"justification" text,
	"rationale" text NOT NULL,
	"conditions" text DEFAULT '' NOT NULL,
	"dissent" text DEFAULT '' NOT NULL,
	"recorded_by" uuid,
	"recorded_at" timestamp with time zone DEFAULT now() NOT NULL,
	"frozen_at" timestamp with time zone
);
--> statement-breakpoint
CREATE TABLE "votes" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"room_id" uuid NOT NULL,
	"ledger_version_id" uuid NOT NULL,
	"shortlist" jsonb NOT NULL,
	"status" "vote_status" DEFAULT 'open' NOT NULL,
	"opened_by" uuid,
	"opened_at" timestamp with time zone DEFAULT now() NOT NULL,
	"closed_at" timestamp with time zone
);
--> statement-breakpoint
ALTER TABLE "ballots" ADD CONSTRAINT "ballots_vote_id_votes_id_fk" FOREIGN KEY ("vote_id") REFERENCES "public"."votes"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "ballots" ADD CONSTRAINT "ballots_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "minutes_records" ADD CONSTRAINT "minutes_records_room_id_rooms_id_fk" FOREIGN KEY ("room_id") REFERENCES "public"."rooms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "minutes_records" ADD CONSTRAINT "minutes_records_resolution_id_resolutions_id_fk" FOREIGN KEY ("resolution_id") REFERENCES "public"."resolutions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "minutes_records" ADD CONSTRAINT "minutes_records_signed_by_users_id_fk" FOREIGN KEY ("signed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resolutions" ADD CONSTRAINT "resolutions_room_id_rooms_id_fk" FOREIGN KEY ("room_id") REFERENCES "public"."rooms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resolutions" ADD CONSTRAINT "resolutions_amends_resolutions_id_fk" FOREIGN KEY ("amends") REFERENCES "public"."resolutions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resolutions" ADD CONSTRAINT "resolutions_ledger_version_id_ledger_versions_id_fk" FOREIGN KEY ("ledger_version_id") REFERENCES "public"."ledger_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "resolutions" ADD CONSTRAINT "resolutions_recorded_by_users_id_fk" FOREIGN KEY ("recorded_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "votes" ADD CONSTRAINT "votes_room_id_rooms_id_fk" FOREIGN KEY ("room_id") REFERENCES "public"."rooms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "votes" ADD CONSTRAINT "votes_ledger_version_id_ledger_versions_id_fk" FOREIGN KEY ("ledger_version_id") REFERENCES "public"."ledger_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "votes" ADD CONSTRAINT "votes_opened_by_users_id_fk" FOREIGN KEY ("opened_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "minutes_records_sha256" ON "minutes_records" USING btree ("sha256");--> statement-breakpoint
CREATE INDEX "resolutions_room" ON "resolutions" USING btree ("room_id","recorded_at");--> statement-breakpoint
CREATE UNIQUE INDEX "votes_one_open_per_room" ON "votes" USING btree ("room_id") WHERE "votes"."status" = 'open';--> statement-breakpoint
-- A resolution cited by signed minutes is frozen: refuse every change or removal of it, whoever
-- asks. Corrections are new rows that name the original in `amends`.
CREATE OR REPLACE FUNCTION resolutions_refuse_frozen_change() RETURNS trigger AS $$
BEGIN
  IF OLD.frozen_at IS NOT NULL THEN
    RAISE EXCEPTION 'resolution % is frozen: record an amendment instead', OLD.id;
  END IF;
  IF TG_OP = 'DELETE' THEN
    RETURN OLD;
  END IF;
  RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER resolutions_frozen BEFORE UPDATE OR DELETE ON resolutions
  FOR EACH ROW EXECUTE FUNCTION resolutions_refuse_frozen_change();
--> statement-breakpoint
-- Signed minutes are kept exactly as signed: never changed except for the e-mail bookkeeping.
CREATE OR REPLACE FUNCTION minutes_records_refuse_change() RETURNS trigger AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    RAISE EXCEPTION 'minutes_records is append-only: signed minutes cannot be deleted';
  END IF;
  IF NEW.pdf IS DISTINCT FROM OLD.pdf OR NEW.sha256 IS DISTINCT FROM OLD.sha256 OR NEW.signer IS DISTINCT FROM OLD.signer
     OR NEW.signed_at IS DISTINCT FROM OLD.signed_at OR NEW.resolution_id IS DISTINCT FROM OLD.resolution_id
     OR NEW.room_id IS DISTINCT FROM OLD.room_id OR NEW.file_name IS DISTINCT FROM OLD.file_name THEN
    RAISE EXCEPTION 'minutes_records: signed minutes cannot be changed';
  END IF;
  RETURN NEW;
END;
$$ LANGUAGE plpgsql;
--> statement-breakpoint
CREATE TRIGGER minutes_records_append_only BEFORE UPDATE OR DELETE ON minutes_records
  FOR EACH ROW EXECUTE FUNCTION minutes_records_refuse_change();
