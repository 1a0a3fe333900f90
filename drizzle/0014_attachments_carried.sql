ALTER TABLE "attachments" DROP CONSTRAINT "attachments_object_key_unique";--> statement-breakpoint
CREATE INDEX "attachments_object_key" ON "attachments" USING btree ("object_key");