CREATE TABLE "beads" (
	"link_run_id" uuid NOT NULL,
	"index" integer NOT NULL,
	"x_afm_px" real NOT NULL,
	"y_afm_px" real NOT NULL,
	"x_fl_px" real,
	"y_fl_px" real,
	"height_nm" real NOT NULL,
	"footprint_diameter_nm" real NOT NULL,
	"reason" text NOT NULL,
	"under_fiducial_pick" boolean DEFAULT false NOT NULL,
	"markers" jsonb NOT NULL,
	CONSTRAINT "beads_link_run_id_index_pk" PRIMARY KEY("link_run_id","index")
);
--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "camera_offset_counts" real;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "camera_gain_counts_per_photon" real;--> statement-breakpoint
ALTER TABLE "studies" ADD COLUMN "camera_read_noise_counts" real;--> statement-breakpoint
ALTER TABLE "link_runs" ADD COLUMN "channel_registration" jsonb;--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "cap_base_diameter_nm" real;--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "cap_height_nm" real;--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "cap_volume_nm3" real;--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "cap_flag" text;--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "split" boolean DEFAULT false NOT NULL;--> statement-breakpoint
ALTER TABLE "beads" ADD CONSTRAINT "beads_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- older runs stored the cap base radius only
update vesicles set cap_base_diameter_nm = 2 * cap_radius_nm where cap_radius_nm is not null;
