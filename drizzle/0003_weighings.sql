CREATE TYPE "public"."input_style" AS ENUM('sliders', 'ranking');--> statement-breakpoint
CREATE TYPE "public"."weighing_status" AS ENUM('open', 'closed', 'revealed');--> statement-breakpoint
CREATE TABLE "socket_io_attachments" (
	"id" bigserial NOT NULL,
	"created_at" timestamp with time zone DEFAULT now(),
	"payload" "bytea",
	CONSTRAINT "socket_io_attachments_id_unique" UNIQUE("id")
);
--> statement-breakpoint
CREATE TABLE "submissions" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"weighing_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"weights" jsonb NOT NULL,
	"ranking" jsonb,
	"idempotency_key" text NOT NULL,
	"revision" integer DEFAULT 1 NOT NULL,
	"submitted_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "submissions_weighing_user" UNIQUE("weighing_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "weighings" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"room_id" uuid NOT NULL,
	"number" integer NOT NULL,
	"ledger_version_id" uuid NOT NULL,
	"input_style" "input_style" DEFAULT 'sliders' NOT NULL,
	"show_names" boolean DEFAULT false NOT NULL,
	"status" "weighing_status" DEFAULT 'open' NOT NULL,
	"closes_at" timestamp with time zone,
	"opened_by" uuid,
	"opened_at" timestamp with time zone DEFAULT now() NOT NULL,
	"closed_at" timestamp with time zone,
	"revealed_at" timestamp with time zone,
	CONSTRAINT "weighings_room_number" UNIQUE("room_id","number")
);
--> statement-breakpoint
ALTER TABLE "submissions" ADD CONSTRAINT "submissions_weighing_id_weighings_id_fk" FOREIGN KEY ("weighing_id") REFERENCES "public"."weighings"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "submissions" ADD CONSTRAINT "submissions_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighings" ADD CONSTRAINT "weighings_room_id_rooms_id_fk" FOREIGN KEY ("room_id") REFERENCES "public"."rooms"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighings" ADD CONSTRAINT "weighings_ledger_version_id_ledger_versions_id_fk" FOREIGN KEY ("ledger_version_id") REFERENCES "public"."ledger_versions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "weighings" ADD CONSTRAINT "weighings_opened_by_users_id_fk" FOREIGN KEY ("opened_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "weighings_one_open_per_room" ON "weighings" USING btree ("room_id") WHERE "weighings"."status" = 'open';