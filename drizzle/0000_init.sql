CREATE TYPE "public"."role" AS ENUM('admin', 'biologist', 'analyst', 'collaborator');--> statement-breakpoint
CREATE TYPE "public"."token_purpose" AS ENUM('invite', 'reset');--> statement-breakpoint
CREATE TYPE "public"."control_kind" AS ENUM('none', 'isotype', 'secondary_only', 'buffer_only');--> statement-breakpoint
CREATE TYPE "public"."member_role" AS ENUM('biologist', 'analyst', 'collaborator');--> statement-breakpoint
CREATE TYPE "public"."field_status" AS ENUM('uploading', 'ingesting', 'ready', 'registered', 'linked', 'approved', 'failed');--> statement-breakpoint
CREATE TYPE "public"."file_kind" AS ENUM('topography', 'fluorescence');--> statement-breakpoint
CREATE TYPE "public"."imaging_medium" AS ENUM('air', 'liquid');--> statement-breakpoint
CREATE TYPE "public"."review_decision" AS ENUM('approved', 'sent_back');--> statement-breakpoint
CREATE TYPE "public"."transform_model" AS ENUM('affine', 'similarity');--> statement-breakpoint
CREATE TABLE "one_time_tokens" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"user_id" uuid NOT NULL,
	"purpose" "token_purpose" NOT NULL,
	"token_hash" text NOT NULL,
	"expires_at" timestamp with time zone NOT NULL,
	"used_at" timestamp with time zone,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "one_time_tokens_tokenHash_unique" UNIQUE("token_hash")
);
--> statement-breakpoint
CREATE TABLE "sign_in_attempts" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"email" text NOT NULL,
	"ip" text NOT NULL,
	"succeeded" boolean NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "users" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"email" text NOT NULL,
	"name" text NOT NULL,
	"role" "role" NOT NULL,
	"password_hash" text,
	"active" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "users_email_unique" UNIQUE("email")
);
--> statement-breakpoint
CREATE TABLE "marker_channels" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"study_id" uuid NOT NULL,
	"channel_index" integer NOT NULL,
	"marker" text NOT NULL,
	"antibody_clone" text DEFAULT '' NOT NULL,
	"fluorophore" text DEFAULT '' NOT NULL,
	"excitation_nm" real,
	"emission_nm" real,
	CONSTRAINT "marker_channels_studyId_channelIndex_unique" UNIQUE("study_id","channel_index"),
	CONSTRAINT "marker_channels_studyId_marker_unique" UNIQUE("study_id","marker")
);
--> statement-breakpoint
CREATE TABLE "samples" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"study_id" uuid NOT NULL,
	"code" text NOT NULL,
	"group_label" text DEFAULT '' NOT NULL,
	"source" text DEFAULT '' NOT NULL,
	"isolation_method" text DEFAULT '' NOT NULL,
	"collection_date" date,
	"dilution" text DEFAULT '' NOT NULL,
	"substrate" text DEFAULT '' NOT NULL,
	"notes" text DEFAULT '' NOT NULL,
	"control_kind" "control_kind" DEFAULT 'none' NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "samples_studyId_code_unique" UNIQUE("study_id","code")
);
--> statement-breakpoint
CREATE TABLE "studies" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"name" text NOT NULL,
	"description" text DEFAULT '' NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "study_members" (
	"study_id" uuid NOT NULL,
	"user_id" uuid NOT NULL,
	"role" "member_role" NOT NULL,
	"added_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "study_members_study_id_user_id_pk" PRIMARY KEY("study_id","user_id")
);
--> statement-breakpoint
CREATE TABLE "field_files" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"field_id" uuid NOT NULL,
	"kind" "file_kind" NOT NULL,
	"channel_index" integer,
	"object_key" text NOT NULL,
	"original_name" text NOT NULL,
	"size_bytes" bigint NOT NULL,
	"meta" jsonb DEFAULT '{}'::jsonb NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "field_files_objectKey_unique" UNIQUE("object_key")
);
--> statement-breakpoint
CREATE TABLE "fields" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"sample_id" uuid NOT NULL,
	"name" text NOT NULL,
	"status" "field_status" DEFAULT 'uploading' NOT NULL,
	"failure_reason" text,
	"afm_scan_size_nm" real,
	"afm_pixel_nm" real,
	"tip_radius_nm" real,
	"imaging_medium" "imaging_medium" DEFAULT 'air' NOT NULL,
	"scan_mode" text DEFAULT '' NOT NULL,
	"fl_pixel_nm" real,
	"objective_na" real,
	"exposure_ms" real,
	"channel_emission_nm" jsonb DEFAULT '[]'::jsonb NOT NULL,
	"afm_width_px" integer,
	"afm_height_px" integer,
	"fl_width_px" integer,
	"fl_height_px" integer,
	"version" integer DEFAULT 1 NOT NULL,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	"updated_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "tile_sets" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"field_id" uuid NOT NULL,
	"layer" text NOT NULL,
	"prefix" text NOT NULL,
	"width_px" integer NOT NULL,
	"height_px" integer NOT NULL,
	"tile_size" integer NOT NULL,
	"overlap" integer NOT NULL,
	"format" text NOT NULL,
	"display" jsonb DEFAULT '{}'::jsonb NOT NULL,
	CONSTRAINT "tile_sets_fieldId_layer_unique" UNIQUE("field_id","layer")
);
--> statement-breakpoint
CREATE TABLE "field_reviews" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"field_id" uuid NOT NULL,
	"decision" "review_decision" NOT NULL,
	"comment" text DEFAULT '' NOT NULL,
	"link_run_id" uuid,
	"reviewed_by" uuid,
	"reviewed_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "link_runs" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"field_id" uuid NOT NULL,
	"registration_id" uuid,
	"settings" jsonb NOT NULL,
	"summary" jsonb NOT NULL,
	"current" boolean DEFAULT true NOT NULL,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL
);
--> statement-breakpoint
CREATE TABLE "registrations" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"field_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"model" "transform_model" NOT NULL,
	"pairs" jsonb NOT NULL,
	"fl_from_afm" jsonb NOT NULL,
	"fre_nm" real,
	"tre_nm" real,
	"created_by" uuid,
	"created_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "registrations_fieldId_version_unique" UNIQUE("field_id","version")
);
--> statement-breakpoint
CREATE TABLE "releases" (
	"id" uuid PRIMARY KEY DEFAULT gen_random_uuid() NOT NULL,
	"sample_id" uuid NOT NULL,
	"version" integer NOT NULL,
	"link_run_ids" jsonb NOT NULL,
	"released_by" uuid,
	"released_at" timestamp with time zone DEFAULT now() NOT NULL,
	CONSTRAINT "releases_sampleId_version_unique" UNIQUE("sample_id","version")
);
--> statement-breakpoint
CREATE TABLE "vesicles" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"link_run_id" uuid NOT NULL,
	"field_id" uuid NOT NULL,
	"sample_id" uuid NOT NULL,
	"index" integer NOT NULL,
	"x_afm_px" real NOT NULL,
	"y_afm_px" real NOT NULL,
	"x_fl_px" real,
	"y_fl_px" real,
	"height_nm" real NOT NULL,
	"mean_height_nm" real NOT NULL,
	"area_nm2" real NOT NULL,
	"diameter_nm" real NOT NULL,
	"volume_nm3" real NOT NULL,
	"circularity" real NOT NULL,
	"cap_radius_nm" real,
	"contact_angle_deg" real,
	"sphere_diameter_nm" real,
	"out_of_frame" boolean DEFAULT false NOT NULL,
	"marker_bits" integer DEFAULT 0 NOT NULL,
	"phenotype" text DEFAULT '' NOT NULL,
	"markers" jsonb NOT NULL
);
--> statement-breakpoint
CREATE TABLE "audit_log" (
	"id" bigserial PRIMARY KEY NOT NULL,
	"at" timestamp with time zone DEFAULT now() NOT NULL,
	"actor_id" uuid,
	"actor_email" text,
	"action" text NOT NULL,
	"target_type" text,
	"target_id" text,
	"ip" text,
	"details" jsonb DEFAULT '{}'::jsonb NOT NULL
);
--> statement-breakpoint
ALTER TABLE "one_time_tokens" ADD CONSTRAINT "one_time_tokens_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "marker_channels" ADD CONSTRAINT "marker_channels_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "samples" ADD CONSTRAINT "samples_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "studies" ADD CONSTRAINT "studies_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_members" ADD CONSTRAINT "study_members_study_id_studies_id_fk" FOREIGN KEY ("study_id") REFERENCES "public"."studies"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "study_members" ADD CONSTRAINT "study_members_user_id_users_id_fk" FOREIGN KEY ("user_id") REFERENCES "public"."users"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "field_files" ADD CONSTRAINT "field_files_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fields" ADD CONSTRAINT "fields_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "fields" ADD CONSTRAINT "fields_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "tile_sets" ADD CONSTRAINT "tile_sets_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "field_reviews" ADD CONSTRAINT "field_reviews_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "field_reviews" ADD CONSTRAINT "field_reviews_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "field_reviews" ADD CONSTRAINT "field_reviews_reviewed_by_users_id_fk" FOREIGN KEY ("reviewed_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "link_runs" ADD CONSTRAINT "link_runs_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "link_runs" ADD CONSTRAINT "link_runs_registration_id_registrations_id_fk" FOREIGN KEY ("registration_id") REFERENCES "public"."registrations"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "registrations" ADD CONSTRAINT "registrations_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "registrations" ADD CONSTRAINT "registrations_created_by_users_id_fk" FOREIGN KEY ("created_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "releases" ADD CONSTRAINT "releases_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "releases" ADD CONSTRAINT "releases_released_by_users_id_fk" FOREIGN KEY ("released_by") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "vesicles" ADD CONSTRAINT "vesicles_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "vesicles" ADD CONSTRAINT "vesicles_field_id_fields_id_fk" FOREIGN KEY ("field_id") REFERENCES "public"."fields"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "vesicles" ADD CONSTRAINT "vesicles_sample_id_samples_id_fk" FOREIGN KEY ("sample_id") REFERENCES "public"."samples"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "audit_log" ADD CONSTRAINT "audit_log_actor_id_users_id_fk" FOREIGN KEY ("actor_id") REFERENCES "public"."users"("id") ON DELETE set null ON UPDATE no action;--> statement-breakpoint
CREATE INDEX "one_time_tokens_user_id_index" ON "one_time_tokens" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "sign_in_attempts_email_at_index" ON "sign_in_attempts" USING btree ("email","at");--> statement-breakpoint
CREATE INDEX "sign_in_attempts_ip_at_index" ON "sign_in_attempts" USING btree ("ip","at");--> statement-breakpoint
CREATE INDEX "marker_channels_study_id_index" ON "marker_channels" USING btree ("study_id");--> statement-breakpoint
CREATE INDEX "samples_study_id_index" ON "samples" USING btree ("study_id");--> statement-breakpoint
CREATE INDEX "study_members_user_id_index" ON "study_members" USING btree ("user_id");--> statement-breakpoint
CREATE INDEX "field_files_field_id_index" ON "field_files" USING btree ("field_id");--> statement-breakpoint
CREATE INDEX "fields_sample_id_index" ON "fields" USING btree ("sample_id");--> statement-breakpoint
CREATE INDEX "fields_created_by_index" ON "fields" USING btree ("created_by");--> statement-breakpoint
CREATE INDEX "tile_sets_field_id_index" ON "tile_sets" USING btree ("field_id");--> statement-breakpoint
CREATE INDEX "field_reviews_field_id_index" ON "field_reviews" USING btree ("field_id");--> statement-breakpoint
CREATE INDEX "field_reviews_link_run_id_index" ON "field_reviews" USING btree ("link_run_id");--> statement-breakpoint
CREATE INDEX "field_reviews_reviewed_by_index" ON "field_reviews" USING btree ("reviewed_by");--> statement-breakpoint
CREATE INDEX "link_runs_field_id_index" ON "link_runs" USING btree ("field_id");--> statement-breakpoint
CREATE INDEX "link_runs_registration_id_index" ON "link_runs" USING btree ("registration_id");--> statement-breakpoint
CREATE INDEX "registrations_field_id_index" ON "registrations" USING btree ("field_id");--> statement-breakpoint
CREATE INDEX "registrations_created_by_index" ON "registrations" USING btree ("created_by");--> statement-breakpoint
CREATE INDEX "releases_sample_id_index" ON "releases" USING btree ("sample_id");--> statement-breakpoint
CREATE INDEX "releases_released_by_index" ON "releases" USING btree ("released_by");--> statement-breakpoint
CREATE INDEX "vesicles_link_run_id_index" ON "vesicles" USING btree ("link_run_id");--> statement-breakpoint
CREATE INDEX "vesicles_field_id_index_index" ON "vesicles" USING btree ("field_id","index");--> statement-breakpoint
CREATE INDEX "vesicles_sample_id_marker_bits_index" ON "vesicles" USING btree ("sample_id","marker_bits");--> statement-breakpoint
CREATE INDEX "vesicles_sample_id_height_nm_index" ON "vesicles" USING btree ("sample_id","height_nm");--> statement-breakpoint
CREATE INDEX "vesicles_sample_id_diameter_nm_index" ON "vesicles" USING btree ("sample_id","diameter_nm");--> statement-breakpoint
CREATE INDEX "audit_log_at_index" ON "audit_log" USING btree ("at");--> statement-breakpoint
CREATE INDEX "audit_log_action_at_index" ON "audit_log" USING btree ("action","at");--> statement-breakpoint
CREATE INDEX "audit_log_actor_id_index" ON "audit_log" USING btree ("actor_id");