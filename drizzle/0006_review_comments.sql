CREATE TABLE "comments" (
	"id" serial PRIMARY KEY NOT NULL,
	"revision_id" integer NOT NULL,
	"anchor_kind" text NOT NULL,
	"anchor" text NOT NULL,
	"anchor_label" text,
	"body" text NOT NULL,
	"author_id" integer NOT NULL,
	"revision_version" integer NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"answer" text,
	"answered_by" integer,
	"answered_at" timestamp with time zone,
	"answered_version" integer,
	"resolved_by" integer,
	"resolved_at" timestamp with time zone,
	"resolved_version" integer,
	CONSTRAINT "comments_anchor_kind_known" CHECK ("comments"."anchor_kind" in ('section', 'block', 'parameter', 'step')),
	CONSTRAINT "comments_answered_whole" CHECK (("comments"."answer" is null) = ("comments"."answered_at" is null)),
	CONSTRAINT "comments_resolved_whole" CHECK (("comments"."resolved_by" is null) = ("comments"."resolved_at" is null))
);
--> statement-breakpoint
ALTER TABLE "comments" ADD CONSTRAINT "comments_revision_id_sheet_revisions_id_fk" FOREIGN KEY ("revision_id") REFERENCES "public"."sheet_revisions"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "comments" ADD CONSTRAINT "comments_author_id_people_id_fk" FOREIGN KEY ("author_id") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "comments" ADD CONSTRAINT "comments_answered_by_people_id_fk" FOREIGN KEY ("answered_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "comments" ADD CONSTRAINT "comments_resolved_by_people_id_fk" FOREIGN KEY ("resolved_by") REFERENCES "public"."people"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "comments_revision" ON "comments" USING btree ("revision_id","id");--> statement-breakpoint
CREATE INDEX "comments_open" ON "comments" USING btree ("revision_id") WHERE "comments"."resolved_at" is null;