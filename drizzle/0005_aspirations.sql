ALTER TYPE "public"."input_style" ADD VALUE 'aspirations';--> statement-breakpoint
ALTER TABLE "submissions" ADD COLUMN "aspirations" jsonb;