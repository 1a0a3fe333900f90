CREATE TABLE "package_issues" (
	"id" serial PRIMARY KEY NOT NULL,
	"package_id" integer NOT NULL,
	"purpose" text NOT NULL,
	"issued_by" integer NOT NULL,
	"issued_at" timestamp with time zone NOT NULL,
	"revision_ids" integer[] NOT NULL,
	"bytes" "bytea" NOT NULL,
	"sha256" text NOT NULL,
	"file_name" text NOT NULL,
	"pages" integer,
	CONSTRAINT "package_issues_purpose_known" CHECK ("package_issues"."purpose" in ('information', 'review', 'implementation'))
);
--> statement-breakpoint
CREATE TABLE "revision_editors" (
	"revision_id" integer NOT NULL,
	"person_id" integer NOT NULL,
	"first_edited_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "revision_editors_revision_id_person_id_pk" PRIMARY KEY("revision_id","person_id")
);
--> statement-breakpoint
CREATE TABLE "revision_pdfs" (
	"revision_id" integer PRIMARY KEY NOT NULL,
	"bytes" "bytea" NOT NULL,
	"sha256" text NOT NULL,
	"file_name" text NOT NULL,
	"pages" integer,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "signatures" (
	"id" serial PRIMARY KEY NOT NULL,
	"revision_id" integer NOT NULL,
	"person_id" integer NOT NULL,
	"printed_name" text NOT NULL,
	"role" text NOT NULL,
	"meaning" text NOT NULL,
	"signed_at" timestamp with time zone DEFAULT now() NOT NULL,
	"content_hash" text NOT NULL,
	"engine_version" text NOT NULL,
	CONSTRAINT "signatures_meaning_known" CHECK ("signatures"."meaning" in ('checked and approved', 'issued')),
	CONSTRAINT "signatures_role_known" CHECK ("signatures"."role" in ('checker', 'engineer')),
	CONSTRAINT "signatures_hash_form" CHECK ("signatures"."content_hash" ~ '^[0-9a-f]{64}$')
);
--> statement-breakpoint
ALTER TABLE "firm_settings" ADD COLUMN "revision_label_rule" text DEFAULT 'letters-then-numbers' NOT NULL;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "submitted_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "approved_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "purpose" text;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "issued_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "issued_by" integer;--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD COLUMN "superseded_at" timestamp with time zone;--> statement-breakpoint
ALTER TABLE "package_issues" ADD CONSTRAINT "package_issues_package_id_packages_id_fk" FOREIGN KEY ("package_id") REFERENCES "public"."packages"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "package_issues" ADD CONSTRAINT "package_issues_issued_by_people_id_fk" FOREIGN KEY ("issued_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "revision_editors" ADD CONSTRAINT "revision_editors_revision_id_sheet_revisions_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."sheet_revisions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "revision_editors" ADD CONSTRAINT "revision_editors_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "revision_pdfs" ADD CONSTRAINT "revision_pdfs_revision_id_sheet_revisions_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."sheet_revisions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_revision_id_sheet_revisions_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."sheet_revisions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "signatures" ADD CONSTRAINT "signatures_person_id_people_id_fk" FOREIGN KEY ("person_id") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "package_issues_package" ON "package_issues" USING btree ("package_id");--> statement-breakpoint
CREATE INDEX "revision_pdfs_sha256" ON "revision_pdfs" USING btree ("sha256");--> statement-breakpoint
CREATE UNIQUE INDEX "signatures_revision_meaning" ON "signatures" USING btree ("revision_id","meaning");--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD CONSTRAINT "sheet_revisions_issued_by_people_id_fk" FOREIGN KEY ("issued_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "firm_settings" ADD CONSTRAINT "firm_settings_revision_label_rule" CHECK ("firm_settings"."revision_label_rule" in ('letters-then-numbers', 'letters', 'numbers'));--> statement-breakpoint
ALTER TABLE "sheet_revisions" ADD CONSTRAINT "sheet_revisions_purpose_known" CHECK ("sheet_revisions"."purpose" is null or "sheet_revisions"."purpose" in ('information', 'review', 'implementation'));