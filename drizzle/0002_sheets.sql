CREATE TABLE "files" (
	"sha256" text PRIMARY KEY NOT NULL,
	"mime_type" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "sheets" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"seq" integer GENERATED ALWAYS AS IDENTITY (sequence name "sheets_seq_seq" INCREMENT BY 1 MINVALUE 1 MAXVALUE 2147483647 START WITH 1 CACHE 1),
	"project_id" uuid NOT NULL,
	"file_sha256" text NOT NULL,
	"original_name" text NOT NULL,
	"title" text NOT NULL,
	"kind" text NOT NULL,
	"page" integer DEFAULT 1 NOT NULL,
	"page_count" integer DEFAULT 1 NOT NULL,
	"width_px" double precision NOT NULL,
	"height_px" double precision NOT NULL,
	"rotation" integer DEFAULT 0 NOT NULL,
	"straighten" double precision DEFAULT 0 NOT NULL,
	"calibration" jsonb,
	"pins" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"measurements" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"revision" integer DEFAULT 0 NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_file_sha256_files_sha256_fk" FOREIGN KEY ("file_sha256") REFERENCES "public"."files"("sha256") ON DELETE restrict ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "sheets_project_idx" ON "sheets" USING btree ("project_id","seq");--> statement-breakpoint
CREATE INDEX "sheets_file_idx" ON "sheets" USING btree ("file_sha256");