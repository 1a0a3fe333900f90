ALTER TABLE "revision_pdfs" ADD COLUMN "job_id" bigint;--> statement-breakpoint
ALTER TABLE "revision_pdfs" ADD CONSTRAINT "revision_pdfs_job_id_jobs_id_fk" FOREIGN KEY ("job_id") REFERENCES "public"."jobs"("id") ON DELETE no action ON UPDATE no action;--> statement-breakpoint
CREATE UNIQUE INDEX "revision_pdfs_job" ON "revision_pdfs" USING btree ("job_id");