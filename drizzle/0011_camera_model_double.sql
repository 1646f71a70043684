ALTER TABLE "studies" ALTER COLUMN "camera_offset_counts" SET DATA TYPE double precision;--> statement-breakpoint
ALTER TABLE "studies" ALTER COLUMN "camera_gain_counts_per_photon" SET DATA TYPE double precision;--> statement-breakpoint
ALTER TABLE "studies" ALTER COLUMN "camera_read_noise_counts" SET DATA TYPE double precision;