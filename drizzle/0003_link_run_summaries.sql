CREATE TYPE "public"."size_measure" AS ENUM('diameter_nm', 'height_nm');--> statement-breakpoint
CREATE TABLE "link_run_histograms" (
	"link_run_id" uuid NOT NULL,
	"measure" "size_measure" NOT NULL,
	"marker_bits" integer NOT NULL,
	"bucket" integer NOT NULL,
	"n" integer NOT NULL,
	CONSTRAINT "link_run_histograms_link_run_id_measure_marker_bits_bucket_pk" PRIMARY KEY("link_run_id","measure","marker_bits","bucket")
);
--> statement-breakpoint
CREATE TABLE "link_run_phenotypes" (
	"link_run_id" uuid NOT NULL,
	"marker_bits" integer NOT NULL,
	"n" integer NOT NULL,
	CONSTRAINT "link_run_phenotypes_link_run_id_marker_bits_pk" PRIMARY KEY("link_run_id","marker_bits")
);
--> statement-breakpoint
CREATE TABLE "link_run_size_bins" (
	"link_run_id" uuid NOT NULL,
	"measure" "size_measure" NOT NULL,
	"bin" integer NOT NULL,
	"n" integer NOT NULL,
	CONSTRAINT "link_run_size_bins_link_run_id_measure_bin_pk" PRIMARY KEY("link_run_id","measure","bin")
);
--> statement-breakpoint
ALTER TABLE "link_run_histograms" ADD CONSTRAINT "link_run_histograms_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "link_run_phenotypes" ADD CONSTRAINT "link_run_phenotypes_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
ALTER TABLE "link_run_size_bins" ADD CONSTRAINT "link_run_size_bins_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- backfill: the summaries of runs written before this migration (same statements as summaryStatements in src/lib/db/queries/linkRunSummaries.ts)
insert into link_run_phenotypes (link_run_id, marker_bits, n)
select link_run_id, marker_bits, count(*) from vesicles where true group by 1, 2;--> statement-breakpoint
insert into link_run_histograms (link_run_id, measure, marker_bits, bucket, n)
select link_run_id, 'diameter_nm'::size_measure, marker_bits, case when diameter_nm = 'NaN' then 51 else width_bucket(diameter_nm, 0, 500, 50) end, count(*) from vesicles where true group by 1, 3, 4
union all
select link_run_id, 'height_nm'::size_measure, marker_bits, case when height_nm = 'NaN' then 51 else width_bucket(height_nm, 0, 100, 50) end, count(*) from vesicles where true group by 1, 3, 4;--> statement-breakpoint
insert into link_run_size_bins (link_run_id, measure, bin, n)
select link_run_id, 'diameter_nm'::size_measure, least(greatest(round(diameter_nm::float8 * 2), -2000000000), 2000000000)::int, count(*) from vesicles where true group by 1, 3
union all
select link_run_id, 'height_nm'::size_measure, least(greatest(round(height_nm::float8 * 10), -2000000000), 2000000000)::int, count(*) from vesicles where true group by 1, 3;
