ALTER TABLE "checks" ALTER COLUMN "user_id" DROP NOT NULL;--> statement-breakpoint
ALTER TABLE "model_revisions" ADD COLUMN "author_name" text;--> statement-breakpoint
ALTER TABLE "model_revisions" ADD COLUMN "author_email" text;--> statement-breakpoint
ALTER TABLE "activity" ADD COLUMN "author_name" text;--> statement-breakpoint
ALTER TABLE "activity" ADD COLUMN "author_email" text;--> statement-breakpoint
ALTER TABLE "checks" ADD COLUMN "author_name" text;--> statement-breakpoint
ALTER TABLE "checks" ADD COLUMN "author_email" text;--> statement-breakpoint
ALTER TABLE "comments" ADD COLUMN "author_name" text;--> statement-breakpoint
ALTER TABLE "comments" ADD COLUMN "author_email" text;--> statement-breakpoint
ALTER TABLE "corrections" ADD COLUMN "author_name" text;--> statement-breakpoint
ALTER TABLE "corrections" ADD COLUMN "author_email" text;