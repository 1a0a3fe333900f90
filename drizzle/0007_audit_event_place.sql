ALTER TABLE "audit_events" ADD COLUMN "project_id" integer;--> statement-breakpoint
ALTER TABLE "audit_events" ADD COLUMN "sheet_id" integer;--> statement-breakpoint
CREATE INDEX "audit_events_project_at" ON "audit_events" USING btree ("project_id","at");--> statement-breakpoint
CREATE INDEX "audit_events_sheet_at" ON "audit_events" USING btree ("sheet_id","at");--> statement-breakpoint
CREATE INDEX "audit_events_actor_at" ON "audit_events" USING btree ("actor_id","at");--> statement-breakpoint
CREATE INDEX "audit_events_action_at" ON "audit_events" USING btree ("action","at");