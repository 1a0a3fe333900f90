ALTER TABLE "package_issues" ADD COLUMN "label" text;--> statement-breakpoint
ALTER TABLE "package_issues" ADD COLUMN "job_id" bigint;--> statement-breakpoint
ALTER TABLE "package_issues" ADD CONSTRAINT "package_issues_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "package_issues_job" ON "package_issues" USING btree ("job_id");