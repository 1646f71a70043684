/** What a study recorded, read for the EV reporting checklist (src/lib/reporting/misevChecklist.ts). */
import type { Db } from '../client';
import { rows } from './rows';

/**
 * What the study recorded, for the reporting checklist (see src/lib/reporting/misevChecklist.ts).
 * `source` 'released' (the default, and the only one for collaborators) reads only what the latest release of
 * each sample covers: released samples, the fields and link runs frozen in those releases and their
 * registrations, so nothing about unreleased samples (how many, their methods, pixel sizes, controls) shows.
 * 'current' reads every sample and field of the study, for the lab.
 */
export async function getChecklistInput(db: Db, studyId: string, source: 'released' | 'current' = 'released') {
  const released = source === 'released';
  // the link runs frozen in the latest release of each sample of the study
  const releasedRuns = `select lr.id, lr.field_id, lr.registration_id, lr.settings, lr.created_at from link_runs lr
     where lr.id::text in (select jsonb_array_elements_text(rel.link_run_ids)
                             from (select distinct on (r.sample_id) r.link_run_ids from releases r join samples s on s.id = r.sample_id
                                    where s.study_id = $1 order by r.sample_id, r.version desc) rel)`;
  const sampleFilter = released ? 'and exists (select 1 from releases r where r.sample_id = samples.id)' : '';
  const fieldFilter = released ? `and f.id in (select field_id from (${releasedRuns}) rr)` : '';
  const [panel, samples, [fieldAgg], runs, [reg], [counts]] = await Promise.all([
    rows<{ channelIndex: number; marker: string; antibodyClone: string; fluorophore: string; excitationNm: number | null; emissionNm: number | null }>(
      db,
      `select channel_index as "channelIndex", marker, antibody_clone as "antibodyClone", fluorophore,
              excitation_nm as "excitationNm", emission_nm as "emissionNm"
         from marker_channels where study_id = $1 order by channel_index`,
      [studyId],
    ),
    rows<{ code: string; controlKind: string; source: string; isolationMethod: string; substrate: string; dilution: string }>(
      db,
      `select code, control_kind as "controlKind", source, isolation_method as "isolationMethod", substrate, dilution
         from samples where study_id = $1 ${sampleFilter} order by code`,
      [studyId],
    ),
    rows<Record<string, unknown>>(
      db,
      `select count(*)::int as fields,
              -- a study with samples but no fields aggregates no rows: empty lists, not null (the checklist reads .length)
              coalesce(array_remove(array_agg(distinct f.imaging_medium::text), null), '{}') as media,
              coalesce(array_remove(array_agg(distinct nullif(f.scan_mode, '')), null), '{}') as "scanModes",
              count(f.afm_pixel_nm)::int as "withAfmPixel", count(f.fl_pixel_nm)::int as "withFlPixel",
              count(f.tip_radius_nm)::int as "withTipRadius", count(f.objective_na)::int as "withNa",
              count(f.exposure_ms)::int as "withExposure", count(*) filter (where jsonb_array_length(f.channel_emission_nm) > 0)::int as "withEmission",
              min(f.afm_pixel_nm) as "afmPixelMinNm", max(f.afm_pixel_nm) as "afmPixelMaxNm",
              min(f.fl_pixel_nm) as "flPixelMinNm", max(f.fl_pixel_nm) as "flPixelMaxNm"
         from fields f join samples s on s.id = f.sample_id where s.study_id = $1 ${fieldFilter}`,
      [studyId],
    ),
    rows<{ settings: Record<string, unknown> }>(
      db,
      released
        ? `select rr.settings from (${releasedRuns}) rr order by rr.created_at desc limit 200`
        : `select lr.settings from link_runs lr join fields f on f.id = lr.field_id join samples s on s.id = f.sample_id
            where s.study_id = $1 and lr.current order by lr.created_at desc limit 200`,
      [studyId],
    ),
    rows<{ registered: number; minFiducials: number | null; maxFreNm: number | null; withTre: number }>(
      db,
      `select count(*)::int as registered, min(nb)::int as "minFiducials", max(fre_nm) as "maxFreNm", count(tre_nm)::int as "withTre"
         from (select distinct on (r.field_id) r.field_id, jsonb_array_length(r.pairs) as nb, r.fre_nm, r.tre_nm
                 from registrations r join fields f on f.id = r.field_id join samples s on s.id = f.sample_id
                where s.study_id = $1 ${released ? `and r.id in (select registration_id from (${releasedRuns}) rr)` : ''}
                order by r.field_id, r.version desc) latest`,
      [studyId],
    ),
    rows<{ released: number }>(
      db,
      `select count(distinct r.sample_id)::int as released from releases r join samples s on s.id = r.sample_id where s.study_id = $1`,
      [studyId],
    ),
  ]);
  return {
    panel,
    samples,
    fields: fieldAgg as {
      fields: number; media: string[]; scanModes: string[]; withAfmPixel: number; withFlPixel: number; withTipRadius: number;
      withNa: number; withExposure: number; withEmission: number; afmPixelMinNm: number | null; afmPixelMaxNm: number | null;
      flPixelMinNm: number | null; flPixelMaxNm: number | null;
    },
    linkSettings: runs.map((r) => r.settings),
    registrations: reg,
    releasedSamples: counts.released,
  };
}
