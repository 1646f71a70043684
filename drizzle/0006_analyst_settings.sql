ALTER TABLE "marker_channels" ADD COLUMN "positivity_k" real DEFAULT 3 NOT NULL;--> statement-breakpoint
ALTER TABLE "marker_channels" ADD COLUMN "manual_threshold_counts" real;--> statement-breakpoint
ALTER TABLE "fields" ADD COLUMN "detection_settings" jsonb;