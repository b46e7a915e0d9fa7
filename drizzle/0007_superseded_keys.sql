ALTER TABLE "ballots" ADD COLUMN "earlier_keys" text[] DEFAULT '{}'::text[] NOT NULL;--> statement-breakpoint
ALTER TABLE "submissions" ADD COLUMN "earlier_keys" text[] DEFAULT '{}'::text[] NOT NULL;