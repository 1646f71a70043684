CREATE TABLE "link_run_marker_counts" (
	"link_run_id" uuid NOT NULL,
	"channel_index" integer NOT NULL,
	"n_measured" integer NOT NULL,
	"n_positive" integer NOT NULL,
	CONSTRAINT "link_run_marker_counts_link_run_id_channel_index_pk" PRIMARY KEY("link_run_id","channel_index")
);
--> statement-breakpoint
ALTER TABLE "vesicles" ADD COLUMN "measured_bits" integer DEFAULT -1 NOT NULL;--> statement-breakpoint
ALTER TABLE "link_run_marker_counts" ADD CONSTRAINT "link_run_marker_counts_link_run_id_link_runs_id_fk" FOREIGN KEY ("link_run_id") REFERENCES "public"."link_runs"("id") ON DELETE cascade ON UPDATE no action;--> statement-breakpoint
-- backfill: older runs stored no per-channel frame flags; a channel's amplitude is null where the vesicle lay outside that frame
update vesicles v set measured_bits = coalesce((select sum(1 << (o.i - 1)::int)::int from jsonb_array_elements(v.markers) with ordinality as o(e, i) where o.e->>'amplitude' is not null), 0) where v.out_of_frame;--> statement-breakpoint
-- phenotypes now count only vesicles measured in every channel (same statement as summaryStatements in src/lib/db/queries/linkRunSummaries.ts)
delete from link_run_phenotypes;--> statement-breakpoint
insert into link_run_phenotypes (link_run_id, marker_bits, n)
select link_run_id, marker_bits, count(*) from vesicles where (true) and (measured_bits & ((1 << jsonb_array_length(markers)) - 1)) = ((1 << jsonb_array_length(markers)) - 1) group by 1, 2;--> statement-breakpoint
insert into link_run_marker_counts (link_run_id, channel_index, n_measured, n_positive)
select link_run_id, c,
       count(*) filter (where measured_bits & (1 << c) <> 0)::int,
       count(*) filter (where measured_bits & marker_bits & (1 << c) <> 0)::int
  from vesicles cross join lateral generate_series(0, jsonb_array_length(markers) - 1) as c
 where true group by 1, 2;
