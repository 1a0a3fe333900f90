CREATE TABLE "packages" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"number" text NOT NULL,
	"title" text NOT NULL,
	"created_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "sheet_revisions" (
	"id" serial PRIMARY KEY NOT NULL,
	"sheet_id" integer NOT NULL,
	"revision_index" integer NOT NULL,
	"label" text,
	"status" text DEFAULT 'draft' NOT NULL,
	"document" jsonb NOT NULL,
	"version" integer DEFAULT 1 NOT NULL,
	"result" jsonb,
	"engine_version" text NOT NULL,
	"prepared_by" integer NOT NULL,
	"edited_by" integer NOT NULL,
	"edited_at" timestamp with time zone DEFAULT now() NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "sheet_revisions_status_known" CHECK ("sheet_revisions"."status" in ('draft', 'in check', 'returned', 'approved', 'issued', 'superseded')),
	CONSTRAINT "sheet_revisions_index_natural" CHECK ("sheet_revisions"."revision_index" >= 0),
	CONSTRAINT "sheet_revisions_version_positive" CHECK ("sheet_revisions"."version" >= 1)
);
--> statement-breakpoint
CREATE TABLE "sheets" (
	"id" serial PRIMARY KEY NOT NULL,
	"project_id" integer NOT NULL,
	"package_id" integer,
	"number" text NOT NULL,
	"title" text NOT NULL,
	"loop_tag" text NOT NULL,
	"created_by" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
ALTER TABLE "packages" ADD CONSTRAINT "packages_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "packages" ADD CONSTRAINT "packages_created_by_people_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD CONSTRAINT "sheet_revisions_sheet_id_sheets_id_fk" FOREIGN KEY ("sheet_id") REFERENCES "public"."sheets"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD CONSTRAINT "sheet_revisions_prepared_by_people_id_fk" FOREIGN KEY ("prepared_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD CONSTRAINT "sheet_revisions_edited_by_people_id_fk" FOREIGN KEY ("edited_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_project_id_projects_id_fk" FOREIGN KEY ("project_id") REFERENCES "public"."projects"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_package_id_packages_id_fk" FOREIGN KEY ("package_id") REFERENCES "public"."packages"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "sheets" ADD CONSTRAINT "sheets_created_by_people_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "packages_project_number" ON "packages" USING btree ("project_id","number");--> statement-breakpoint
CREATE UNIQUE INDEX "sheet_revisions_sheet_index" ON "sheet_revisions" USING btree ("sheet_id","revision_index");--> statement-breakpoint
CREATE INDEX "sheet_revisions_status" ON "sheet_revisions" USING btree ("status");--> statement-breakpoint
CREATE INDEX "sheet_revisions_edited_at" ON "sheet_revisions" USING btree ("edited_at");--> statement-breakpoint
CREATE INDEX "sheet_revisions_prepared_by" ON "sheet_revisions" USING btree ("prepared_by");--> statement-breakpoint
CREATE UNIQUE INDEX "sheets_project_number" ON "sheets" USING btree ("project_id","number");--> statement-breakpoint
CREATE INDEX "sheets_project_number_order" ON "sheets" USING btree ("project_id",length("number"),"number");--> statement-breakpoint
CREATE INDEX "sheets_project_title" ON "sheets" USING btree ("project_id","title");--> statement-breakpoint
CREATE INDEX "sheets_project_loop_tag" ON "sheets" USING btree ("project_id","loop_tag");--> statement-breakpoint
CREATE INDEX "sheets_package" ON "sheets" USING btree ("package_id");